import { useEffect, useId, useRef, useState, type KeyboardEvent, type MouseEvent, type ReactNode } from 'react';
import { QueryClient, QueryClientProvider, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { Controller, useForm, type FieldPath } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { formatMoney, minorUnitDigits } from '~/lib/money';
import { mediaUrl, variantAtLeast } from '~/lib/media';
import { printPrice } from '~/lib/pricing';
import { GRADE_LABEL, type Grade } from '~/lib/print-grade';
import {
  PROPERTY_RELEASE_LABEL, PROPERTY_RELEASE_STATUSES, MAX_KEYWORDS, licencePricesInput, maxArtistProofs, printOffersInput,
  splitKeywords, workDetailsInput,
  type FocalPointInput, type LicencePriceMode, type SizeOfferInput, type StudioSaveAnswer, type StudioSize,
  type StudioWorkEditor, type WorkDetailsFormValues, type WorkDetailsInput,
} from '~/lib/studio-schemas';

type Props = { initial: StudioWorkEditor };

/** An answer from the Studio API that was not a success. */
class ApiError extends Error {
  constructor(message: string, readonly status: number, readonly fields: Record<string, string> = {}) {
    super(message);
  }
}

async function send(method: 'PATCH' | 'PUT' | 'POST', url: string, body: unknown): Promise<StudioSaveAnswer> {
  const response = await fetch(url, { method, headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body) });
  const data = await response.json().catch(() => null);
  if (!response.ok) throw new ApiError(data?.error?.message ?? `The Studio could not save (${response.status}).`, response.status, data?.error?.fields);
  return data as StudioSaveAnswer;
}

type Outcome = { ok: true; message: string } | { ok: false; message: string; fields: Record<string, string> };

function outcomeOf(error: unknown): Outcome {
  if (error instanceof ApiError) return { ok: false, message: error.message, fields: error.fields };
  return { ok: false, message: 'The Studio could not be reached. Check the connection and try again.', fields: {} };
}

function Answer({ outcome, testId }: { outcome: Outcome | null; testId: string }) {
  if (!outcome) return null;
  return (
    <p role={outcome.ok ? 'status' : 'alert'} data-testid={testId} className={`text-sm ${outcome.ok ? 'text-ink-soft' : 'text-ember'}`}>
      {outcome.message}
    </p>
  );
}

function FieldError({ message, id }: { message?: string; id?: string }) {
  return message ? <p id={id} className="mt-1 text-xs text-ember">{message}</p> : null;
}

const gradeText = (g: { grade: Grade; ppi: number }) => `${GRADE_LABEL[g.grade]} · ${g.ppi} ppi`;
// Dates are shown in UTC so the server-rendered editor and the hydrated one agree.
const dateFormat = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });

/** Minor units as the text of a money field ("120.00"). */
function moneyText(minor: number | null | undefined, currency: string): string {
  if (minor == null) return '';
  const digits = minorUnitDigits(currency);
  return (minor / 10 ** digits).toFixed(digits);
}

/** A money field's text as minor units: null when empty, NaN when it is not an amount. */
function parseMoney(text: string, currency: string): number | null {
  const trimmed = text.trim().replace(/,/g, '');
  if (trimmed === '') return null;
  const digits = minorUnitDigits(currency);
  const pattern = digits > 0 ? new RegExp(`^\\d+(\\.\\d{1,${digits}})?$`) : /^\d+$/;
  if (!pattern.test(trimmed)) return Number.NaN;
  return Math.round(Number(trimmed) * 10 ** digits);
}

/** The work editor: details and focal point, licence prices, print offers and editions, publishing. */
export default function WorkEditor({ initial }: Props) {
  const [client] = useState(() => new QueryClient({ defaultOptions: { queries: { retry: 1, refetchOnWindowFocus: false } } }));
  return (
    <QueryClientProvider client={client}>
      <Editor initial={initial} />
    </QueryClientProvider>
  );
}

function Editor({ initial }: Props) {
  const key = ['studio-work', initial.work.id];
  const queryClient = useQueryClient();
  const { data: editor } = useQuery({
    queryKey: key,
    queryFn: async () => {
      const response = await fetch(`/api/studio/works/${initial.work.id}`);
      if (!response.ok) throw new Error(`The Studio could not load the work (${response.status}).`);
      return (await response.json()) as StudioWorkEditor;
    },
    initialData: initial,
    staleTime: Infinity,
  });
  const saved = (answer: StudioSaveAnswer) => queryClient.setQueryData(key, answer.editor);

  return (
    <div className="space-y-14" data-testid="work-editor">
      <PublishBar editor={editor} onSaved={saved} />
      <DetailsSection editor={editor} onSaved={saved} />
      <LicencesSection editor={editor} onSaved={saved} />
      <OffersSection editor={editor} onSaved={saved} />
    </div>
  );
}

