/**
 * What the Studio sends: work details, licence prices, print offers and bulk actions.
 * Isomorphic zod schemas, used by the editor's forms and by the Studio API alike.
 */
import { z } from 'zod';
import type { Grade, GradeThresholds, LengthUnit } from './print-grade';
import type { PictureData } from './media';

// ---------------------------------------------------------------------------------------------
// Property release

/** PLUS PropertyReleaseStatus codes (TRADE-FACTS §7.3): none, not applicable, unlimited, limited. */
export const PROPERTY_RELEASE_STATUSES = ['PR-NON', 'PR-NAP', 'PR-UPR', 'PR-LPR'] as const;
export type PropertyReleaseStatus = (typeof PROPERTY_RELEASE_STATUSES)[number];

/** Our own words for each code, as the Studio shows them. */
export const PROPERTY_RELEASE_LABEL: Record<PropertyReleaseStatus, string> = {
  'PR-NON': 'No release (owned or branded property in frame)',
  'PR-NAP': 'Not needed (natural or generic subject)',
  'PR-UPR': 'Release on file, no limits',
  'PR-LPR': 'Release on file, with limits',
};

export function isPropertyReleaseStatus(value: unknown): value is PropertyReleaseStatus {
  return typeof value === 'string' && (PROPERTY_RELEASE_STATUSES as readonly string[]).includes(value);
}

/**
 * Business rule (PRODUCT.md): without a release (PR-NON) commercial licence tiers are withdrawn.
 * A stored value outside the vocabulary is read as no release.
 */
export function commercialAllowed(status: string): boolean {
  return isPropertyReleaseStatus(status) && status !== 'PR-NON';
}

// ---------------------------------------------------------------------------------------------
// Work details

export const MAX_KEYWORDS = 30;
export const MAX_KEYWORD_LENGTH = 40;

