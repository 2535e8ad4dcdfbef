/**
 * Studio settings schemas (zod 4), shared by the settings form and the Studio API so both check the same
 * rules: the shop's settings, licence tiers, papers and print sizes. Pure: no I/O.
 */
import { z } from 'zod';
import { formatMoney } from './money';
import { LAB_FORMATS, LAB_PPI_RANGE, type LabFormat } from './lab-pack';

/** Largest amount accepted, in minor units: eight digits, the payment provider's ceiling (TRADE-FACTS §3.3). */
export const MAX_PRICE_MINOR = 99_999_999;
/** 20000 basis points = +200 %. */
export const MAX_BASIS_POINTS = 20_000;
export const PPI_RANGE = { min: 50, max: 1200 } as const;
export const VIEWING_FACTOR_RANGE = { min: 0.5, max: 5 } as const;
export const GSM_RANGE = { min: 80, max: 600 } as const;
/** Largest print side accepted: 3 m, or 120 in (from memory: wider than any roll a print lab runs). */
export const MAX_SIDE = { mm: 3000, in: 120 } as const;

const supported: ReadonlySet<string> | null =
  typeof Intl.supportedValuesOf === 'function' ? new Set(Intl.supportedValuesOf('currency')) : null;

/**
 * An ISO 4217 code (three capital letters) that this runtime's Intl knows. Intl formats any well-formed
 * code, even an invented one, so the runtime's own list decides when it has one.
 */
export function isKnownCurrency(code: string): boolean {
  if (!/^[A-Z]{3}$/.test(code)) return false;
  if (supported && !supported.has(code)) return false;
  try {
    new Intl.NumberFormat('en', { style: 'currency', currency: code });
    return true;
  } catch {
    return false;
  }
}

/** The currencies the form offers (the runtime's list; empty where Intl cannot list them). */
export function knownCurrencies(): string[] {
  return supported ? [...supported].sort() : [];
}

const text = (label: string, min: number, max: number) =>
  z
    .string({ error: `${label} is required.` })
    .trim()
    .min(min, min === 1 ? `${label} is required.` : `${label} needs at least ${min} characters.`)
    .max(max, `${label} can be at most ${max} characters.`);

const int = (label: string, min: number, max: number) =>
  z
    .number({ error: `${label} must be a number.` })
    .int(`${label} must be a whole number.`)
    .min(min, `${label} must be at least ${min}.`)
    .max(max, `${label} must be at most ${max}.`);

const ppi = (label: string) => int(label, PPI_RANGE.min, PPI_RANGE.max);
const price = (label: string) => int(label, 0, MAX_PRICE_MINOR);
const basisPoints = (label: string) => int(label, 0, MAX_BASIS_POINTS);

// ---------------------------------------------------------------------------------------------- shop

export const shopSettingsInput = z
  .object({
    shopName: text('Shop name', 1, 80),
    photographerName: text('Photographer’s name', 1, 80),
    tagline: text('Tagline', 0, 200),
    currency: z
      .string({ error: 'Currency is required.' })
      .trim()
      .refine(isKnownCurrency, 'Use a three-letter ISO 4217 currency code, e.g. GBP, EUR, USD or JPY.'),
    targetPpi: ppi('Target'),
    floorPpi: ppi('Floor'),
    wallFloorPpi: ppi('Wall floor'),
    viewingDistanceFactor: z
      .number({ error: 'Viewing distance must be a number.' })
      .min(VIEWING_FACTOR_RANGE.min, `Viewing distance must be at least ${VIEWING_FACTOR_RANGE.min} × the diagonal.`)
      .max(VIEWING_FACTOR_RANGE.max, `Viewing distance must be at most ${VIEWING_FACTOR_RANGE.max} × the diagonal.`),
    watermarkText: text('Watermark text', 1, 80),
    limitedEditionPremiumBp: basisPoints('Limited-edition premium'),
    /** The lab file's resolution and format; left out, the stored values stay. */
    labPpi: int('Lab resolution', LAB_PPI_RANGE.min, LAB_PPI_RANGE.max).optional(),
    labFormat: z.enum(LAB_FORMATS, { error: 'Choose a 16-bit TIFF or a maximum-quality JPEG.' }).optional(),
  })
  .superRefine((s, ctx) => {
    // Crisp ≥ target ≥ Fine ≥ floor ≥ Wall ≥ wall floor: each grade's threshold sits above the next one's.
    if (s.targetPpi < s.floorPpi) {
      ctx.addIssue({ code: 'custom', path: ['targetPpi'], message: `The target must be at least the floor (${s.floorPpi} ppi).` });
      ctx.addIssue({ code: 'custom', path: ['floorPpi'], message: `The floor must not be above the target (${s.targetPpi} ppi).` });
    }
    if (s.floorPpi < s.wallFloorPpi) {
      ctx.addIssue({ code: 'custom', path: ['floorPpi'], message: `The floor must be at least the wall floor (${s.wallFloorPpi} ppi).` });
      ctx.addIssue({ code: 'custom', path: ['wallFloorPpi'], message: `The wall floor must not be above the floor (${s.floorPpi} ppi).` });
    }
  });
