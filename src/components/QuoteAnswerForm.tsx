import { useMemo, useState } from 'react';
import { Controller, useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { formatMoney } from '~/lib/money';
import {
  answerInput, declineInput, DEFAULT_VALIDITY_DAYS, EXCLUSIVITIES, EXCLUSIVITY_LABEL, majorToMinor, QUOTE_USES, USE_LABEL, VALIDITY_DAYS,
  type AnswerData, type AnswerInput, type DeclineInput, type EnquiryRequest,
} from '~/lib/quote-schemas';
import { CountInput, Field, Notice, postJson, showServerErrors, TermInput } from './QuoteFormParts';

type Props = {
  quoteId: string;
  /** The shop's currency: the price is typed in it and kept in its minor unit. */
  currency: string;
  /** What the buyer asked for, as the starting point of the answer. */
  request: EnquiryRequest;
  /** False when the work has no property release: only editorial terms can be offered. */
  commercialAllowed: boolean;
};

const ANSWER_FIELDS = ['use', 'media', 'cap', 'capUnit', 'territory', 'termMonths', 'exclusivity', 'terms', 'price', 'validityDays', 'reply'];

function currencySymbol(currency: string): string {
  return new Intl.NumberFormat('en-GB', { style: 'currency', currency }).formatToParts(0).find((p) => p.type === 'currency')?.value ?? currency;
}

/** The Studio's answer to an enquiry: terms and a price (or a refusal with a reason). */
export default function QuoteAnswerForm({ quoteId, currency, request, commercialAllowed }: Props) {
  const schema = useMemo(() => answerInput(currency), [currency]);
  const { register, handleSubmit, control, formState, setError, watch } = useForm<AnswerInput, unknown, AnswerData>({
    resolver: zodResolver(schema) as never,
    defaultValues: {
      use: request.use === 'commercial' && !commercialAllowed ? 'editorial' : request.use,
      media: request.media, cap: request.printRun, capUnit: request.printRun == null ? null : 'copies', territory: request.territory,
      termMonths: request.termMonths, exclusivity: request.exclusivity, terms: '', price: '', validityDays: DEFAULT_VALIDITY_DAYS, reply: '',
    },
  });
  const [message, setMessage] = useState<string | null>(null);
  const errors = formState.errors;
  const typed = watch('price') ?? '';
  const preview = typed.trim() ? majorToMinor(typed, currency) : null;

  async function submit(values: AnswerData) {
    setMessage(null);
    // The price goes as typed: the server converts it again in the shop's currency.
    const { priceMinor: _, ...body } = values;
    const result = await postJson(`/api/studio/quotes/${encodeURIComponent(quoteId)}/answer`, body);
    if (!result.ok) {
      setMessage(showServerErrors(result.error, setError, ANSWER_FIELDS));
      return;
    }
    window.location.reload();
  }

  return (
    <div className="space-y-10">
      <form onSubmit={handleSubmit(submit)} noValidate className="space-y-5" aria-label="Answer with terms and a price" data-testid="answer-form">
        <fieldset>
          <legend className="mb-1 block text-sm font-medium">Use</legend>
          <div className="flex flex-wrap gap-x-6 gap-y-1 text-sm">
            {QUOTE_USES.map((u) => (
              <label key={u} className={`flex items-center gap-2 ${u === 'commercial' && !commercialAllowed ? 'text-ink-soft' : ''}`}>
                <input type="radio" value={u} {...register('use')} disabled={u === 'commercial' && !commercialAllowed} className="accent-[rgb(var(--ember))]" /> {USE_LABEL[u]}
              </label>
            ))}
          </div>
          {!commercialAllowed && <p className="mt-1 text-xs text-ink-soft">The work has no property release: only editorial terms can be offered.</p>}
          {errors.use && <p className="mt-1 text-xs text-ember">{errors.use.message}</p>}
        </fieldset>

        <Field label="Media" error={errors.media?.message}>
          {(ids) => <input {...ids} {...register('media')} className="field" autoComplete="off" />}
        </Field>

        <div className="grid gap-5 sm:grid-cols-[1fr_1fr]">
          <Field label="Cap" optional error={errors.cap?.message} hint="Leave empty for no cap.">
            {(ids) => <Controller control={control} name="cap" render={({ field }) => <CountInput {...ids} value={field.value} onChange={field.onChange} onBlur={field.onBlur} />} />}
          </Field>
          <Field label="Counted in" error={errors.capUnit?.message} hint="copies, page views, impressions…">
            {(ids) => <input {...ids} {...register('capUnit', { setValueAs: (v: string | null) => (v == null || v.trim() === '' ? null : v) })} className="field" autoComplete="off" />}
          </Field>
        </div>

        <div className="grid gap-5 sm:grid-cols-2">
          <Field label="Territory" error={errors.territory?.message}>
            {(ids) => <input {...ids} {...register('territory')} className="field" autoComplete="off" />}
          </Field>
          <Field label="Exclusivity" error={errors.exclusivity?.message}>
            {(ids) => (
              <select {...ids} {...register('exclusivity')} className="field">
                {EXCLUSIVITIES.map((e) => <option key={e} value={e}>{EXCLUSIVITY_LABEL[e]}</option>)}
              </select>
            )}
          </Field>
        </div>

        <Field label="Term, from the day of purchase" error={errors.termMonths?.message}>
          {(ids) => <Controller control={control} name="termMonths" render={({ field }) => <TermInput {...ids} value={field.value} onChange={field.onChange} onBlur={field.onBlur} />} />}
        </Field>

        <Field label="The terms in plain words" error={errors.terms?.message} hint="These words go on the licence certificate and into the file’s rights metadata.">
          {(ids) => <textarea {...ids} {...register('terms')} className="field min-h-[8rem]" />}
        </Field>

        <div className="grid gap-5 sm:grid-cols-2">
          <Field
            label={`Price in ${currency}, VAT included`}
            error={errors.price?.message}
            hint={preview?.ok ? <span data-testid="price-preview">The buyer pays {formatMoney(preview.value, currency)}.</span> : 'Type it as you would write it, e.g. 1250 or 1,250.00.'}
          >
            {(ids) => (
              <span className="flex items-center gap-2">
                <span className="text-sm text-ink-soft">{currencySymbol(currency)}</span>
                <input {...ids} {...register('price')} type="text" inputMode="decimal" autoComplete="off" className="field tabular-nums" />
              </span>
            )}
          </Field>
          <Field label="The offer stands for" error={errors.validityDays?.message} hint={`${VALIDITY_DAYS.min} to ${VALIDITY_DAYS.max} days from now.`}>
            {(ids) => (
              <span className="flex items-center gap-2">
                <input {...ids} {...register('validityDays', { valueAsNumber: true })} type="number" min={VALIDITY_DAYS.min} max={VALIDITY_DAYS.max} step={1} className="field w-24 tabular-nums" />
                <span className="text-sm text-ink-soft">days</span>
              </span>
            )}
          </Field>
        </div>

        <Field label="A note to the buyer" optional error={errors.reply?.message}>
          {(ids) => <textarea {...ids} {...register('reply')} className="field min-h-[5rem]" />}
        </Field>

        {message && <Notice tone="error">{message}</Notice>}
        <button type="submit" className="btn-primary" disabled={formState.isSubmitting} data-testid="send-answer">
          {formState.isSubmitting ? 'Sending…' : 'Send the quote'}
        </button>
      </form>

      <DeclineForm quoteId={quoteId} />
    </div>
  );
}

function DeclineForm({ quoteId }: { quoteId: string }) {
  const { register, handleSubmit, formState, setError } = useForm<DeclineInput>({ resolver: zodResolver(declineInput), defaultValues: { reason: '' } });
  const [message, setMessage] = useState<string | null>(null);

  async function submit(values: DeclineInput) {
    setMessage(null);
    const result = await postJson(`/api/studio/quotes/${encodeURIComponent(quoteId)}/decline`, values);
    if (!result.ok) {
      setMessage(showServerErrors(result.error, setError, ['reason']));
      return;
    }
    window.location.reload();
  }

  return (
    <form onSubmit={handleSubmit(submit)} noValidate className="space-y-3 border-t border-rule pt-6" aria-label="Decline the enquiry" data-testid="decline-form">
      <h3 className="text-lg">Or decline it</h3>
      <Field label="The reason, for the buyer" error={formState.errors.reason?.message}>
        {(ids) => <textarea {...ids} {...register('reason')} className="field min-h-[4rem]" />}
      </Field>
      {message && <Notice tone="error">{message}</Notice>}
      <button type="submit" className="btn-quiet" disabled={formState.isSubmitting} data-testid="decline">Decline the enquiry</button>
    </form>
  );
}