const keyword = z
  .string()
  .trim()
  .toLowerCase()
  .min(1, 'A keyword cannot be empty.')
  .max(MAX_KEYWORD_LENGTH, `A keyword has at most ${MAX_KEYWORD_LENGTH} characters.`)
  .regex(/^[\p{L}\p{N}]+(?:[ '’-][\p{L}\p{N}]+)*$/u, 'Use letters and numbers, with single spaces, hyphens or apostrophes between words.');

export const focalPoint = z.object({
  x: z.number().min(0, 'The focal point must lie inside the picture.').max(1, 'The focal point must lie inside the picture.'),
  y: z.number().min(0, 'The focal point must lie inside the picture.').max(1, 'The focal point must lie inside the picture.'),
});
export type FocalPointInput = z.infer<typeof focalPoint>;

const positiveId = z.number().int().positive();

export const workDetailsInput = z.object({
  title: z.string().trim().min(1, 'Give the work a title.').max(120, 'A title has at most 120 characters.'),
  caption: z.string().trim().max(2000, 'A caption has at most 2000 characters.'),
  altText: z.string().trim().max(500, 'Alt text has at most 500 characters.'),
  keywords: z
    .array(keyword)
    .max(MAX_KEYWORDS, `At most ${MAX_KEYWORDS} keywords.`)
    .superRefine((words, ctx) => {
      const seen = new Set<string>();
      words.forEach((w, i) => {
        if (seen.has(w)) ctx.addIssue({ code: 'custom', path: [i], message: `“${w}” appears twice.` });
        seen.add(w);
      });
    }),
  seriesId: positiveId.nullable(),
  focal: focalPoint,
  propertyRelease: z.enum(PROPERTY_RELEASE_STATUSES, 'Choose a property release status.'),
});
export type WorkDetailsInput = z.infer<typeof workDetailsInput>;
/** What the details form holds before validation. */
export type WorkDetailsFormValues = z.input<typeof workDetailsInput>;

/** PATCH body: any subset of the details, at least one. */
export const workDetailsPatch = workDetailsInput
  .partial()
  .refine((value) => Object.values(value).some((v) => v !== undefined), 'Send at least one field to change.');
export type WorkDetailsPatch = z.infer<typeof workDetailsPatch>;

/** Splits what was typed into a keywords box ("pear, Slate ,  linen") into the list the schema checks. */
export function splitKeywords(text: string): string[] {
  return text
    .split(/[,;\n]/)
    .map((w) => w.trim().replace(/\s+/g, ' ').toLowerCase())
    .filter(Boolean);
}

// ---------------------------------------------------------------------------------------------
// Licence prices

export const LICENCE_PRICE_MODES = ['default', 'override', 'withdrawn'] as const;
export type LicencePriceMode = (typeof LICENCE_PRICE_MODES)[number];

export const licenceTierPriceInput = z
  .object({
    tierId: positiveId,
    mode: z.enum(LICENCE_PRICE_MODES),
    /** Minor units; read only when mode is `override`. */
    price: z.number().int('Prices are whole minor units.').min(0, 'A price cannot be negative.').nullable().optional(),
  })
  .superRefine((value, ctx) => {
    if (value.mode === 'override' && value.price == null) {
      ctx.addIssue({ code: 'custom', path: ['price'], message: 'Enter the work’s own price.' });
    }
  });
export type LicenceTierPriceInput = z.infer<typeof licenceTierPriceInput>;

export const licencePricesInput = z.object({
  tiers: z
    .array(licenceTierPriceInput)
    .min(1, 'Send at least one licence tier.')
    .max(50)
    .superRefine((tiers, ctx) => {
      const seen = new Set<number>();
      tiers.forEach((t, i) => {
        if (seen.has(t.tierId)) ctx.addIssue({ code: 'custom', path: [i, 'tierId'], message: 'This tier appears twice.' });
        seen.add(t.tierId);
      });
    }),
});
export type LicencePricesInput = z.infer<typeof licencePricesInput>;

// ---------------------------------------------------------------------------------------------
// Print offers and editions

/**
 * Common practice (TRADE-FACTS §8.2): artist's proofs are kept to at most 10 % of the edition,
 * rounded down — 2 for an edition of 25, none for an edition under 10.
 */
export function maxArtistProofs(total: number): number {
  return Math.floor(total / 10);
}

export const editionInput = z
  .object({
    kind: z.enum(['open', 'limited']),
    /** N; required for a limited edition, ignored for an open one. */
    total: z.number().int('N is a whole number.').min(1, 'A limited edition has at least 1 print.').max(100000).nullable(),
    artistProofs: z.number().int('Artist’s proofs are a whole number.').min(0, 'Artist’s proofs cannot be negative.'),
  })
  .superRefine((e, ctx) => {
    if (e.kind === 'limited') {
      if (e.total == null) {
        ctx.addIssue({ code: 'custom', path: ['total'], message: 'A limited edition needs its size N.' });
      } else if (e.artistProofs > maxArtistProofs(e.total)) {
        ctx.addIssue({
          code: 'custom',
          path: ['artistProofs'],
          message: `At most ${maxArtistProofs(e.total)} artist’s proofs for an edition of ${e.total} (10 % of N, rounded down).`,
        });
      }
    } else if (e.artistProofs > 0) {
      ctx.addIssue({ code: 'custom', path: ['artistProofs'], message: 'Artist’s proofs belong to a limited edition; an open edition has none.' });
    }
  });
export type EditionInput = z.infer<typeof editionInput>;

export const sizeOfferInput = z
  .object({
    sizeId: positiveId,
    offered: z.boolean(),
    papers: z.array(positiveId).max(20),
    edition: editionInput,
    /** The photographer's consent to sell this size when a buyer may get a Wall-grade print. */
    acceptWall: z.boolean(),
    /** The work's own price on some papers (minor units); the others are priced from size, paper and edition. */
    priceOverrides: z
      .array(z.object({ paperId: positiveId, price: z.number().int('Prices are whole minor units.').min(0, 'A price cannot be negative.') }))
      .max(20)
      .optional(),
  })
  .superRefine((s, ctx) => {
    if (s.offered && s.papers.length === 0) ctx.addIssue({ code: 'custom', path: ['papers'], message: 'Choose at least one paper.' });
    if (new Set(s.papers).size !== s.papers.length) ctx.addIssue({ code: 'custom', path: ['papers'], message: 'A paper appears twice.' });
    const seen = new Set<number>();
    (s.priceOverrides ?? []).forEach((o, i) => {
      if (!s.papers.includes(o.paperId)) ctx.addIssue({ code: 'custom', path: ['priceOverrides', i, 'paperId'], message: 'This paper is not chosen for the size.' });
      if (seen.has(o.paperId)) ctx.addIssue({ code: 'custom', path: ['priceOverrides', i, 'paperId'], message: 'This paper has two prices.' });
      seen.add(o.paperId);
    });
  });
export type SizeOfferInput = z.infer<typeof sizeOfferInput>;

export const printOffersInput = z.object({
  sizes: z
    .array(sizeOfferInput)
    .min(1, 'Send at least one size.')
    .max(50)
    .superRefine((sizes, ctx) => {
      const seen = new Set<number>();
      sizes.forEach((s, i) => {
        if (seen.has(s.sizeId)) ctx.addIssue({ code: 'custom', path: [i, 'sizeId'], message: 'This size appears twice.' });
        seen.add(s.sizeId);
      });
    }),
});
export type PrintOffersInput = z.infer<typeof printOffersInput>;

// ---------------------------------------------------------------------------------------------
// Publishing and bulk actions

export const publishInput = z.object({ publish: z.boolean() });
export type PublishInput = z.infer<typeof publishInput>;

export const MAX_BULK = 200;
export const BULK_ACTIONS = ['publish', 'unpublish', 'assign-series'] as const;
export type BulkAction = (typeof BULK_ACTIONS)[number];

export const bulkInput = z
  .object({
    ids: z
      .array(positiveId)
      .min(1, 'Choose at least one work.')
      .max(MAX_BULK, `At most ${MAX_BULK} works at a time.`)
      .refine((ids) => new Set(ids).size === ids.length, 'A work appears twice.'),
    action: z.enum(BULK_ACTIONS),
    /** For `assign-series`: the series, or null to take the works out of their series. */
    seriesId: positiveId.nullable().optional(),
  })
  .superRefine((b, ctx) => {
    if (b.action === 'assign-series' && b.seriesId === undefined) {
      ctx.addIssue({ code: 'custom', path: ['seriesId'], message: 'Choose a series (or none).' });
    }
  });
export type BulkInput = z.infer<typeof bulkInput>;

// ---------------------------------------------------------------------------------------------
// The works list

export const WORK_SORTS = ['title', 'status', 'series', 'offers', 'sales', 'updated'] as const;
export type WorkSort = (typeof WORK_SORTS)[number];
export const WORK_STATUS_FILTERS = ['all', 'draft', 'published'] as const;

/** Query string of GET /api/studio/works; empty parameters count as absent. */
export const worksListQuery = z.object({
  sort: z.enum(WORK_SORTS).default('updated'),
  dir: z.enum(['asc', 'desc']).default('desc'),
  status: z.enum(WORK_STATUS_FILTERS).default('all'),
  /** A series id, or `none` for works outside any series. */
  series: z.union([z.literal('none'), z.coerce.number().int().positive()]).optional(),
  q: z.string().trim().max(200).optional(),
});
export type WorksListQuery = z.infer<typeof worksListQuery>;

// ---------------------------------------------------------------------------------------------
// Pure rules the editor and the server share

/**
 * The lowest grade a buyer can order at a size: the cropped print (fill) when the file holds it,
 * otherwise the bordered one (fit), which always has at least the fill's ppi.
 */
export function lowestSaleGrade(fill: Grade, fit: Grade): Grade {
  return fill !== 'too-small' ? fill : fit;
}

// ---------------------------------------------------------------------------------------------
// What the Studio API answers with (plain, serialisable objects)

export interface GradeSummary { grade: Grade; ppi: number }
export interface SeriesChoice { id: number; title: string }

export interface StudioSize {
  sizeId: number;
  slug: string;
  label: string;
  unit: LengthUnit;
  width: number;
  height: number;
  basePrice: number;
  fill: GradeSummary;
  fit: GradeSummary;
  /** The lowest grade a buyer could order here (see `lowestSaleGrade`). */
  saleGrade: Grade;
  /** False when even the whole picture with a border is Too small. */
  offerable: boolean;
  /** The stored edition, with `fixed` true once the work has been published with it. */
  edition: { kind: 'open' | 'limited'; total: number | null; artistProofs: number; fixed: boolean } | null;
  /** The current choices, in the shape the offers form sends back. */
  offer: SizeOfferInput;
}

export interface StudioLicence {
  tierId: number;
  slug: string;
  name: string;
  use: 'editorial' | 'commercial';
  summary: string;
  defaultPrice: number;
  mode: LicencePriceMode;
  price: number | null;
  /** True while the work's release status keeps this (commercial) tier withdrawn. */
  locked: boolean;
}

export interface StudioPaper { paperId: number; name: string; surface: string; weightGsm: number; surchargeBp: number }

export interface StudioWorkEditor {
  work: {
    id: number;
    slug: string;
    status: 'draft' | 'published';
    publishedAt: string | null;
    updatedAt: string;
    width: number;
    height: number;
    picture: PictureData;
    sales: number;
  };
  details: WorkDetailsInput;
  series: SeriesChoice[];
  licences: StudioLicence[];
  papers: StudioPaper[];
  sizes: StudioSize[];
  shop: { currency: string; thresholds: GradeThresholds; limitedEditionPremiumBp: number };
  publish: { canPublish: boolean; reasons: string[] };
}

/** Every successful write on one work answers with a sentence and the fresh editor data. */
export interface StudioSaveAnswer { message: string; editor: StudioWorkEditor }

export interface StudioWorkRow {
  id: number;
  slug: string;
  title: string;
  status: 'draft' | 'published';
  publishedAt: string | null;
  updatedAt: string;
  series: SeriesChoice | null;
  thumb: { src: string; width: number; height: number; alt: string };
  hasAltText: boolean;
  offers: number;
  sales: number;
}

export interface StudioWorksList { works: StudioWorkRow[]; series: SeriesChoice[] }

export type BulkOutcome =
  | 'published' | 'already-published' | 'needs-alt-text'
  | 'unpublished' | 'already-draft'
  | 'assigned' | 'not-found';

export interface BulkRowResult { id: number; title: string | null; ok: boolean; outcome: BulkOutcome; message: string }
export interface BulkAnswer { action: BulkAction; results: BulkRowResult[]; summary: string }