export type ShopSettingsInput = z.input<typeof shopSettingsInput>;
export type ShopSettingsData = z.output<typeof shopSettingsInput>;

// ---------------------------------------------------------------------------------------- licence tiers

export const LICENCE_USES = ['editorial', 'commercial'] as const;

export const licenceTierFields = z.object({
  name: text('Name', 1, 80),
  use: z.enum(LICENCE_USES, { error: 'Choose editorial or commercial use.' }),
  summary: text('Summary', 0, 200),
  terms: text('Terms', 20, 4000).refine((t) => !/[<>]/.test(t), 'Write the terms in plain words, without markup.'),
  media: text('Media', 1, 120),
  /** Audience or print-run cap; null means no cap. */
  cap: int('Cap', 1, 1_000_000_000).nullable(),
  capUnit: text('Cap unit', 0, 40).nullable(),
  territory: text('Territory', 1, 120),
  termMonths: int('Term', 1, 1200).nullable(),
  defaultPrice: price('Price'),
  active: z.boolean(),
});

function checkTier(t: { cap: number | null; capUnit: string | null }, ctx: z.RefinementCtx): void {
  if (t.cap != null && !t.capUnit) {
    ctx.addIssue({ code: 'custom', path: ['capUnit'], message: 'Say what the cap counts, e.g. copies or views.' });
  }
}

export const licenceTierInput = licenceTierFields.superRefine(checkTier);
export type LicenceTierInput = z.input<typeof licenceTierInput>;
export type LicenceTierData = z.output<typeof licenceTierInput>;
/** A change to some fields; the server checks the whole tier again once merged with the stored one. */
export const licenceTierPatch = licenceTierFields.partial().strict();
export type LicenceTierPatch = z.output<typeof licenceTierPatch>;

// ----------------------------------------------------------------------------------------------- papers

export const paperFields = z.object({
  name: text('Name', 1, 80),
  surface: text('Surface', 1, 60),
  weightGsm: int('Weight', GSM_RANGE.min, GSM_RANGE.max),
  surchargeBp: basisPoints('Surcharge'),
  description: text('Description', 0, 1000),
  active: z.boolean(),
});
export const paperInput = paperFields;
export type PaperInput = z.input<typeof paperInput>;
export type PaperData = z.output<typeof paperInput>;
export const paperPatch = paperFields.partial().strict();
export type PaperPatch = z.output<typeof paperPatch>;

// ------------------------------------------------------------------------------------------ print sizes

export const SIZE_FAMILIES = ['iso-a', 'inch'] as const;
export const SIZE_UNITS = ['mm', 'in'] as const;
/** The unit each family is sold in. */
export const FAMILY_UNIT = { 'iso-a': 'mm', inch: 'in' } as const satisfies Record<(typeof SIZE_FAMILIES)[number], (typeof SIZE_UNITS)[number]>;

const side = (label: string) =>
  z.number({ error: `${label} must be a number.` }).positive(`${label} must be more than 0.`);

