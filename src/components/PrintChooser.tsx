import { useEffect, useId, useMemo, useState } from 'react';
import { addPrint } from '~/stores/cart';
import { formatMoney } from '~/lib/money';
import { mediaUrl, variantAtLeast, type PictureData } from '~/lib/media';
import { GRADE_LABEL, gradePrint, type GradeThresholds, type PrintMode, type PrintGradeResult } from '~/lib/print-grade';
import type { PaperOption, SizeOption } from '~/lib/catalogue-types';

type Props = {
  picture: PictureData;
  focal: { x: number; y: number };
  sizes: SizeOption[];
  papers: PaperOption[];
  currency: string;
  thresholds: GradeThresholds;
};

const GRADE_NOTE = {
  crisp: 'Sharp even held in the hand.',
  fine: 'Sharp at arm’s length; the usual lab standard.',
  wall: 'Made to hang: sharp from the distance a print this size is seen.',
  'too-small': 'The file cannot hold this size.',
} as const;

/** Chooses a print: size × paper × fill or fit, with the grade, effective ppi and crop drawn as a mat window. */
export default function PrintChooser({ picture, focal, sizes, papers, currency, thresholds }: Props) {
  const id = useId();
  const [mode, setMode] = useState<PrintMode>('fill');
  const graded = useMemo(
    () =>
      sizes.map((size) => {
        const grade = (m: PrintMode) =>
          gradePrint({ image: picture, print: { width: size.width, height: size.height, unit: size.unit }, mode: m, focal, thresholds });
        return { size, fill: grade('fill'), fit: grade('fit') };
      }),
    [sizes, picture, focal, thresholds],
  );
  const available = (g: (typeof graded)[number], m: PrintMode) => g.size.offers.length > 0 && g[m].grade !== 'too-small';
  const firstAvailable = graded.find((g) => available(g, 'fill')) ?? graded.find((g) => available(g, 'fit'));
  const [sizeId, setSizeId] = useState<number | null>(firstAvailable?.size.sizeId ?? null);
  const [paperId, setPaperId] = useState<number | null>(papers[0]?.paperId ?? null);
  const [added, setAdded] = useState<string | null>(null);
  // The server-rendered copy cannot add anything; the button wakes once the island has hydrated.
  const [hydrated, setHydrated] = useState(false);
  useEffect(() => setHydrated(true), []);

  const current = graded.find((g) => g.size.sizeId === sizeId) ?? null;
  const result = current ? current[mode] : null;
  const offer = current?.size.offers.find((o) => o.paperId === paperId) ?? null;
  const canBuy = Boolean(current && offer && available(current, mode));

  if (!graded.some((g) => g.size.offers.length > 0)) {
    return <p className="text-sm text-ink-soft">This work is not offered as a print.</p>;
  }

  function add() {
    if (!offer || !canBuy || !current) return;
    addPrint(offer.offerId, mode, 1);
    const paper = papers.find((p) => p.paperId === paperId);
    setAdded(`${current.size.label} on ${paper?.name ?? 'paper'} added to the cart.`);
  }

  return (
    <div className="space-y-6" data-testid="print-chooser">
      <CropPreview picture={picture} result={result} />

      <fieldset>
        <legend className="eyebrow mb-2">Size</legend>
        <div className="grid gap-1.5" role="radiogroup" aria-label="Print size">
          {graded.map((g) => {
            const r = g[mode];
            const offered = g.size.offers.length > 0;
            const ok = available(g, mode);
            const from = offered ? Math.min(...g.size.offers.map((o) => o.price)) : null;
            return (
              <label
                key={g.size.sizeId}
                className={`flex cursor-pointer items-center gap-3 rounded-sm border px-3 py-2 text-sm ${
                  sizeId === g.size.sizeId ? 'border-ember bg-paper-raised' : 'border-rule'
                } ${ok ? '' : 'cursor-not-allowed opacity-60'}`}
              >
                <input
                  type="radio"
                  name={`${id}-size`}
                  value={g.size.sizeId}
                  checked={sizeId === g.size.sizeId}
                  disabled={!ok}
                  onChange={() => { setSizeId(g.size.sizeId); setAdded(null); }}
                  className="accent-[rgb(var(--ember))]"
                />
                <span className="min-w-24 font-medium">{g.size.label}</span>
                <span className="flex-1 text-ink-soft" data-testid={`grade-${g.size.slug}`}>
                  {offered || r.grade === 'too-small' ? (
                    <><span className="text-ink">{GRADE_LABEL[r.grade]}</span> · {Math.round(r.effectivePpi)} ppi</>
                  ) : (
                    'Not offered'
                  )}
                  {g.size.edition?.kind === 'limited' && offered && <> · edition of {g.size.edition.total}</>}
                </span>
                <span className="tabular-nums">{from != null && ok ? formatMoney(from, currency) : ''}</span>
              </label>
            );
          })}
        </div>
      </fieldset>

      <fieldset>
        <legend className="eyebrow mb-2">Crop</legend>
        <div className="grid grid-cols-2 gap-1.5 text-sm">
          {(['fill', 'fit'] as const).map((m) => (
            <label key={m} className={`cursor-pointer rounded-sm border px-3 py-2 ${mode === m ? 'border-ember bg-paper-raised' : 'border-rule'}`}>
              <input type="radio" name={`${id}-mode`} value={m} checked={mode === m} onChange={() => { setMode(m); setAdded(null); }} className="mr-2 accent-[rgb(var(--ember))]" />
              {m === 'fill' ? 'Fill the paper' : 'Whole picture'}
              <span className="block pl-5 text-xs text-ink-soft">{m === 'fill' ? 'cropped to the paper’s shape' : 'with a white border'}</span>
            </label>
          ))}
        </div>
      </fieldset>

      <fieldset>
        <legend className="eyebrow mb-2">Paper</legend>
        <div className="grid gap-1.5 text-sm">
          {papers.map((p) => {
            const price = current?.size.offers.find((o) => o.paperId === p.paperId)?.price;
            return (
              <label key={p.paperId} className={`flex cursor-pointer items-start gap-3 rounded-sm border px-3 py-2 ${paperId === p.paperId ? 'border-ember bg-paper-raised' : 'border-rule'}`}>
                <input type="radio" name={`${id}-paper`} value={p.paperId} checked={paperId === p.paperId} onChange={() => { setPaperId(p.paperId); setAdded(null); }} className="mt-1 accent-[rgb(var(--ember))]" />
                <span className="flex-1">
                  <span className="font-medium">{p.name}</span> <span className="text-ink-soft">· {p.weightGsm} gsm</span>
                  <span className="block text-xs text-ink-soft">{p.description}</span>
                </span>
                <span className="tabular-nums">{price != null ? formatMoney(price, currency) : ''}</span>
              </label>
            );
          })}
        </div>
      </fieldset>

      {current && result && (
        <div className="rounded-sm border border-rule bg-paper-raised p-4 text-sm" aria-live="polite" data-testid="print-summary">
          <p>
            <span className="font-display text-2xl">{GRADE_LABEL[result.grade]}</span>{' '}
            <span className="text-ink-soft">{Math.round(result.effectivePpi)} ppi at {current.size.label}</span>
          </p>
          <p className="mt-1 text-ink-soft">{GRADE_NOTE[result.grade]}</p>
          <p className="mt-1 text-xs text-ink-soft">
            {mode === 'fill'
              ? result.lostShare > 0.005 ? `The crop leaves out ${Math.round(result.lostShare * 100)} % of the picture.` : 'The picture fits the paper without a crop.'
              : `Border: ${fmtIn(result.borderInches.leftRight)} at the sides, ${fmtIn(result.borderInches.topBottom)} top and bottom.`}{' '}
            Seen from about {fmtDistance(result.viewingDistanceInches)}, the eye resolves {Math.round(result.eyePpi)} ppi.
          </p>
        </div>
      )}

      <div className="flex flex-wrap items-center gap-4">
        <span className="price" data-testid="print-price">{offer && canBuy ? formatMoney(offer.price, currency) : '—'}</span>
        <button type="button" className="btn-primary" disabled={!canBuy || !hydrated} onClick={add} data-testid="add-print" data-ready={hydrated ? 'true' : undefined}>
          Add print to cart
        </button>
      </div>
      {added && (
        <p className="text-sm" role="status">
          {added} <a href="/cart" className="text-ember underline">View cart</a>
        </p>
      )}
    </div>
  );
}

