import { useEffect, useId, useState, type ReactNode } from 'react';
import { Controller, useForm, type FieldValues, type Path, type UseFormRegisterReturn, type UseFormSetError } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { QueryClient, QueryClientProvider, useQuery, useQueryClient } from '@tanstack/react-query';
import { formatMoney, minorUnitDigits } from '~/lib/money';
import { isoA, pixelsAt, sizeLabel } from '~/lib/paper-sizes';
import { LAB_FORMATS, LAB_FORMAT_LABEL, LAB_PPI_RANGE } from '~/lib/lab-pack';
import {
  FAMILY_UNIT, currencyChangeWarning, isKnownCurrency, licenceTierInput, paperInput, printSizeInput, shopSettingsInput,
  type DeleteOutcome, type LicenceTierData, type LicenceTierInput, type LicenceTierView, type PaperData, type PaperInput,
  type PaperView, type PrintSizeData, type PrintSizeInput, type PrintSizeView, type RebuildProgress, type SettingsSaved,
  type ShopSettingsData, type ShopSettingsInput, type ShopSettingsView, type StudioSettings,
} from '~/lib/settings-schemas';

type Props = {
  initial: StudioSettings;
  /** ISO 4217 codes the server accepts, for the currency field's suggestions. */
  currencies: string[];
};

// ------------------------------------------------------------------------------------------ fetching

interface ApiError { code: string; message: string; fields?: Record<string, string> }
type ApiResult<T> = { ok: true; data: T } | { ok: false; status: number; error: ApiError };

async function api<T>(url: string, method = 'GET', body?: unknown): Promise<ApiResult<T>> {
  let response: Response;
  try {
    response = await fetch(url, {
      method,
      headers: body === undefined ? undefined : { 'Content-Type': 'application/json' },
      body: body === undefined ? undefined : JSON.stringify(body),
    });
  } catch {
    return { ok: false, status: 0, error: { code: 'offline', message: 'The shop could not be reached. Check the connection and try again.' } };
  }
  const json = await response.json().catch(() => null);
  if (response.ok) return { ok: true, data: json as T };
  const error = (json?.error as ApiError | undefined) ?? { code: 'server_error', message: `The shop answered ${response.status}.` };
  return { ok: false, status: response.status, error };
}

async function load<T>(url: string): Promise<T> {
  const result = await api<T>(url);
  if (!result.ok) throw new Error(result.error.message);
  return result.data;
}

/** Puts the server's per-field messages beside the fields; returns the message for the whole form. */
function showServerErrors<T extends FieldValues>(error: ApiError, setError: UseFormSetError<T>, fieldNames: readonly string[]): string {
  const fields = Object.entries(error.fields ?? {});
  for (const [name, message] of fields) {
    if (fieldNames.includes(name)) setError(name as Path<T>, { type: 'server', message });
  }
  return fields.length && fields.every(([name]) => fieldNames.includes(name)) ? 'Check the marked fields.' : error.message;
}

// ------------------------------------------------------------------------------- decimal amounts

/** "125.5" with 2 digits → 12550; not a plain decimal, or too many digits after the point → NaN. No float arithmetic. */
function parseDecimal(text: string, digits: number): number {
  const match = /^\s*(\d{1,12})(?:[.,](\d*))?\s*$/.exec(text);
  if (!match) return Number.NaN;
  const fraction = match[2] ?? '';
  if (fraction.length > digits) return Number.NaN;
  return Number(match[1] + fraction.padEnd(digits, '0'));
}

/** 12550 with 2 digits → "125.50". */
function formatDecimal(value: number, digits: number): string {
  if (!Number.isSafeInteger(value)) return '';
  if (digits === 0) return String(value);
  const text = String(Math.abs(value)).padStart(digits + 1, '0');
  return `${value < 0 ? '-' : ''}${text.slice(0, -digits)}.${text.slice(-digits)}`;
}

/** A text box for an integer stored in hundredths or minor units, typed as a decimal. */
function DecimalInput(props: {
  id: string;
  value: number;
  digits: number;
  onChange: (value: number) => void;
  onBlur: () => void;
  invalid: boolean;
  describedBy?: string;
  prefix?: string;
  suffix?: string;
}) {
  const { id, value, digits, onChange, onBlur, invalid, describedBy, prefix, suffix } = props;
  const [text, setText] = useState(() => formatDecimal(value, digits));
  useEffect(() => {
    // Follow outside changes (a reset after saving), not the echo of what was just typed.
    if (parseDecimal(text, digits) !== value && Number.isFinite(value)) setText(formatDecimal(value, digits));
  }, [value, digits]);
  return (
    <span className="flex items-center gap-2">
      {prefix && <span className="text-sm text-ink-soft">{prefix}</span>}
      <input
        id={id}
        type="text"
        inputMode="decimal"
        autoComplete="off"
        className="field tabular-nums"
        value={text}
        aria-invalid={invalid}
        aria-describedby={describedBy}
        onChange={(event) => {
          setText(event.target.value);
          onChange(parseDecimal(event.target.value, digits));
        }}
        onBlur={onBlur}
      />
      {suffix && <span className="text-sm text-ink-soft">{suffix}</span>}
    </span>
  );
}

