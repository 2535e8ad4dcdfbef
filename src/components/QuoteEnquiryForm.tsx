import { useState } from 'react';
import { Controller, useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { enquiryInput, EXCLUSIVITIES, EXCLUSIVITY_LABEL, type EnquiryInput } from '~/lib/quote-schemas';
import { CountInput, Field, Notice, postJson, showServerErrors, TermInput } from './QuoteFormParts';

type Props = {
  workId: number;
  workTitle: string;
  /** False when the work has no property release: commercial use cannot be asked for. */
  commercialAllowed: boolean;
  /** The signed-in person's name, as a starting point for the licensee. */
  name: string;
};

type FormValues = { [K in keyof EnquiryInput]: EnquiryInput[K] };
const FIELD_NAMES = Object.keys(enquiryInput.shape);

/** Asks the studio for a licence the tiers do not cover; the answer comes by e-mail and in the account. */
export default function QuoteEnquiryForm({ workId, workTitle, commercialAllowed, name }: Props) {
  const { register, handleSubmit, control, formState, setError, watch } = useForm<FormValues, unknown, EnquiryInput>({
    resolver: zodResolver(enquiryInput) as never,
    defaultValues: {
      workId, use: 'editorial', media: '', printRun: null, territory: '', termMonths: 12, exclusivity: 'none',
      licenseeName: name, licenseeOrganisation: '', message: '',
    },
  });
  const [message, setMessage] = useState<string | null>(null);
  const [sent, setSent] = useState<{ url: string } | null>(null);
  const errors = formState.errors;
  const use = watch('use');

  async function submit(values: EnquiryInput) {
    setMessage(null);
    const result = await postJson<{ id: string; url: string }>('/api/account/quotes', values);
    if (!result.ok) {
      setMessage(showServerErrors(result.error, setError, FIELD_NAMES));
      return;
    }
    setSent({ url: result.data.url });
  }

  if (sent) {
    return (
      <Notice tone="ok">
        <p className="font-medium" data-testid="enquiry-sent">Your enquiry is with the studio.</p>
        <p className="mt-1 text-ink-soft">You will get an e-mail when they answer. You can follow it from your account: <a href={sent.url} className="text-ember underline">the enquiry</a>.</p>
      </Notice>
    );
  }

  return (
    <form onSubmit={handleSubmit(submit)} noValidate className="space-y-5" aria-label={`Ask for a quote for “${workTitle}”`} data-testid="enquiry-form">
      <fieldset>
        <legend className="mb-1 block text-sm font-medium">Use</legend>
        <div className="flex flex-wrap gap-x-6 gap-y-1 text-sm">
          <label className="flex items-center gap-2"><input type="radio" value="editorial" {...register('use')} className="accent-[rgb(var(--ember))]" /> Editorial</label>
          <label className={`flex items-center gap-2 ${commercialAllowed ? '' : 'text-ink-soft'}`}>
            <input type="radio" value="commercial" {...register('use')} disabled={!commercialAllowed} className="accent-[rgb(var(--ember))]" /> Commercial
          </label>
        </div>
        {!commercialAllowed && <p className="mt-1 text-xs text-ink-soft">Commercial use is not offered for this picture: it shows property without a release.</p>}
        {use === 'editorial' && commercialAllowed && <p className="mt-1 text-xs text-ink-soft">Editorial: news, features, books. Advertising, packaging or brand content is commercial.</p>}
        {errors.use && <p className="mt-1 text-xs text-ember">{errors.use.message}</p>}
      </fieldset>

      <Field label="Where the picture will appear" error={errors.media?.message} hint="For example: a book cover, packaging, a trade-fair stand, a television title sequence.">
        {(ids) => <input {...ids} {...register('media')} className="field" autoComplete="off" />}
      </Field>

      <div className="grid gap-5 sm:grid-cols-2">
        <Field label="Print run or audience" optional error={errors.printRun?.message} hint="Copies, viewers or impressions.">
          {(ids) => (
            <Controller control={control} name="printRun" render={({ field }) => <CountInput {...ids} value={field.value} onChange={field.onChange} onBlur={field.onBlur} placeholder="e.g. 20000" />} />
          )}
        </Field>
        <Field label="Territory" error={errors.territory?.message} hint="A country, a region, or worldwide.">
          {(ids) => <input {...ids} {...register('territory')} className="field" autoComplete="off" />}
        </Field>
      </div>

      <Field label="For how long" error={errors.termMonths?.message}>
        {(ids) => (
          <Controller control={control} name="termMonths" render={({ field }) => <TermInput {...ids} value={field.value} onChange={field.onChange} onBlur={field.onBlur} />} />
        )}
      </Field>

      <Field label="Exclusivity" error={errors.exclusivity?.message}>
        {(ids) => (
          <select {...ids} {...register('exclusivity')} className="field">
            {EXCLUSIVITIES.map((e) => <option key={e} value={e}>{EXCLUSIVITY_LABEL[e]}</option>)}
          </select>
        )}
      </Field>

      <div className="grid gap-5 sm:grid-cols-2">
        <Field label="Licensee’s name" error={errors.licenseeName?.message}>
          {(ids) => <input {...ids} {...register('licenseeName')} className="field" autoComplete="name" />}
        </Field>
        <Field label="Organisation" optional error={errors.licenseeOrganisation?.message}>
          {(ids) => <input {...ids} {...register('licenseeOrganisation')} className="field" autoComplete="organization" />}
        </Field>
      </div>

      <Field label="Tell the studio about the use" error={errors.message?.message}>
        {(ids) => <textarea {...ids} {...register('message')} className="field min-h-[6rem]" />}
      </Field>

      {message && <Notice tone="error">{message}</Notice>}
      <div className="flex flex-wrap items-center gap-4">
        <button type="submit" className="btn-primary" disabled={formState.isSubmitting} data-testid="send-enquiry">
          {formState.isSubmitting ? 'Sending…' : 'Send the enquiry'}
        </button>
        <p className="text-xs text-ink-soft">The studio answers by e-mail with terms and a price.</p>
      </div>
    </form>
  );
}