function fmtIn(inches: number): string {
  return `${(Math.max(0, inches) * 2.54).toFixed(1)} cm`;
}

function fmtDistance(inches: number): string {
  const metres = (inches * 2.54) / 100;
  return metres < 1 ? `${Math.round(metres * 100)} cm` : `${metres.toFixed(1)} m`;
}

/** The preview behind a mat board: the window shows what the print holds (fill) or the bordered sheet (fit). */
function CropPreview({ picture, result }: { picture: PictureData; result: PrintGradeResult | null }) {
  const variant = variantAtLeast(picture, 640);
  const src = mediaUrl(picture.key, variant.name, 'jpeg');
  const aspect = picture.width / picture.height;
  if (!result) return null;
  if (result.mode === 'fill') {
    const { crop } = result;
    const win = {
      left: (crop.left / picture.width) * 100,
      top: (crop.top / picture.height) * 100,
      width: (crop.width / picture.width) * 100,
      height: (crop.height / picture.height) * 100,
    };
    return (
      <figure className="bg-mat p-5" aria-label="Crop preview">
        <div className="relative mx-auto overflow-hidden" style={{ aspectRatio: String(aspect), maxHeight: '22rem' }}>
          <img src={src} alt="" width={variant.width} height={variant.height} loading="lazy" decoding="async" className="h-full w-full object-contain" />
          <div
            className="absolute outline outline-[999px] outline-mat/85 ring-1 ring-ink/30"
            style={{ left: `${win.left}%`, top: `${win.top}%`, width: `${win.width}%`, height: `${win.height}%` }}
            data-testid="crop-window"
          />
        </div>
        <figcaption className="mt-2 text-center text-xs text-ink-soft">The window shows the part of the picture the print holds.</figcaption>
      </figure>
    );
  }
  const paperAspect = result.paperInches.width / result.paperInches.height;
  const img = {
    width: (result.imageInches.width / result.paperInches.width) * 100,
    height: (result.imageInches.height / result.paperInches.height) * 100,
  };
  return (
    <figure className="bg-mat p-5" aria-label="Print preview with border">
      <div className="relative mx-auto bg-white shadow-sm" style={{ aspectRatio: String(paperAspect), maxHeight: '22rem' }}>
        <img
          src={src}
          alt=""
          loading="lazy"
          decoding="async"
          className="absolute object-cover"
          style={{ width: `${img.width}%`, height: `${img.height}%`, left: `${(100 - img.width) / 2}%`, top: `${(100 - img.height) / 2}%` }}
        />
      </div>
      <figcaption className="mt-2 text-center text-xs text-ink-soft">The whole picture, with a white border on the paper.</figcaption>
    </figure>
  );
}