function currencySymbol(currency: string): string {
  return new Intl.NumberFormat('en-GB', { style: 'currency', currency }).formatToParts(0).find((p) => p.type === 'currency')?.value ?? currency;
}

function percent(bp: number): string {
  return `${formatDecimal(bp, 2).replace(/\.?0+$/, '')} %`;
}

// ---------------------------------------------------------------------------------------- layout

function Field(props: { label: string; error?: string; hint?: ReactNode; children: (ids: { id: string; describedBy?: string; invalid: boolean }) => ReactNode; className?: string }) {
  const id = useId();
  const hintId = props.hint ? `${id}-hint` : undefined;
  const errorId = props.error ? `${id}-error` : undefined;
  const describedBy = [hintId, errorId].filter(Boolean).join(' ') || undefined;
  return (
    <div className={props.className}>
      <label htmlFor={id} className="mb-1 block text-sm font-medium">{props.label}</label>
      {props.children({ id, describedBy, invalid: Boolean(props.error) })}
      {props.hint && <p id={hintId} className="mt-1 text-xs text-ink-soft">{props.hint}</p>}
      {props.error && <p id={errorId} className="mt-1 text-xs text-ember">{props.error}</p>}
    </div>
  );
}

function Section(props: { title: string; intro?: ReactNode; children: ReactNode; id: string }) {
  return (
    <section aria-labelledby={props.id} className="border-t border-rule pt-8">
      <h2 id={props.id} className="text-2xl">{props.title}</h2>
      {props.intro && <p className="mt-1 max-w-2xl text-sm text-ink-soft">{props.intro}</p>}
      <div className="mt-5">{props.children}</div>
    </section>
  );
}

function Notice({ tone, children }: { tone: 'ok' | 'warn' | 'error'; children: ReactNode }) {
  const border = tone === 'ok' ? 'border-rule' : 'border-ember';
  return (
    <div role={tone === 'error' ? 'alert' : 'status'} className={`rounded-sm border ${border} bg-paper-raised p-3 text-sm`}>
      {children}
    </div>
  );
}

// ------------------------------------------------------------------------------------------- root

/** The Studio's settings: the shop, print grades, watermark, licence tiers, papers and print sizes. */
export default function ShopSettingsForm({ initial, currencies }: Props) {
  const [client] = useState(() => new QueryClient({ defaultOptions: { queries: { retry: 1, refetchOnWindowFocus: false } } }));
  return (
    <QueryClientProvider client={client}>
      <SettingsPage initial={initial} currencies={currencies} />
    </QueryClientProvider>
  );
}

function SettingsPage({ initial, currencies }: Props) {
  const [saved, setSaved] = useState<ShopSettingsView>(initial.settings);
  return (
    <div className="space-y-12">
      <ShopForm saved={saved} onSaved={setSaved} currencies={currencies} initialRebuild={initial.rebuild} workCount={initial.workCount} />
      <TiersSection initial={initial.tiers} currency={saved.currency} />
      <PapersSection initial={initial.papers} />
      <SizesSection initial={initial.sizes} currency={saved.currency} targetPpi={saved.targetPpi} />
    </div>
  );
}

// -------------------------------------------------------------------------- shop, grades, watermark

const SHOP_FIELDS = Object.keys(shopSettingsInput.shape) as (keyof ShopSettingsInput)[];

