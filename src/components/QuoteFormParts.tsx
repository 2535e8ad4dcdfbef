/** Pieces shared by the quote enquiry and the Studio's answer: labelled fields, a count box, a term chooser. */
import { useEffect, useId, useState, type ReactNode } from 'react';
import type { FieldValues, Path, UseFormSetError } from 'react-hook-form';

export interface ApiError { code: string; message: string; fields?: Record<string, string> }

/** POSTs JSON; any failure (offline, 4xx, 5xx) comes back as an ApiError with words for people. */
export async function postJson<T>(url: string, body: unknown): Promise<{ ok: true; data: T } | { ok: false; error: ApiError }> {
  let response: Response;
  try {
    response = await fetch(url, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body) });
  } catch {
    return { ok: false, error: { code: 'offline', message: 'The shop could not be reached. Check the connection and try again.' } };
  }
  const json = await response.json().catch(() => null);
  if (response.ok) return { ok: true, data: json as T };
  return { ok: false, error: (json?.error as ApiError | undefined) ?? { code: 'server_error', message: `The shop answered ${response.status}.` } };
}

/** Puts the server's per-field messages beside the fields; returns the message for the whole form. */
export function showServerErrors<T extends FieldValues>(error: ApiError, setError: UseFormSetError<T>, fieldNames: readonly string[]): string {
  const fields = Object.entries(error.fields ?? {});
  for (const [name, message] of fields) if (fieldNames.includes(name)) setError(name as Path<T>, { type: 'server', message });
  return fields.length && fields.every(([name]) => fieldNames.includes(name)) ? 'Check the marked fields.' : error.message;
}

export type FieldIds = { id: string; 'aria-describedby'?: string; 'aria-invalid': boolean };

export function Field(props: { label: string; optional?: boolean; error?: string; hint?: ReactNode; className?: string; children: (ids: FieldIds) => ReactNode }) {
  const id = useId();
  const hintId = props.hint ? `${id}-hint` : undefined;
  const errorId = props.error ? `${id}-error` : undefined;
  const describedBy = [hintId, errorId].filter(Boolean).join(' ') || undefined;
  return (
    <div className={props.className}>
      <label htmlFor={id} className="mb-1 block text-sm font-medium">
        {props.label}
        {props.optional && <span className="font-normal text-ink-soft"> (optional)</span>}
      </label>
      {props.children({ id, 'aria-describedby': describedBy, 'aria-invalid': Boolean(props.error) })}
      {props.hint && <p id={hintId} className="mt-1 text-xs text-ink-soft">{props.hint}</p>}
      {props.error && <p id={errorId} className="mt-1 text-xs text-ember">{props.error}</p>}
    </div>
  );
}

/** A whole number, or null when left empty; anything else is NaN so the schema names the mistake. */
export function parseCount(text: string): number | null {
  const t = text.trim().replace(/[ ,_]/g, '');
  if (t === '') return null;
  return /^\d+$/.test(t) ? Number(t) : Number.NaN;
}

/** A text box for an optional whole number (print run, cap). */
export function CountInput(props: FieldIds & { value: number | null; onChange: (value: number | null) => void; onBlur: () => void; placeholder?: string }) {
  const { value, onChange, onBlur, placeholder, ...ids } = props;
  const [text, setText] = useState(() => (value == null || Number.isNaN(value) ? '' : String(value)));
  useEffect(() => {
    // Follow outside changes (a reset), not the echo of what was just typed.
    const typed = parseCount(text);
    if (typed !== value && !(Number.isNaN(typed as number) && Number.isNaN(value as number))) setText(value == null || Number.isNaN(value) ? '' : String(value));
  }, [value]);
  return (
    <input
      {...ids}
      type="text"
      inputMode="numeric"
      autoComplete="off"
      className="field tabular-nums"
      placeholder={placeholder}
      value={text}
      onChange={(e) => {
        setText(e.target.value);
        onChange(parseCount(e.target.value));
      }}
      onBlur={onBlur}
    />
  );
}

/** A term in months, or no end date. */
export function TermInput(props: FieldIds & { value: number | null; onChange: (value: number | null) => void; onBlur: () => void }) {
  const { value, onChange, onBlur, ...ids } = props;
  const [months, setMonths] = useState(() => (value == null ? '12' : String(value)));
  const perpetual = value === null;
  return (
    <div className="flex flex-wrap items-center gap-x-4 gap-y-2">
      <span className="flex items-center gap-2">
        <input
          {...ids}
          type="text"
          inputMode="numeric"
          autoComplete="off"
          className="field w-24 tabular-nums disabled:opacity-50"
          value={perpetual ? '' : months}
          disabled={perpetual}
          onChange={(e) => {
            setMonths(e.target.value);
            const n = parseCount(e.target.value);
            onChange(n ?? Number.NaN);
          }}
          onBlur={onBlur}
        />
        <span className="text-sm text-ink-soft">months</span>
      </span>
      <label className="flex items-center gap-2 text-sm">
        <input
          type="checkbox"
          className="accent-[rgb(var(--ember))]"
          checked={perpetual}
          onChange={(e) => onChange(e.target.checked ? null : parseCount(months) ?? Number.NaN)}
        />
        No end date
      </label>
    </div>
  );
}

export function Notice({ tone, children }: { tone: 'ok' | 'error'; children: ReactNode }) {
  return (
    <div role={tone === 'error' ? 'alert' : 'status'} className={`rounded-sm border ${tone === 'ok' ? 'border-rule' : 'border-ember'} bg-paper-raised p-3 text-sm`}>
      {children}
    </div>
  );
}