type SectionProps = { editor: StudioWorkEditor; onSaved: (answer: StudioSaveAnswer) => void };

function Section({ id, title, intro, children }: { id: string; title: string; intro?: ReactNode; children: ReactNode }) {
  return (
    <section aria-labelledby={id} className="border-t border-rule pt-8">
      <h2 id={id} className="text-2xl">{title}</h2>
      {intro && <p className="mt-1 max-w-2xl text-sm text-ink-soft">{intro}</p>}
      <div className="mt-6">{children}</div>
    </section>
  );
}

// ---------------------------------------------------------------------------------------------
// Publishing

function PublishBar({ editor, onSaved }: SectionProps) {
  const { work, publish } = editor;
  const [outcome, setOutcome] = useState<Outcome | null>(null);
  const reasonsId = useId();
  const published = work.status === 'published';
  const mutation = useMutation({
    mutationFn: (next: boolean) => send('POST', `/api/studio/works/${work.id}/publish`, { publish: next }),
    onSuccess: (answer) => { onSaved(answer); setOutcome({ ok: true, message: answer.message }); },
    onError: (error) => setOutcome(outcomeOf(error)),
  });
  const blocked = !published && !publish.canPublish;
  return (
    <div className="flex flex-wrap items-start justify-between gap-4 rounded-sm border border-rule bg-paper-raised p-4">
      <div className="text-sm">
        <p>
          <span className={`mr-2 rounded-full border px-2 py-0.5 text-xs ${published ? 'border-ink' : 'border-rule text-ink-soft'}`} data-testid="work-status">
            {published ? 'Published' : 'Draft'}
          </span>
          {published && work.publishedAt && <span className="text-ink-soft">in the Gallery since {dateFormat.format(new Date(work.publishedAt))}</span>}
          {!published && <span className="text-ink-soft">{work.publishedAt ? 'Taken out of the Gallery.' : 'Not in the Gallery yet.'}</span>}
        </p>
        <p className="mt-1 text-ink-soft">{work.width} × {work.height} px · {work.sales} sold</p>
        {blocked && (
          <ul id={reasonsId} className="mt-2 list-disc pl-5 text-ember">
            {publish.reasons.map((r) => <li key={r}>{r}</li>)}
          </ul>
        )}
        <Answer outcome={outcome} testId="publish-answer" />
      </div>
      <div className="flex items-center gap-3">
        {published && <a href={`/works/${work.slug}`} className="text-sm">See it in the Gallery</a>}
        <button
          type="button"
          className={published ? 'btn-quiet' : 'btn-primary'}
          disabled={blocked || mutation.isPending}
          aria-describedby={blocked ? reasonsId : undefined}
          onClick={() => { setOutcome(null); mutation.mutate(!published); }}
          data-testid="publish-button"
        >
          {published ? 'Return to draft' : 'Publish'}
        </button>
      </div>
    </div>
  );
}

// ---------------------------------------------------------------------------------------------
// Details and focal point