function ShopForm(props: {
  saved: ShopSettingsView;
  onSaved: (settings: ShopSettingsView) => void;
  currencies: string[];
  initialRebuild: RebuildProgress;
  workCount: number;
}) {
  const { saved, onSaved, currencies, workCount } = props;
  const queryClient = useQueryClient();
  const form = useForm<ShopSettingsInput, unknown, ShopSettingsData>({ resolver: zodResolver(shopSettingsInput), defaultValues: saved });
  const { register, handleSubmit, formState, setError, reset, watch, control } = form;
  const errors = formState.errors;
  const [message, setMessage] = useState<{ tone: 'ok' | 'warn' | 'error'; text: string } | null>(null);
  const [understood, setUnderstood] = useState(false);
  const currency = (watch('currency') ?? '').trim();
  const watermark = (watch('watermarkText') ?? '').trim();
  const currencyChanging = currency !== saved.currency && isKnownCurrency(currency);
  const watermarkChanging = watermark !== '' && watermark !== saved.watermarkText;
  const listId = useId();

  async function submit(values: ShopSettingsData) {
    setMessage(null);
    const result = await api<SettingsSaved>('/api/studio/settings', 'PUT', values);
    if (!result.ok) {
      setMessage({ tone: 'error', text: showServerErrors(result.error, setError, SHOP_FIELDS) });
      return;
    }
    const answer = result.data;
    onSaved(answer.settings);
    reset(answer.settings);
    setUnderstood(false);
    if (answer.rebuild) queryClient.setQueryData(['rebuild'], answer.rebuild);
    const warnings = answer.warnings.map((w) => w.message).join(' ');
    setMessage(warnings ? { tone: 'warn', text: `Saved. ${warnings}` } : { tone: 'ok', text: 'Saved.' });
  }

  // The thresholds are checked against each other, so a change to one re-checks its neighbours.
  const number = (name: keyof ShopSettingsInput, deps?: (keyof ShopSettingsInput)[]) => register(name, { valueAsNumber: true, deps });

  return (
    <form onSubmit={handleSubmit(submit)} noValidate className="space-y-12" aria-label="Shop settings">
      <Section id="shop" title="Shop" intro="How the shop names itself, and the currency every price is kept in.">
        <div className="grid gap-4 sm:grid-cols-2">
          <Field label="Shop name" error={errors.shopName?.message}>
            {(f) => <input {...register('shopName')} {...ids(f)} className="field" autoComplete="off" />}
          </Field>
          <Field label="Photographer’s name" error={errors.photographerName?.message}>
            {(f) => <input {...register('photographerName')} {...ids(f)} className="field" autoComplete="off" />}
          </Field>
          <Field label="Tagline" error={errors.tagline?.message} hint="One line under the shop’s name; also the Gallery’s description for search engines." className="sm:col-span-2">
            {(f) => <input {...register('tagline')} {...ids(f)} className="field" autoComplete="off" />}
          </Field>
          <Field label="Currency" error={errors.currency?.message} hint="Three-letter ISO 4217 code, e.g. GBP, EUR, USD.">
            {(f) => (
              <>
                <input {...register('currency', { setValueAs: (v: string) => v.toUpperCase() })} {...ids(f)} list={listId} className="field uppercase" autoComplete="off" maxLength={3} />
                <datalist id={listId}>{currencies.map((c) => <option key={c} value={c} />)}</datalist>
              </>
            )}
          </Field>
          <Field label="Limited-edition premium" error={errors.limitedEditionPremiumBp?.message} hint="Added to the price of every print in a limited edition.">
            {(f) => (
              <Controller
                control={control}
                name="limitedEditionPremiumBp"
                render={({ field }) => <DecimalInput {...f} value={field.value} digits={2} onChange={field.onChange} onBlur={field.onBlur} suffix="%" />}
              />
            )}
          </Field>
        </div>
        {currencyChanging && (
          <div className="mt-4">
            <Notice tone="warn">
              <p>{currencyChangeWarning(saved.currency, currency)}</p>
              <label className="mt-2 flex items-center gap-2">
                <input type="checkbox" checked={understood} onChange={(e) => setUnderstood(e.target.checked)} className="accent-[rgb(var(--ember))]" />
                I understand: the amounts stay as they are.
              </label>
            </Notice>
          </div>
        )}
      </Section>

      <Section
        id="grades"
        title="Print grades"
        intro="A print’s grade comes from the pixels per inch the file gives at that size and crop. Crisp: at or above the target. Fine: at or above the floor. Wall: below the floor, yet enough for the eye at the distance a print that size is seen from, and never under the wall floor. Anything less is not offered."
      >
        <div className="grid gap-4 sm:grid-cols-4">
          <Field label="Target (Crisp)" error={errors.targetPpi?.message} hint="ppi; commonly 300.">
            {(f) => <input {...number('targetPpi', ['floorPpi'])} {...ids(f)} type="number" inputMode="numeric" min={50} max={1200} step={1} className="field" />}
          </Field>
          <Field label="Floor (Fine)" error={errors.floorPpi?.message} hint="ppi; labs commonly ask 240.">
            {(f) => <input {...number('floorPpi', ['targetPpi', 'wallFloorPpi'])} {...ids(f)} type="number" inputMode="numeric" min={50} max={1200} step={1} className="field" />}
          </Field>
          <Field label="Wall floor" error={errors.wallFloorPpi?.message} hint="ppi; the least a big print may have.">
            {(f) => <input {...number('wallFloorPpi', ['floorPpi'])} {...ids(f)} type="number" inputMode="numeric" min={50} max={1200} step={1} className="field" />}
          </Field>
          <Field label="Viewing distance" error={errors.viewingDistanceFactor?.message} hint="× the print’s diagonal; commonly 1.5.">
            {(f) => <input {...number('viewingDistanceFactor')} {...ids(f)} type="number" inputMode="decimal" min={0.5} max={5} step={0.1} className="field" />}
          </Field>
        </div>
        <p className="mt-3 text-xs text-ink-soft">Grades follow a save at once, on every work page and in every cart.</p>
      </Section>

      <Section
        id="lab"
        title="Lab files"
        intro="What Dispatch hands the print lab for each print line: the picture cut to the buyer’s crop and made at exactly the print size at this resolution, in sRGB with its profile embedded."
      >
        <div className="grid gap-4 sm:grid-cols-4">
          <Field label="Lab resolution" error={errors.labPpi?.message} hint={`ppi, ${LAB_PPI_RANGE.min}–${LAB_PPI_RANGE.max}; labs commonly print at 300.`}>
            {(f) => <input {...number('labPpi')} {...ids(f)} type="number" inputMode="numeric" min={LAB_PPI_RANGE.min} max={LAB_PPI_RANGE.max} step={1} className="field" />}
          </Field>
          <Field label="File format" error={errors.labFormat?.message} hint="A 16-bit TIFF keeps the most tone; a JPEG is smaller." className="sm:col-span-2">
            {(f) => (
              <select {...register('labFormat')} {...ids(f)} className="field">
                {LAB_FORMATS.map((format) => <option key={format} value={format}>{LAB_FORMAT_LABEL[format]}</option>)}
              </select>
            )}
          </Field>
        </div>
        <p className="mt-3 text-xs text-ink-soft">Packs already prepared keep their files; prepare again to remake them with new settings.</p>
      </Section>

      <Section id="watermark" title="Watermark" intro="The words set across every preview in the Gallery. Originals are never marked or shown.">
        <div className="max-w-xl">
          <Field
            label="Watermark text"
            error={errors.watermarkText?.message}
            hint={watermarkChanging ? `Saving re-makes the previews of ${workCount === 1 ? 'the 1 work' : `all ${workCount} works`}, one at a time; the Gallery switches to each as it is done.` : undefined}
          >
            {(f) => <input {...register('watermarkText')} {...ids(f)} className="field" autoComplete="off" />}
          </Field>
        </div>
        <div className="mt-4">
          <RebuildStatus initial={props.initialRebuild} />
        </div>
      </Section>

      <div className="flex flex-wrap items-center gap-4 border-t border-rule pt-6">
        <button type="submit" className="btn-primary" disabled={formState.isSubmitting || (currencyChanging && !understood)}>
          {formState.isSubmitting ? 'Saving…' : 'Save settings'}
        </button>
        {formState.isDirty && !formState.isSubmitting && (
          <button type="button" className="btn-quiet" onClick={() => { reset(saved); setMessage(null); }}>Undo changes</button>
        )}
        <div aria-live="polite" className="min-w-0 flex-1">{message && <Notice tone={message.tone}>{message.text}</Notice>}</div>
      </div>
    </form>
  );
}

