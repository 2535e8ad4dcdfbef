import { useState } from 'react';
import { useForm, type FieldValues, type Path } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import {
  AUTH_MESSAGES, forgotPasswordInput, resetPasswordInput, signInInput, signUpInput,
  PASSWORD_MIN_LENGTH,
} from '~/lib/account-schemas';

type Mode = 'sign-in' | 'sign-up' | 'forgot' | 'reset';
type Props = { mode: Mode; next?: string; token?: string };

const SCHEMAS = { 'sign-in': signInInput, 'sign-up': signUpInput, forgot: forgotPasswordInput, reset: resetPasswordInput } as const;

async function post(path: string, body: unknown): Promise<{ ok: boolean; status: number; data: any }> {
  const response = await fetch(`/api/auth${path}`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify(body),
  });
  const data = await response.json().catch(() => ({}));
  return { ok: response.ok, status: response.status, data };
}

function messageFor(status: number, data: any): string {
  if (status === 429) return AUTH_MESSAGES.TOO_MANY_REQUESTS!;
  return AUTH_MESSAGES[data?.code] ?? data?.message ?? 'Something went wrong. Try again.';
}

/** Sign-in, sign-up, forgotten password and new password: one form, four modes. */
export default function AuthForm({ mode, next = '/account', token }: Props) {
  const schema = SCHEMAS[mode] as z.ZodType<FieldValues, FieldValues>;
  const { register, handleSubmit, formState } = useForm<FieldValues>({ resolver: zodResolver(schema) });
  const [error, setError] = useState<string | null>(null);
  const [done, setDone] = useState<string | null>(null);
  const safeNext = next.startsWith('/') && !next.startsWith('//') ? next : '/account';

  async function submit(values: FieldValues) {
    setError(null);
    if (mode === 'sign-in') {
      const r = await post('/sign-in/email', { email: values.email, password: values.password });
      if (r.ok) window.location.assign(safeNext);
      else setError(messageFor(r.status, r.data));
    } else if (mode === 'sign-up') {
      const r = await post('/sign-up/email', { name: values.name, email: values.email, password: values.password, callbackURL: '/account?verified=1' });
      if (r.ok) setDone(`We have sent a link to ${values.email}. Open it to confirm your address, then you are signed in.`);
      else setError(messageFor(r.status, r.data));
    } else if (mode === 'forgot') {
      const r = await post('/request-password-reset', { email: values.email, redirectTo: '/reset-password' });
      // The same answer whether or not the address has an account.
      if (r.ok || r.status === 404) setDone(`If ${values.email} has an account, a link to choose a new password is on its way. It works for one hour.`);
      else setError(messageFor(r.status, r.data));
    } else {
      const r = await post('/reset-password', { newPassword: values.password, token });
      if (r.ok) setDone('Your password is changed. Sign in with the new one.');
      else setError(messageFor(r.status, r.data));
    }
  }

  if (done) {
    return (
      <div role="status" className="rounded-sm border border-rule bg-paper-raised p-5" data-testid="auth-done">
        <p>{done}</p>
        {mode === 'reset' && <a href="/sign-in" className="btn-primary mt-4 no-underline">Sign in</a>}
      </div>
    );
  }

  const field = (name: string, label: string, type: string, autoComplete: string, hint?: string) => {
    const err = formState.errors[name]?.message as string | undefined;
    return (
      <label className="block">
        <span className="mb-1 block text-sm font-medium">{label}</span>
        <input
          {...register(name as Path<FieldValues>)}
          type={type}
          autoComplete={autoComplete}
          aria-invalid={Boolean(err)}
          aria-describedby={err ? `${name}-error` : undefined}
          className="field"
        />
        {hint && !err && <span className="mt-1 block text-xs text-ink-soft">{hint}</span>}
        {err && <span id={`${name}-error`} className="mt-1 block text-sm text-ember">{err}</span>}
      </label>
    );
  };

  const labels = { 'sign-in': 'Sign in', 'sign-up': 'Create account', forgot: 'Send the link', reset: 'Set new password' };
  return (
    <form onSubmit={handleSubmit(submit)} noValidate className="space-y-4" data-testid={`auth-${mode}`}>
      {mode === 'sign-up' && field('name', 'Name', 'text', 'name')}
      {mode !== 'reset' && field('email', 'E-mail', 'email', 'email')}
      {mode === 'sign-in' && field('password', 'Password', 'password', 'current-password')}
      {(mode === 'sign-up' || mode === 'reset') && field('password', mode === 'reset' ? 'New password' : 'Password', 'password', 'new-password', `At least ${PASSWORD_MIN_LENGTH} characters; a few words make a good one.`)}
      {mode === 'reset' && field('confirm', 'New password again', 'password', 'new-password')}
      {error && <p role="alert" className="rounded-sm border border-ember px-3 py-2 text-sm" data-testid="auth-error">{error}</p>}
      <button type="submit" className="btn-primary w-full" disabled={formState.isSubmitting}>
        {formState.isSubmitting ? 'One moment…' : labels[mode]}
      </button>
    </form>
  );
}
