import { useMemo, useState } from 'react';
import { useStore } from '@nanostores/react';
import { useForm, type FieldValues, type Path } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import type { z } from 'zod';
import { cart } from '~/stores/cart';
import { checkoutInput, countryCodes, countryName } from '~/lib/checkout';

type Props = { email: string; defaultCountry?: string };

/** The last step before paying: who the licence is for and what for, where prints go. Prices are the server's. */
export default function CheckoutForm({ email, defaultCountry = 'GB' }: Props) {
  const lines = useStore(cart);
  const needsLicensee = lines.some((l) => l.kind === 'licence');
  const needsAddress = lines.some((l) => l.kind === 'print');
  const countries = useMemo(() => countryCodes(), []);
  const [serverError, setServerError] = useState<string | null>(null);
  const { register, handleSubmit, formState } = useForm<FieldValues>({
    resolver: zodResolver(checkoutInput as unknown as z.ZodType<FieldValues, FieldValues>),
    values: { lines, ...(needsAddress ? { shipping: { country: defaultCountry } } : {}) },
  });

  async function submit(values: FieldValues) {
    setServerError(null);
    const response = await fetch('/api/account/checkout', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(values) });
    const body = await response.json().catch(() => null);
    if (response.ok && body?.url) {
      window.location.assign(body.url);
      return;
    }
    setServerError(body?.error?.message ?? `The shop answered ${response.status}.`);
  }

  if (lines.length === 0) return <p>Your cart is empty. <a href="/" className="text-ember underline">Back to the Gallery</a></p>;

  const error = (name: string) => {
    const parts = name.split('.');
    let node: any = formState.errors;
    for (const p of parts) node = node?.[p];
    return node?.message as string | undefined;
  };
  const field = (name: string, label: string, opts: { autoComplete?: string; textarea?: boolean; optional?: boolean } = {}) => {
    const err = error(name);
    const Tag = opts.textarea ? 'textarea' : 'input';
    return (
      <label className="block">
        <span className="mb-1 block text-sm font-medium">{label}{opts.optional && <span className="font-normal text-ink-soft"> (optional)</span>}</span>
        <Tag {...register(name as Path<FieldValues>)} autoComplete={opts.autoComplete} className={`field ${opts.textarea ? 'min-h-[5rem]' : ''}`} aria-invalid={Boolean(err)} />
        {err && <span className="mt-1 block text-sm text-ember">{err}</span>}
      </label>
    );
  };

  return (
    <form onSubmit={handleSubmit(submit)} noValidate className="space-y-10" data-testid="checkout-form">
      {needsLicensee && (
        <fieldset className="space-y-4">
          <legend className="mb-2 font-display text-2xl">The licence</legend>
          <p className="text-sm text-ink-soft">The licence names who may use the picture and for what. It is personal to the licensee.</p>
          {field('licensee.name', 'Licensee’s name', { autoComplete: 'name' })}
          {field('licensee.organisation', 'Organisation', { autoComplete: 'organization', optional: true })}
          {field('licensee.intendedUse', 'Intended use (publication, campaign, audience)', { textarea: true })}
          {error('licensee') && <p className="text-sm text-ember">{error('licensee')}</p>}
        </fieldset>
      )}
      {needsAddress && (
        <fieldset className="space-y-4">
          <legend className="mb-2 font-display text-2xl">Where the prints go</legend>
          {field('shipping.name', 'Name', { autoComplete: 'shipping name' })}
          {field('shipping.line1', 'Address', { autoComplete: 'shipping address-line1' })}
          {field('shipping.line2', 'Address, second line', { autoComplete: 'shipping address-line2', optional: true })}
          <div className="grid gap-4 sm:grid-cols-2">
            {field('shipping.city', 'Town or city', { autoComplete: 'shipping address-level2' })}
            {field('shipping.postalCode', 'Postcode', { autoComplete: 'shipping postal-code' })}
          </div>
          <label className="block">
            <span className="mb-1 block text-sm font-medium">Country</span>
            <select {...register('shipping.country')} className="field" autoComplete="shipping country">
              {countries.map((c) => <option key={c} value={c}>{countryName(c)}</option>)}
            </select>
            {error('shipping.country') && <span className="mt-1 block text-sm text-ember">{error('shipping.country')}</span>}
          </label>
        </fieldset>
      )}
      <div>
        <p className="mb-3 text-sm text-ink-soft">Signed in as {email}. The receipt goes there. Shipping is added for the country you chose; prices include VAT.</p>
        {serverError && <p role="alert" className="mb-3 rounded-sm border border-ember px-3 py-2 text-sm" data-testid="checkout-error">{serverError}</p>}
        <button type="submit" className="btn-primary" disabled={formState.isSubmitting} data-testid="go-to-payment">
          {formState.isSubmitting ? 'Opening the payment page…' : 'Continue to payment'}
        </button>
      </div>
    </form>
  );
}