/** Spreads a Field's ids onto its input. */
function ids(f: { id: string; describedBy?: string; invalid: boolean }) {
  return { id: f.id, 'aria-describedby': f.describedBy, 'aria-invalid': f.invalid };
}

function RebuildStatus({ initial }: { initial: RebuildProgress }) {
  const queryClient = useQueryClient();
  const progress = useQuery({
    queryKey: ['rebuild'],
    queryFn: () => load<RebuildProgress>('/api/studio/settings/rebuild'),
    initialData: initial,
    refetchInterval: (query) => (query.state.data?.state === 'running' ? 1000 : false),
  });
  const [starting, setStarting] = useState(false);
  const p = progress.data;

  async function remake() {
    setStarting(true);
    const result = await api<RebuildProgress>('/api/studio/settings/rebuild', 'POST');
    setStarting(false);
    if (result.ok) queryClient.setQueryData(['rebuild'], result.data);
  }

  const share = p.total > 0 ? Math.round((p.done / p.total) * 100) : 0;
  return (
    <div className="max-w-xl space-y-2 text-sm" data-testid="rebuild-status">
      {p.state === 'running' && (
        <>
          <p aria-live="polite">
            Re-making previews: {p.done} of {p.total || '…'}
            {p.currentTitle ? <> — now “{p.currentTitle}”</> : null}
          </p>
          <div role="progressbar" aria-label="Previews re-made" aria-valuemin={0} aria-valuemax={p.total} aria-valuenow={p.done} className="h-2 w-full overflow-hidden rounded-sm bg-mat">
            <div className="h-full bg-ember transition-[width] duration-500" style={{ width: `${share}%` }} />
          </div>
        </>
      )}
      {p.state === 'done' && (
        <p aria-live="polite">
          Previews re-made with “{p.watermarkText}”: {p.done - p.errors.length} of {p.total} works.
        </p>
      )}
      {p.errors.length > 0 && (
        <div role="alert" className="rounded-sm border border-ember p-3">
          <p>{p.errors.length === 1 ? 'One work could not be re-made:' : `${p.errors.length} works could not be re-made:`}</p>
          <ul className="mt-1 list-disc pl-5 text-ink-soft">
            {p.errors.map((e) => <li key={`${e.workId}-${e.message}`}>{e.title ? `“${e.title}”: ` : ''}{e.message}</li>)}
          </ul>
        </div>
      )}
      {progress.isError && <p className="text-ember">Progress is not available right now.</p>}
      {p.state !== 'running' && (
        <button type="button" className="btn-quiet" onClick={remake} disabled={starting}>
          {starting ? 'Starting…' : 'Re-make all previews now'}
        </button>
      )}
    </div>
  );
}

// ----------------------------------------------------------------------------- catalogue lists

interface ListProps<T extends { id: number }> {
  title: string;
  sectionId: string;
  intro: ReactNode;
  queryKey: string;
  url: string;
  initial: T[];
  pick: (body: unknown) => T[];
  summary: (item: T) => ReactNode;
  name: (item: T) => string;
  addLabel: string;
  editor: (args: { item: T | null; done: (message: string) => void; cancel: () => void }) => ReactNode;
}