function DetailsSection({ editor, onSaved }: SectionProps) {
  const formId = useId();
  const [outcome, setOutcome] = useState<Outcome | null>(null);
  const form = useForm<WorkDetailsFormValues, unknown, WorkDetailsInput>({
    resolver: zodResolver(workDetailsInput),
    defaultValues: editor.details,
  });
  const { register, control, handleSubmit, formState, setError, reset, watch } = form;
  const { errors, isDirty, isSubmitting } = formState;
  const caption = watch('caption') ?? '';
  const altText = watch('altText') ?? '';

  async function save(values: WorkDetailsInput) {
    setOutcome(null);
    try {
      const answer = await send('PATCH', `/api/studio/works/${editor.work.id}`, values);
      onSaved(answer);
      reset(answer.editor.details);
      setOutcome({ ok: true, message: answer.message });
    } catch (error) {
      const result = outcomeOf(error);
      setOutcome(result);
      if (!result.ok) {
        for (const [path, message] of Object.entries(result.fields)) {
          setError(path as FieldPath<WorkDetailsFormValues>, { type: 'server', message });
        }
      }
    }
  }

  const keywordError = errors.keywords?.message ?? (Array.isArray(errors.keywords) ? errors.keywords.find(Boolean)?.message : undefined);
  const err = (name: string) => `${formId}-${name}-error`;

  return (
    <Section id={`${formId}-title`} title="Details" intro="What the Gallery shows beside the picture, and what search finds it by.">
      <div className="grid gap-10 lg:grid-cols-[minmax(0,5fr)_minmax(0,6fr)]">
        <Controller
          name="focal"
          control={control}
          render={({ field }) => <FocalPicker editor={editor} value={field.value} onChange={field.onChange} />}
        />
        <form onSubmit={handleSubmit(save)} noValidate className="space-y-5" data-testid="details-form">
          <label className="block">
            <span className="eyebrow mb-1 block">Title</span>
            <input className="field" {...register('title')} aria-invalid={Boolean(errors.title)} aria-describedby={err('title')} />
            <FieldError id={err('title')} message={errors.title?.message} />
          </label>
          <label className="block">
            <span className="eyebrow mb-1 block">Caption</span>
            <textarea className="field min-h-[6rem]" {...register('caption')} aria-invalid={Boolean(errors.caption)} aria-describedby={err('caption')} />
            <span className="mt-1 block text-right text-xs text-ink-soft">{caption.length} / 2000</span>
            <FieldError id={err('caption')} message={errors.caption?.message} />
          </label>
          <label className="block">
            <span className="eyebrow mb-1 block">Alt text</span>
            <textarea className="field min-h-[4.5rem]" {...register('altText')} aria-invalid={Boolean(errors.altText)} aria-describedby={`${err('altText')} ${formId}-alt-hint`} />
            <span id={`${formId}-alt-hint`} className="mt-1 flex justify-between gap-4 text-xs text-ink-soft">
              <span>Needed before publishing. Say what is in the frame, plainly, for someone who cannot see it.</span>
              <span className="tabular-nums">{altText.length} / 500</span>
            </span>
            <FieldError id={err('altText')} message={errors.altText?.message} />
          </label>
          <Controller
            name="keywords"
            control={control}
            render={({ field }) => (
              <KeywordsField value={field.value} onChange={field.onChange} onBlur={field.onBlur} error={keywordError} />
            )}
          />
          <div className="grid gap-5 sm:grid-cols-2">
            <label className="block">
              <span className="eyebrow mb-1 block">Series</span>
              <Controller
                name="seriesId"
                control={control}
                render={({ field }) => (
                  <select
                    className="field"
                    value={field.value == null ? '' : String(field.value)}
                    onChange={(e) => field.onChange(e.target.value === '' ? null : Number(e.target.value))}
                    onBlur={field.onBlur}
                  >
                    <option value="">No series</option>
                    {editor.series.map((s) => <option key={s.id} value={s.id}>{s.title}</option>)}
                  </select>
                )}
              />
              <FieldError message={errors.seriesId?.message} />
            </label>
            <label className="block">
              <span className="eyebrow mb-1 block">Property release</span>
              <select className="field" {...register('propertyRelease')}>
                {PROPERTY_RELEASE_STATUSES.map((code) => <option key={code} value={code}>{PROPERTY_RELEASE_LABEL[code]}</option>)}
              </select>
              <span className="mt-1 block text-xs text-ink-soft">With no release, commercial licence tiers are withdrawn for this work.</span>
              <FieldError message={errors.propertyRelease?.message} />
            </label>
          </div>
          <FieldError message={errors.focal?.x?.message ?? errors.focal?.y?.message ?? errors.focal?.message} />
          <div className="flex flex-wrap items-center gap-4">
            <button type="submit" className="btn-primary" disabled={isSubmitting} data-testid="save-details">Save details</button>
            {isDirty && !isSubmitting && <span className="text-xs text-ink-soft">Unsaved changes</span>}
            <Answer outcome={outcome} testId="details-answer" />
          </div>
        </form>
      </div>
    </Section>
  );
}