export const printSizeFields = z.object({
  label: text('Label', 1, 40),
  family: z.enum(SIZE_FAMILIES, { error: 'Choose ISO A or inch.' }),
  unit: z.enum(SIZE_UNITS, { error: 'Choose mm or in.' }),
  width: side('Width'),
  height: side('Height'),
  basePrice: price('Base price'),
  active: z.boolean(),
});

function checkSize(s: { family: 'iso-a' | 'inch'; unit: 'mm' | 'in'; width: number; height: number }, ctx: z.RefinementCtx): void {
  if (FAMILY_UNIT[s.family] !== s.unit) {
    ctx.addIssue({ code: 'custom', path: ['unit'], message: `${s.family === 'iso-a' ? 'ISO A sizes are' : 'Inch sizes are'} given in ${FAMILY_UNIT[s.family]}.` });
  }
  // Sizes are stored exactly as sold: ISO 216 sizes are whole millimetres.
  if (s.unit === 'mm') {
    if (!Number.isInteger(s.width)) ctx.addIssue({ code: 'custom', path: ['width'], message: 'Give millimetres as a whole number.' });
    if (!Number.isInteger(s.height)) ctx.addIssue({ code: 'custom', path: ['height'], message: 'Give millimetres as a whole number.' });
  }
  const max = MAX_SIDE[s.unit];
  if (s.width > max) ctx.addIssue({ code: 'custom', path: ['width'], message: `Width can be at most ${max} ${s.unit}.` });
  if (s.height > max) ctx.addIssue({ code: 'custom', path: ['height'], message: `Height can be at most ${max} ${s.unit}.` });
  // Stored in portrait form; the grade turns the paper to the picture.
  if (s.width > s.height) {
    ctx.addIssue({ code: 'custom', path: ['width'], message: 'Give the short side as the width (portrait form).' });
  }
}

export const printSizeInput = printSizeFields.superRefine(checkSize);
export type PrintSizeInput = z.input<typeof printSizeInput>;
export type PrintSizeData = z.output<typeof printSizeInput>;
export const printSizePatch = printSizeFields.partial().strict();
export type PrintSizePatch = z.output<typeof printSizePatch>;

// ------------------------------------------------------------------------------------------------ views

/** What the Studio reads back for each row. */
export type LicenceTierView = LicenceTierData & { id: number; slug: string; position: number };
export type PaperView = PaperData & { id: number; slug: string; position: number };
export type PrintSizeView = PrintSizeData & { id: number; slug: string; position: number };
export type ShopSettingsView = ShopSettingsData & { labPpi: number; labFormat: LabFormat };

/** Progress of the background re-make of every work's previews after the watermark changes. */
export interface RebuildProgress {
  state: 'idle' | 'running' | 'done';
  watermarkText: string | null;
  done: number;
  total: number;
  currentTitle: string | null;
  errors: { workId: number; title: string; message: string }[];
  startedAt: string | null;
  finishedAt: string | null;
}

export interface SettingsWarning {
  code: 'currency_not_converted';
  message: string;
}

/** The answer to saving the shop's settings. */
export interface SettingsSaved {
  settings: ShopSettingsView;
  warnings: SettingsWarning[];
  /** Set when the watermark changed and a re-make of the previews began. */
  rebuild: RebuildProgress | null;
}

/** What the settings page hands its form. */
export interface StudioSettings {
  settings: ShopSettingsView;
  tiers: LicenceTierView[];
  papers: PaperView[];
  sizes: PrintSizeView[];
  rebuild: RebuildProgress;
  /** How many works a new watermark re-makes. */
  workCount: number;
}

/** The answer to a delete: removed, or kept but set inactive because something refers to it. */
export type DeleteOutcome<T> = { deleted: true; message: string } | { deleted: false; deactivated: true; message: string; item: T };

/** The warning shown before (form) and after (API) a currency change: amounts are not converted. */
export function currencyChangeWarning(from: string, to: string): string {
  return `Prices are stored as whole minor units of the currency and are not converted: a price that reads ${formatMoney(12500, from)} now will read ${formatMoney(12500, to)} in ${to}. Check every price after the change.`;
}