/** A list of rows, each with its own edit form, a delete that may deactivate instead, and an add form. */
function CatalogueList<T extends { id: number; active: boolean }>(props: ListProps<T>) {
  const queryClient = useQueryClient();
  const list = useQuery({ queryKey: [props.queryKey], queryFn: async () => props.pick(await load<unknown>(props.url)), initialData: props.initial });
  const [editing, setEditing] = useState<number | 'new' | null>(null);
  const [confirming, setConfirming] = useState<number | null>(null);
  const [message, setMessage] = useState<{ tone: 'ok' | 'warn' | 'error'; text: string } | null>(null);

  const done = (text: string) => {
    setEditing(null);
    setMessage({ tone: 'ok', text });
    void queryClient.invalidateQueries({ queryKey: [props.queryKey] });
  };

  async function remove(item: T) {
    setConfirming(null);
    const result = await api<DeleteOutcome<T>>(`${props.url}/${item.id}`, 'DELETE');
    if (!result.ok) setMessage({ tone: 'error', text: result.error.message });
    else setMessage({ tone: result.data.deleted ? 'ok' : 'warn', text: result.data.message });
    if (editing === item.id) setEditing(null);
    void queryClient.invalidateQueries({ queryKey: [props.queryKey] });
  }

  return (
    <Section id={props.sectionId} title={props.title} intro={props.intro}>
      <div aria-live="polite" className="mb-4">{message && <Notice tone={message.tone}>{message.text}</Notice>}</div>
      {list.data.length === 0 && <p className="text-sm text-ink-soft">None yet.</p>}
      <ul className="divide-y divide-rule border-y border-rule" role="list">
        {list.data.map((item) => (
          <li key={item.id} className="py-4">
            <div className="flex flex-wrap items-start gap-4">
              <div className={`min-w-0 flex-1 ${item.active ? '' : 'opacity-70'}`}>
                {props.summary(item)}
                {!item.active && <span className="eyebrow mt-1 block">Inactive — not offered</span>}
              </div>
              <div className="flex gap-2">
                <button type="button" className="btn-quiet" aria-expanded={editing === item.id} onClick={() => { setEditing(editing === item.id ? null : item.id); setMessage(null); }}>
                  {editing === item.id ? 'Close' : 'Edit'}
                </button>
                {confirming === item.id ? (
                  <>
                    <button type="button" className="btn-primary" onClick={() => remove(item)}>Delete “{props.name(item)}”</button>
                    <button type="button" className="btn-quiet" onClick={() => setConfirming(null)}>Keep</button>
                  </>
                ) : (
                  <button type="button" className="btn-quiet" onClick={() => setConfirming(item.id)}>Delete</button>
                )}
              </div>
            </div>
            {confirming === item.id && (
              <p className="mt-2 text-xs text-ink-soft">If anything refers to it, it is set inactive instead of deleted.</p>
            )}
            {editing === item.id && <div className="mt-4">{props.editor({ item, done, cancel: () => setEditing(null) })}</div>}
          </li>
        ))}
      </ul>
      <div className="mt-4">
        {editing === 'new' ? (
          props.editor({ item: null, done, cancel: () => setEditing(null) })
        ) : (
          <button type="button" className="btn-quiet" onClick={() => { setEditing('new'); setMessage(null); }}>{props.addLabel}</button>
        )}
      </div>
    </Section>
  );
}

/** Saves an entity form: POST when new, PATCH when editing; server errors go beside their fields. */
async function saveEntity<T extends FieldValues, V>(args: {
  url: string;
  id: number | null;
  values: V;
  key: string;
  setError: UseFormSetError<T>;
  fields: readonly string[];
}): Promise<{ ok: true; item: { name?: string; label?: string } } | { ok: false; message: string }> {
  const { url, id, values, key, setError, fields } = args;
  const result = await api<Record<string, { name?: string; label?: string }>>(id == null ? url : `${url}/${id}`, id == null ? 'POST' : 'PATCH', values);
  if (!result.ok) return { ok: false, message: showServerErrors(result.error, setError, fields) };
  return { ok: true, item: result.data[key] ?? {} };
}

function FormButtons({ busy, isNew, cancel, error }: { busy: boolean; isNew: boolean; cancel: () => void; error: string | null }) {
  return (
    <div className="flex flex-wrap items-center gap-3 sm:col-span-full">
      <button type="submit" className="btn-primary" disabled={busy}>{busy ? 'Saving…' : isNew ? 'Add' : 'Save'}</button>
      <button type="button" className="btn-quiet" onClick={cancel}>Cancel</button>
      {error && <Notice tone="error">{error}</Notice>}
    </div>
  );
}

function ActiveBox({ register }: { register: UseFormRegisterReturn }) {
  return (
    <label className="flex items-center gap-2 text-sm sm:col-span-full">
      <input type="checkbox" {...register} className="accent-[rgb(var(--ember))]" />
      Active — offered to buyers
    </label>
  );
}

// --------------------------------------------------------------------------------- licence tiers

const TIER_FIELDS = Object.keys(licenceTierInput.shape);
const nullableNumber = (v: unknown) => (v === '' || v == null ? null : Number(v));

const NEW_TIER: LicenceTierInput = {
  name: '', use: 'editorial', summary: '', terms: '', media: '', cap: null, capUnit: '', territory: 'Worldwide',
  termMonths: 12, defaultPrice: 0, active: true,
};