function KeywordsField({ value, onChange, onBlur, error }: { value: string[]; onChange: (v: string[]) => void; onBlur: () => void; error?: string }) {
  const id = useId();
  const [text, setText] = useState(value.join(', '));
  // A reset from outside (after saving) replaces the text; typing does not fight the cursor.
  useEffect(() => {
    if (JSON.stringify(splitKeywords(text)) !== JSON.stringify(value)) setText(value.join(', '));
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [value]);
  const words = splitKeywords(text);
  return (
    <div>
      <label htmlFor={id} className="eyebrow mb-1 block">Keywords</label>
      <input
        id={id}
        className="field"
        value={text}
        onChange={(e) => { setText(e.target.value); onChange(splitKeywords(e.target.value)); }}
        onBlur={onBlur}
        aria-describedby={`${id}-hint`}
        aria-invalid={Boolean(error)}
        placeholder="pear, slate, window light"
      />
      <span id={`${id}-hint`} className="mt-1 flex justify-between text-xs text-ink-soft">
        <span>Separate with commas. Stored in lower case.</span>
        <span className="tabular-nums">{words.length} / {MAX_KEYWORDS}</span>
      </span>
      <FieldError message={error} />
    </div>
  );
}

const FOCAL_STEP = 0.01;
const FOCAL_BIG_STEP = 0.05;
const clamp01 = (n: number) => Math.min(1, Math.max(0, Math.round(n * 1000) / 1000));

/** The preview with the focal point: click to place it, or focus the marker and use the arrow keys. */
function FocalPicker({ editor, value, onChange }: { editor: StudioWorkEditor; value: FocalPointInput; onChange: (v: FocalPointInput) => void }) {
  const picture = editor.work.picture;
  const variant = variantAtLeast(picture, 960);
  const frame = useRef<HTMLDivElement>(null);
  const hintId = useId();

  function place(event: MouseEvent<HTMLDivElement>) {
    const box = frame.current?.getBoundingClientRect();
    if (!box || box.width === 0 || box.height === 0) return;
    onChange({ x: clamp01((event.clientX - box.left) / box.width), y: clamp01((event.clientY - box.top) / box.height) });
  }

  function nudge(event: KeyboardEvent<HTMLButtonElement>) {
    const step = event.shiftKey ? FOCAL_BIG_STEP : FOCAL_STEP;
    const moves: Record<string, [number, number]> = { ArrowLeft: [-step, 0], ArrowRight: [step, 0], ArrowUp: [0, -step], ArrowDown: [0, step] };
    const move = moves[event.key];
    if (!move) return;
    event.preventDefault();
    onChange({ x: clamp01(value.x + move[0]), y: clamp01(value.y + move[1]) });
  }

  const pct = (n: number) => `${Math.round(n * 100)} %`;
  return (
    <figure>
      <div className="bg-mat p-5">
        <div
          ref={frame}
          className="relative mx-auto cursor-crosshair"
          style={{ aspectRatio: `${picture.width} / ${picture.height}`, maxHeight: '28rem' }}
          onClick={place}
          data-testid="focal-frame"
        >
          <img
            src={mediaUrl(picture.key, variant.name, 'jpeg')}
            alt={picture.alt}
            width={variant.width}
            height={variant.height}
            className="h-full w-full select-none object-contain"
            draggable={false}
            style={{ backgroundColor: picture.dominantColor }}
          />
          <button
            type="button"
            className="absolute h-7 w-7 -translate-x-1/2 -translate-y-1/2 rounded-full border-2 border-paper-raised bg-ember/40 shadow-[0_0_0_1px_rgb(var(--ink)/0.6)]"
            style={{ left: `${value.x * 100}%`, top: `${value.y * 100}%` }}
            onClick={(e) => e.stopPropagation()}
            onKeyDown={nudge}
            aria-label={`Focal point: ${pct(value.x)} across, ${pct(value.y)} down`}
            aria-describedby={hintId}
            data-testid="focal-marker"
          />
        </div>
      </div>
      <figcaption id={hintId} className="mt-2 text-xs text-ink-soft">
        Focal point {pct(value.x)} across, {pct(value.y)} down. Click the picture to move it, or focus the marker and use the arrow keys
        (Shift for bigger steps). Crops that fill the paper keep this point in frame. Saved with the details.
      </figcaption>
    </figure>
  );
}

// ---------------------------------------------------------------------------------------------
// Licence prices

interface TierDraft { mode: LicencePriceMode; priceText: string }

function LicencesSection({ editor, onSaved }: SectionProps) {
  const id = useId();
  const currency = editor.shop.currency;
  const initialDrafts = (): Record<number, TierDraft> =>
    Object.fromEntries(editor.licences.map((l) => [l.tierId, { mode: l.mode, priceText: moneyText(l.price ?? l.defaultPrice, currency) }]));
  const [drafts, setDrafts] = useState(initialDrafts);
  const [outcome, setOutcome] = useState<Outcome | null>(null);
  const [fields, setFields] = useState<Record<string, string>>({});
  // When the server's rules change (this save, or a release change in the details), start again from them.
  const signature = JSON.stringify(editor.licences);
  const [seen, setSeen] = useState(signature);
  if (seen !== signature) {
    setSeen(signature);
    setDrafts(initialDrafts());
    setFields({});
  }
  const mutation = useMutation({
    mutationFn: (body: unknown) => send('PUT', `/api/studio/works/${editor.work.id}/licences`, body),
    onSuccess: (answer) => { setOutcome({ ok: true, message: answer.message }); onSaved(answer); },
    onError: (error) => { const o = outcomeOf(error); setOutcome(o); if (!o.ok) setFields(o.fields); },
  });

  const update = (tierId: number, change: Partial<TierDraft>) => setDrafts((d) => ({ ...d, [tierId]: { ...d[tierId]!, ...change } }));

  function save() {
    setOutcome(null);
    setFields({});
    const body = {
      tiers: editor.licences.map((l) => {
        const d = drafts[l.tierId]!;
        return { tierId: l.tierId, mode: d.mode, price: d.mode === 'override' ? parseMoney(d.priceText, currency) : null };
      }),
    };
    const bad: Record<string, string> = {};
    body.tiers.forEach((t, i) => { if (Number.isNaN(t.price)) bad[`tiers.${i}.price`] = 'Enter an amount such as 120.00.'; });
    const parsed = licencePricesInput.safeParse(body);
    if (!parsed.success) for (const issue of parsed.error.issues) bad[issue.path.join('.')] ??= issue.message;
    if (Object.keys(bad).length) {
      setFields(bad);
      setOutcome({ ok: false, message: 'Check the highlighted prices.', fields: bad });
      return;
    }
    mutation.mutate(parsed.data);
  }

  const locked = editor.licences.some((l) => l.locked);
  return (
    <Section id={`${id}-title`} title="Licence prices" intro="Each tier sells at its default price unless this work has its own price, or the tier is withdrawn for it.">
      {locked && (
        <p className="mb-4 border-l-2 border-ember pl-3 text-sm">
          This work has no property release, so its commercial tiers are withdrawn. Change the release status in the details to offer them.
        </p>
      )}
      <ul className="divide-y divide-rule border-y border-rule" role="list">
        {editor.licences.map((l, i) => {
          const d = drafts[l.tierId]!;
          const priceError = fields[`tiers.${i}.price`];
          const modeError = fields[`tiers.${i}.mode`];
          const modes: [LicencePriceMode, string][] = [['default', `Default · ${formatMoney(l.defaultPrice, currency)}`], ['override', 'Own price'], ['withdrawn', 'Withdrawn']];
          return (
            <li key={l.tierId} className="grid gap-3 py-4 md:grid-cols-[minmax(0,2fr)_minmax(0,3fr)]" data-testid={`tier-${l.slug}`}>
              <div>
                <p className="font-medium">{l.name} <span className="ml-1 text-xs uppercase tracking-wide text-ink-soft">{l.use}</span></p>
                <p className="text-sm text-ink-soft">{l.summary}</p>
              </div>
              <fieldset disabled={l.locked}>
                <legend className="sr-only">Price of {l.name}</legend>
                <div className="flex flex-wrap items-center gap-x-5 gap-y-2 text-sm">
                  {modes.map(([mode, label]) => (
                    <label key={mode} className={`flex items-center gap-2 ${l.locked ? 'opacity-60' : 'cursor-pointer'}`}>
                      <input
                        type="radio"
                        name={`${id}-${l.tierId}`}
                        checked={d.mode === mode}
                        onChange={() => update(l.tierId, { mode })}
                        className="accent-[rgb(var(--ember))]"
                      />
                      {label}
                    </label>
                  ))}
                  {d.mode === 'override' && (
                    <label className="flex items-center gap-2">
                      <span className="sr-only">Own price for {l.name} ({currency})</span>
                      <span className="text-ink-soft">{currency}</span>
                      <input
                        className="field w-28 py-1 tabular-nums"
                        inputMode="decimal"
                        value={d.priceText}
                        onChange={(e) => update(l.tierId, { priceText: e.target.value })}
                        aria-invalid={Boolean(priceError)}
                      />
                    </label>
                  )}
                </div>
                {l.locked && <p className="mt-1 text-xs text-ink-soft">Withdrawn while the work has no property release.</p>}
                <FieldError message={priceError ?? modeError} />
              </fieldset>
            </li>
          );
        })}
      </ul>
      <div className="mt-4 flex flex-wrap items-center gap-4">
        <button type="button" className="btn-primary" onClick={save} disabled={mutation.isPending} data-testid="save-licences">Save licence prices</button>
        <Answer outcome={outcome} testId="licences-answer" />
      </div>
    </Section>
  );
}

// ---------------------------------------------------------------------------------------------
// Print offers and editions

interface SizeDraft {
  offer: SizeOfferInput;
  /** Own price text per paper id; empty means the computed price. */
  priceText: Record<number, string>;
}

function draftOf(size: StudioSize, currency: string): SizeDraft {
  return {
    offer: structuredClone(size.offer),
    priceText: Object.fromEntries((size.offer.priceOverrides ?? []).map((o) => [o.paperId, moneyText(o.price, currency)])),
  };
}

function OffersSection({ editor, onSaved }: SectionProps) {
  const id = useId();
  const currency = editor.shop.currency;
  const [drafts, setDrafts] = useState<SizeDraft[]>(() => editor.sizes.map((s) => draftOf(s, currency)));
  const [outcome, setOutcome] = useState<Outcome | null>(null);
  /** Field messages keyed by size id, then by the path inside that size ("edition.total"). */
  const [fields, setFields] = useState<Record<number, Record<string, string>>>({});
  // After a save the server's offers are the truth: start again from them.
  const signature = JSON.stringify(editor.sizes);
  const [seen, setSeen] = useState(signature);
  if (seen !== signature) {
    setSeen(signature);
    setDrafts(editor.sizes.map((s) => draftOf(s, currency)));
    setFields({});
  }

  const mutation = useMutation({
    mutationFn: (body: { sent: number[]; payload: unknown }) => send('PUT', `/api/studio/works/${editor.work.id}/offers`, body.payload),
    onSuccess: (answer) => { setOutcome({ ok: true, message: answer.message }); onSaved(answer); },
    onError: (error, body) => {
      const o = outcomeOf(error);
      setOutcome(o);
      if (!o.ok) setFields(bySize(o.fields, body.sent));
    },
  });

  const update = (sizeId: number, change: (d: SizeDraft) => SizeDraft) =>
    setDrafts((all) => all.map((d) => (d.offer.sizeId === sizeId ? change(d) : d)));

  function save() {
    setOutcome(null);
    setFields({});
    // Send every size on offer now or before, so a size taken off sale is saved too.
    const sent = editor.sizes.filter((s, i) => drafts[i]!.offer.offered || s.offer.offered).map((s) => s.sizeId);
    const bad: Record<string, string> = {};
    const sizes = sent.map((sizeId, i) => {
      const d = drafts.find((x) => x.offer.sizeId === sizeId)!;
      const priceOverrides = d.offer.papers.flatMap((paperId) => {
        const price = parseMoney(d.priceText[paperId] ?? '', currency);
        if (price == null) return [];
        if (Number.isNaN(price)) bad[`sizes.${i}.priceOverrides`] = 'Enter an amount such as 85.00, or leave it empty.';
        return [{ paperId, price }];
      });
      return { ...d.offer, priceOverrides };
    });
    if (sent.length === 0) {
      setOutcome({ ok: false, message: 'Nothing to save: no size is or was on offer.', fields: {} });
      return;
    }
    const payload = { sizes };
    const parsed = printOffersInput.safeParse(payload);
    if (!parsed.success) for (const issue of parsed.error.issues) bad[issue.path.join('.')] ??= issue.message;
    if (Object.keys(bad).length) {
      setFields(bySize(bad, sent));
      setOutcome({ ok: false, message: 'Check the highlighted sizes.', fields: bad });
      return;
    }
    mutation.mutate({ sent, payload: parsed.data });
  }

  const premium = editor.shop.limitedEditionPremiumBp;
  return (
    <Section
      id={`${id}-title`}
      title="Print offers"
      intro="Each size shows how well this file holds it, cropped to fill the paper and whole with a border. Each size has one edition, shared by its papers."
    >
      <div className="grid gap-4 xl:grid-cols-2">
        {editor.sizes.map((size) => {
          const draft = drafts.find((d) => d.offer.sizeId === size.sizeId)!;
          return (
            <SizeCard
              key={size.sizeId}
              size={size}
              draft={draft}
              editor={editor}
              premiumBp={premium}
              errors={fields[size.sizeId] ?? {}}
              onChange={(change) => update(size.sizeId, change)}
            />
          );
        })}
      </div>
      <div className="mt-4 flex flex-wrap items-center gap-4">
        <button type="button" className="btn-primary" onClick={save} disabled={mutation.isPending} data-testid="save-offers">Save print offers</button>
        <Answer outcome={outcome} testId="offers-answer" />
      </div>
    </Section>
  );
}

/** Splits `sizes.<i>.<rest>` field paths by the size id that was sent at index i. */
function bySize(fields: Record<string, string>, sent: number[]): Record<number, Record<string, string>> {
  const out: Record<number, Record<string, string>> = {};
  for (const [path, message] of Object.entries(fields)) {
    const match = /^sizes\.(\d+)(?:\.(.+))?$/.exec(path);
    const sizeId = match ? sent[Number(match[1])] : undefined;
    if (sizeId == null) continue;
    const rest = match![2] ?? 'size';
    (out[sizeId] ??= {})[rest.startsWith('papers') ? 'papers' : rest.startsWith('priceOverrides') ? 'priceOverrides' : rest] ??= message;
  }
  return out;
}

function SizeCard({ size, draft, editor, premiumBp, errors, onChange }: {
  size: StudioSize;
  draft: SizeDraft;
  editor: StudioWorkEditor;
  premiumBp: number;
  errors: Record<string, string>;
  onChange: (change: (d: SizeDraft) => SizeDraft) => void;
}) {
  const id = useId();
  const currency = editor.shop.currency;
  const { offer } = draft;
  const edition = offer.edition;
  const fixed = size.edition?.fixed ?? false;
  const storedTotal = size.edition?.kind === 'limited' ? size.edition.total : null;
  const setOffer = (change: Partial<SizeOfferInput>) => onChange((d) => ({ ...d, offer: { ...d.offer, ...change } }));
  const setEdition = (change: Partial<SizeOfferInput['edition']>) => onChange((d) => ({ ...d, offer: { ...d.offer, edition: { ...d.offer.edition, ...change } } }));
  const number = (text: string) => (text.trim() === '' ? null : Number(text));
  const maxProofs = edition.kind === 'limited' && edition.total ? maxArtistProofs(edition.total) : 0;

  return (
    <fieldset
      className={`rounded-sm border p-4 ${offer.offered ? 'border-ink/40 bg-paper-raised' : 'border-rule'} ${size.offerable ? '' : 'opacity-70'}`}
      data-testid={`size-${size.slug}`}
    >
      <legend className="sr-only">{size.label}</legend>
      <div className="flex flex-wrap items-baseline justify-between gap-3">
        <label className={`flex items-center gap-2 font-display text-xl ${size.offerable || offer.offered ? 'cursor-pointer' : 'cursor-not-allowed'}`}>
          <input
            type="checkbox"
            checked={offer.offered}
            disabled={!size.offerable && !offer.offered}
            onChange={(e) => setOffer({ offered: e.target.checked, papers: e.target.checked && offer.papers.length === 0 && editor.papers[0] ? [editor.papers[0].paperId] : offer.papers })}
            className="accent-[rgb(var(--ember))]"
            aria-describedby={`${id}-grades`}
          />
          {size.label}
        </label>
        <dl id={`${id}-grades`} className="grid grid-cols-[auto_auto] gap-x-3 text-sm">
          <dt className="text-ink-soft">Fill</dt><dd data-testid="grade-fill">{gradeText(size.fill)}</dd>
          <dt className="text-ink-soft">Fit</dt><dd data-testid="grade-fit">{gradeText(size.fit)}</dd>
        </dl>
      </div>
      {!size.offerable && (
        <p className="mt-2 text-sm text-ink-soft">
          {GRADE_LABEL['too-small']}: the file holds only {size.fit.ppi} ppi here even with a border, so this size cannot be offered.
          {offer.offered && ' Untick it and save to take it off sale.'}
        </p>
      )}
      <FieldError message={errors.offered ?? errors.size ?? errors.sizeId} />

      {offer.offered && (
        <div className="mt-4 space-y-4 text-sm">
          {size.saleGrade === 'wall' && (
            <div>
              <label className="flex cursor-pointer items-start gap-2">
                <input type="checkbox" checked={offer.acceptWall} onChange={(e) => setOffer({ acceptWall: e.target.checked })} className="mt-0.5 accent-[rgb(var(--ember))]" />
                <span>
                  Accept {GRADE_LABEL.wall} grade at this size
                  <span className="block text-xs text-ink-soft">
                    {size.fill.grade === 'wall' ? `Cropped to fill, it holds ${size.fill.ppi} ppi` : `Whole with a border, it holds ${size.fit.ppi} ppi`}: sharp from the distance a print this size is seen, not up close.
                  </span>
                </span>
              </label>
              <FieldError message={errors.acceptWall} />
            </div>
          )}

          <div>
            <p className="eyebrow mb-2">Papers</p>
            <ul className="space-y-1.5" role="list">
              {editor.papers.map((p) => {
                const chosen = offer.papers.includes(p.paperId);
                const computed = printPrice({
                  sizeBasePrice: size.basePrice,
                  paperSurchargeBp: p.surchargeBp,
                  editionPremiumBp: edition.kind === 'limited' ? premiumBp : 0,
                });
                return (
                  <li key={p.paperId} className="flex flex-wrap items-center gap-3">
                    <label className="flex min-w-[12rem] flex-1 cursor-pointer items-center gap-2">
                      <input
                        type="checkbox"
                        checked={chosen}
                        onChange={(e) => setOffer({ papers: e.target.checked ? [...offer.papers, p.paperId] : offer.papers.filter((x) => x !== p.paperId) })}
                        className="accent-[rgb(var(--ember))]"
                      />
                      <span>{p.name} <span className="text-ink-soft">· {p.weightGsm} gsm</span></span>
                    </label>
                    <span className="tabular-nums text-ink-soft">{formatMoney(computed, currency)}</span>
                    {chosen && (
                      <label className="flex items-center gap-1.5">
                        <span className="text-xs text-ink-soft">own price</span>
                        <input
                          className="field w-24 py-1 tabular-nums"
                          inputMode="decimal"
                          value={draft.priceText[p.paperId] ?? ''}
                          onChange={(e) => onChange((d) => ({ ...d, priceText: { ...d.priceText, [p.paperId]: e.target.value } }))}
                          aria-label={`Own price for ${size.label} on ${p.name} (${currency}); empty uses ${formatMoney(computed, currency)}`}
                        />
                      </label>
                    )}
                  </li>
                );
              })}
            </ul>
            <p className="mt-1 text-xs text-ink-soft">Leave “own price” empty to use the price worked out from size, paper and edition.</p>
            <FieldError message={errors.papers ?? errors.priceOverrides} />
          </div>

          <div>
            <p className="eyebrow mb-2">Edition</p>
            <div className="flex flex-wrap items-center gap-x-5 gap-y-2">
              {(['open', 'limited'] as const).map((kind) => (
                <label key={kind} className={`flex items-center gap-2 ${fixed && size.edition?.kind !== kind ? 'cursor-not-allowed opacity-60' : 'cursor-pointer'}`}>
                  <input
                    type="radio"
                    name={`${id}-kind`}
                    checked={edition.kind === kind}
                    disabled={fixed && size.edition != null && size.edition.kind !== kind}
                    onChange={() => setEdition(kind === 'open' ? { kind, total: null, artistProofs: 0 } : { kind, total: storedTotal ?? 25 })}
                    className="accent-[rgb(var(--ember))]"
                  />
                  {kind === 'open' ? 'Open' : 'Limited'}
                </label>
              ))}
              {edition.kind === 'limited' && (
                <>
                  <label className="flex items-center gap-2">
                    <span>N</span>
                    <input
                      type="number"
                      min={1}
                      max={fixed && storedTotal != null ? storedTotal : undefined}
                      className="field w-20 py-1 tabular-nums"
                      value={edition.total ?? ''}
                      onChange={(e) => setEdition({ total: number(e.target.value) })}
                      aria-invalid={Boolean(errors['edition.total'])}
                    />
                  </label>
                  <label className="flex items-center gap-2">
                    <span>Artist’s proofs</span>
                    <input
                      type="number"
                      min={0}
                      max={maxProofs}
                      className="field w-16 py-1 tabular-nums"
                      value={edition.artistProofs}
                      onChange={(e) => setEdition({ artistProofs: number(e.target.value) ?? 0 })}
                      aria-invalid={Boolean(errors['edition.artistProofs'])}
                    />
                  </label>
                </>
              )}
            </div>
            {edition.kind === 'limited' && (
              <p className="mt-1 text-xs text-ink-soft">
                Numbered 1/N to N/N. Artist’s proofs sit outside N, at most {maxProofs} here (10 % of N, rounded down).
              </p>
            )}
            {fixed && size.edition && (
              <p className="mt-1 text-xs text-ink-soft" data-testid="edition-fixed">
                {size.edition.kind === 'limited'
                  ? `This edition of ${size.edition.total} has been on sale: N cannot be raised once published, only lowered, and it stays limited.`
                  : 'This open edition has been on sale, so it stays open.'}
              </p>
            )}
            <FieldError message={errors['edition.total'] ?? errors['edition.kind'] ?? errors['edition.artistProofs'] ?? errors.edition} />
          </div>
        </div>
      )}
    </fieldset>
  );
}