function TiersSection({ initial, currency }: { initial: LicenceTierView[]; currency: string }) {
  return (
    <CatalogueList<LicenceTierView>
      title="Licence tiers"
      sectionId="tiers"
      intro="Each tier is one way a buyer may use a picture, priced by use. Its terms are shown in plain words on every work’s page."
      queryKey="tiers"
      url="/api/studio/tiers"
      initial={initial}
      pick={(body) => (body as { tiers: LicenceTierView[] }).tiers}
      name={(t) => t.name}
      addLabel="Add a licence tier"
      summary={(t) => (
        <>
          <p className="font-medium">{t.name} <span className="text-ink-soft">· {t.use === 'editorial' ? 'Editorial' : 'Commercial'}</span></p>
          <p className="text-sm text-ink-soft">
            {t.media}; {t.cap == null ? 'no cap' : `up to ${t.cap.toLocaleString('en-GB')} ${t.capUnit ?? ''}`}; {t.territory}; {t.termMonths ? `${t.termMonths} months` : 'no end date'}
          </p>
          <p className="price mt-1 text-base">{formatMoney(t.defaultPrice, currency)}</p>
        </>
      )}
      editor={({ item, done, cancel }) => <TierForm item={item} currency={currency} done={done} cancel={cancel} />}
    />
  );
}

function TierForm({ item, currency, done, cancel }: { item: LicenceTierView | null; currency: string; done: (m: string) => void; cancel: () => void }) {
  const defaults: LicenceTierInput = item
    ? { name: item.name, use: item.use, summary: item.summary, terms: item.terms, media: item.media, cap: item.cap, capUnit: item.capUnit ?? '', territory: item.territory, termMonths: item.termMonths, defaultPrice: item.defaultPrice, active: item.active }
    : NEW_TIER;
  const { register, handleSubmit, formState, setError, control } = useForm<LicenceTierInput, unknown, LicenceTierData>({ resolver: zodResolver(licenceTierInput), defaultValues: defaults });
  const [error, setFormError] = useState<string | null>(null);
  const e = formState.errors;

  async function submit(values: LicenceTierData) {
    setFormError(null);
    const result = await saveEntity({ url: '/api/studio/tiers', id: item?.id ?? null, values, key: 'tier', setError, fields: TIER_FIELDS });
    if (!result.ok) setFormError(result.message);
    else done(`“${result.item.name ?? values.name}” ${item ? 'saved' : 'added'}.`);
  }

  return (
    <form onSubmit={handleSubmit(submit)} noValidate className="grid gap-4 rounded-sm border border-rule bg-paper-raised p-4 sm:grid-cols-2" aria-label={item ? `Edit ${item.name}` : 'New licence tier'}>
      <Field label="Name" error={e.name?.message}>{(f) => <input {...register('name')} {...ids(f)} className="field" autoComplete="off" />}</Field>
      <Field label="Use" error={e.use?.message} hint="Editorial: news, features, books; no advertising. Commercial: advertising, packaging, brand content.">
        {(f) => (
          <select {...register('use')} {...ids(f)} className="field">
            <option value="editorial">Editorial</option>
            <option value="commercial">Commercial</option>
          </select>
        )}
      </Field>
      <Field label="Summary" error={e.summary?.message} className="sm:col-span-2">{(f) => <input {...register('summary')} {...ids(f)} className="field" autoComplete="off" />}</Field>
      <Field label="Terms" error={e.terms?.message} hint="In plain words, as the buyer will read them: what is allowed and what is not." className="sm:col-span-2">
        {(f) => <textarea {...register('terms')} {...ids(f)} rows={4} className="field" />}
      </Field>
      <Field label="Media" error={e.media?.message} hint="Where the picture may appear, e.g. web and apps.">{(f) => <input {...register('media')} {...ids(f)} className="field" autoComplete="off" />}</Field>
      <Field label="Territory" error={e.territory?.message}>{(f) => <input {...register('territory')} {...ids(f)} className="field" autoComplete="off" />}</Field>
      <Field label="Cap" error={e.cap?.message} hint="Print run or audience; leave empty for no cap.">
        {(f) => <input {...register('cap', { setValueAs: nullableNumber, deps: ['capUnit'] })} {...ids(f)} type="number" inputMode="numeric" min={1} step={1} className="field" />}
      </Field>
      <Field label="Cap counts" error={e.capUnit?.message} hint="e.g. copies, page views.">{(f) => <input {...register('capUnit')} {...ids(f)} className="field" autoComplete="off" />}</Field>
      <Field label="Term" error={e.termMonths?.message} hint="Months; leave empty for no end date.">
        {(f) => <input {...register('termMonths', { setValueAs: nullableNumber })} {...ids(f)} type="number" inputMode="numeric" min={1} step={1} className="field" />}
      </Field>
      <Field label="Price" error={e.defaultPrice?.message} hint="A work may have its own price for this tier.">
        {(f) => (
          <Controller control={control} name="defaultPrice" render={({ field }) => (
            <DecimalInput {...f} value={field.value} digits={minorUnitDigits(currency)} onChange={field.onChange} onBlur={field.onBlur} prefix={currencySymbol(currency)} />
          )} />
        )}
      </Field>
      <ActiveBox register={register('active')} />
      <FormButtons busy={formState.isSubmitting} isNew={!item} cancel={cancel} error={error} />
    </form>
  );
}

// ---------------------------------------------------------------------------------------- papers

const PAPER_FIELDS = Object.keys(paperInput.shape);
const NEW_PAPER: PaperInput = { name: '', surface: '', weightGsm: 300, surchargeBp: 0, description: '', active: true };

function PapersSection({ initial }: { initial: PaperView[] }) {
  return (
    <CatalogueList<PaperView>
      title="Papers"
      sectionId="papers"
      intro="The papers the lab prints on. A surcharge is added to a size’s base price."
      queryKey="papers"
      url="/api/studio/papers"
      initial={initial}
      pick={(body) => (body as { papers: PaperView[] }).papers}
      name={(p) => p.name}
      addLabel="Add a paper"
      summary={(p) => (
        <>
          <p className="font-medium">{p.name} <span className="text-ink-soft">· {p.surface} · {p.weightGsm} gsm</span></p>
          <p className="text-sm text-ink-soft">{p.surchargeBp ? `+${percent(p.surchargeBp)} on the base price` : 'No surcharge'}</p>
        </>
      )}
      editor={({ item, done, cancel }) => <PaperForm item={item} done={done} cancel={cancel} />}
    />
  );
}

function PaperForm({ item, done, cancel }: { item: PaperView | null; done: (m: string) => void; cancel: () => void }) {
  const defaults: PaperInput = item
    ? { name: item.name, surface: item.surface, weightGsm: item.weightGsm, surchargeBp: item.surchargeBp, description: item.description, active: item.active }
    : NEW_PAPER;
  const { register, handleSubmit, formState, setError, control } = useForm<PaperInput, unknown, PaperData>({ resolver: zodResolver(paperInput), defaultValues: defaults });
  const [error, setFormError] = useState<string | null>(null);
  const e = formState.errors;

  async function submit(values: PaperData) {
    setFormError(null);
    const result = await saveEntity({ url: '/api/studio/papers', id: item?.id ?? null, values, key: 'paper', setError, fields: PAPER_FIELDS });
    if (!result.ok) setFormError(result.message);
    else done(`“${result.item.name ?? values.name}” ${item ? 'saved' : 'added'}.`);
  }

  return (
    <form onSubmit={handleSubmit(submit)} noValidate className="grid gap-4 rounded-sm border border-rule bg-paper-raised p-4 sm:grid-cols-2" aria-label={item ? `Edit ${item.name}` : 'New paper'}>
      <Field label="Name" error={e.name?.message}>{(f) => <input {...register('name')} {...ids(f)} className="field" autoComplete="off" />}</Field>
      <Field label="Surface" error={e.surface?.message} hint="e.g. matte, satin, gloss.">{(f) => <input {...register('surface')} {...ids(f)} className="field" autoComplete="off" />}</Field>
      <Field label="Weight" error={e.weightGsm?.message} hint="Grams per square metre, 80–600.">
        {(f) => <input {...register('weightGsm', { valueAsNumber: true })} {...ids(f)} type="number" inputMode="numeric" min={80} max={600} step={1} className="field" />}
      </Field>
      <Field label="Surcharge" error={e.surchargeBp?.message} hint="On the size’s base price; 0 for none.">
        {(f) => (
          <Controller control={control} name="surchargeBp" render={({ field }) => (
            <DecimalInput {...f} value={field.value} digits={2} onChange={field.onChange} onBlur={field.onBlur} suffix="%" />
          )} />
        )}
      </Field>
      <Field label="Description" error={e.description?.message} className="sm:col-span-2">{(f) => <textarea {...register('description')} {...ids(f)} rows={2} className="field" />}</Field>
      <ActiveBox register={register('active')} />
      <FormButtons busy={formState.isSubmitting} isNew={!item} cancel={cancel} error={error} />
    </form>
  );
}

// ----------------------------------------------------------------------------------- print sizes

const SIZE_FIELDS = Object.keys(printSizeInput.shape);
const NEW_SIZE: PrintSizeInput = { label: '', family: 'inch', unit: 'in', width: 8, height: 10, basePrice: 0, active: true };
const ISO_A_CHOICES = [0, 1, 2, 3, 4, 5, 6] as const;

function SizesSection({ initial, currency, targetPpi }: { initial: PrintSizeView[]; currency: string; targetPpi: number }) {
  return (
    <CatalogueList<PrintSizeView>
      title="Print sizes"
      sectionId="sizes"
      intro="Paper sizes the lab prints, stored exactly as sold, short side first. Each work’s grade at each size is worked out from its pixels."
      queryKey="sizes"
      url="/api/studio/sizes"
      initial={initial}
      pick={(body) => (body as { sizes: PrintSizeView[] }).sizes}
      name={(s) => s.label}
      addLabel="Add a print size"
      summary={(s) => (
        <>
          <p className="font-medium">
            {s.label}
            {s.label !== sizeLabel(s.width, s.height, s.unit) && <span className="text-ink-soft"> · {sizeLabel(s.width, s.height, s.unit)}</span>}
          </p>
          <p className="text-sm text-ink-soft">
            Crisp needs {pixelsAt(s.width, s.unit, targetPpi)} × {pixelsAt(s.height, s.unit, targetPpi)} px at {targetPpi} ppi
          </p>
          <p className="price mt-1 text-base">{formatMoney(s.basePrice, currency)}</p>
        </>
      )}
      editor={({ item, done, cancel }) => <SizeForm item={item} currency={currency} done={done} cancel={cancel} />}
    />
  );
}

function SizeForm({ item, currency, done, cancel }: { item: PrintSizeView | null; currency: string; done: (m: string) => void; cancel: () => void }) {
  const defaults: PrintSizeInput = item
    ? { label: item.label, family: item.family, unit: item.unit, width: item.width, height: item.height, basePrice: item.basePrice, active: item.active }
    : NEW_SIZE;
  const { register, handleSubmit, formState, setError, control, setValue, getValues, watch } = useForm<PrintSizeInput, unknown, PrintSizeData>({
    resolver: zodResolver(printSizeInput),
    defaultValues: defaults,
  });
  const [error, setFormError] = useState<string | null>(null);
  const [isoN, setIsoN] = useState<number>(4);
  const e = formState.errors;
  const unit = watch('unit');

  function fillIsoA() {
    const { width, height } = isoA(isoN);
    const options = { shouldDirty: true, shouldValidate: true } as const;
    setValue('family', 'iso-a', options);
    setValue('unit', 'mm', options);
    setValue('width', width, options);
    setValue('height', height, options);
    const label = getValues('label').trim();
    if (label === '' || /^A\d+$/.test(label)) setValue('label', `A${isoN}`, options);
  }

  async function submit(values: PrintSizeData) {
    setFormError(null);
    const result = await saveEntity({ url: '/api/studio/sizes', id: item?.id ?? null, values, key: 'size', setError, fields: SIZE_FIELDS });
    if (!result.ok) setFormError(result.message);
    else done(`“${result.item.label ?? values.label}” ${item ? 'saved' : 'added'}.`);
  }

  const helperId = useId();
  return (
    <form onSubmit={handleSubmit(submit)} noValidate className="grid gap-4 rounded-sm border border-rule bg-paper-raised p-4 sm:grid-cols-4" aria-label={item ? `Edit ${item.label}` : 'New print size'}>
      <div className="flex flex-wrap items-end gap-2 sm:col-span-4">
        <div>
          <label htmlFor={helperId} className="mb-1 block text-sm font-medium">ISO A size</label>
          <select id={helperId} className="field w-auto" value={isoN} onChange={(ev) => setIsoN(Number(ev.target.value))}>
            {ISO_A_CHOICES.map((n) => {
              const a = isoA(n);
              return <option key={n} value={n}>A{n} · {a.width} × {a.height} mm</option>;
            })}
          </select>
        </div>
        <button type="button" className="btn-quiet" onClick={fillIsoA}>Fill in exact millimetres</button>
        <p className="basis-full text-xs text-ink-soft">ISO 216 sizes, rounded down to whole millimetres as the standard has them.</p>
      </div>
      <Field label="Label" error={e.label?.message} className="sm:col-span-2">{(f) => <input {...register('label')} {...ids(f)} className="field" autoComplete="off" />}</Field>
      <Field label="Family" error={e.family?.message}>
        {(f) => (
          <select
            {...register('family', { onChange: (ev) => setValue('unit', FAMILY_UNIT[ev.target.value as keyof typeof FAMILY_UNIT] ?? 'in', { shouldValidate: true }) })}
            {...ids(f)}
            className="field"
          >
            <option value="iso-a">ISO A (mm)</option>
            <option value="inch">Inch</option>
          </select>
        )}
      </Field>
      <Field label="Unit" error={e.unit?.message}>
        {(f) => (
          <select {...register('unit', { deps: ['width', 'height'] })} {...ids(f)} className="field">
            <option value="mm">mm</option>
            <option value="in">in</option>
          </select>
        )}
      </Field>
      <Field label="Width (short side)" error={e.width?.message} hint={unit === 'mm' ? 'Whole millimetres.' : undefined}>
        {(f) => <input {...register('width', { valueAsNumber: true })} {...ids(f)} type="number" inputMode="decimal" min={0} step={unit === 'mm' ? 1 : 'any'} className="field" />}
      </Field>
      <Field label="Height (long side)" error={e.height?.message}>
        {(f) => <input {...register('height', { valueAsNumber: true, deps: ['width'] })} {...ids(f)} type="number" inputMode="decimal" min={0} step={unit === 'mm' ? 1 : 'any'} className="field" />}
      </Field>
      <Field label="Base price" error={e.basePrice?.message} hint="Before the paper’s surcharge." className="sm:col-span-2">
        {(f) => (
          <Controller control={control} name="basePrice" render={({ field }) => (
            <DecimalInput {...f} value={field.value} digits={minorUnitDigits(currency)} onChange={field.onChange} onBlur={field.onBlur} prefix={currencySymbol(currency)} />
          )} />
        )}
      </Field>
      <ActiveBox register={register('active')} />
      <FormButtons busy={formState.isSubmitting} isNew={!item} cancel={cancel} error={error} />
    </form>
  );
}
