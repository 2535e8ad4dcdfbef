/**
 * Custom licence quotes, the pure part: the buyer's enquiry form, the Studio's answer, typed prices in
 * major units turned into exact minor units, expiry, and the words pages use. No I/O; shared by the
 * islands and the server so both check the same rules.
 */
import { z } from 'zod';
import { minorUnitDigits } from './money';

export const QUOTE_USES = ['editorial', 'commercial'] as const;
export type QuoteUse = (typeof QUOTE_USES)[number];

/** Exclusivity, as the trade scopes it (TRADE-FACTS §7.1): none, within one category of business, or full. */
export const EXCLUSIVITIES = ['none', 'category', 'full'] as const;
export type Exclusivity = (typeof EXCLUSIVITIES)[number];
export const EXCLUSIVITY_LABEL: Record<Exclusivity, string> = {
  none: 'Not exclusive',
  category: 'Exclusive within one category of business',
  full: 'Fully exclusive',
};
export const USE_LABEL: Record<QuoteUse, string> = { editorial: 'Editorial', commercial: 'Commercial' };

/** An account may have this many enquiries waiting for an answer at once. */
export const MAX_OPEN_ENQUIRIES = 5;
/** …and send at most this many in any 24 hours. */
export const MAX_ENQUIRIES_PER_DAY = 10;

export const DEFAULT_VALIDITY_DAYS = 14;
export const VALIDITY_DAYS = { min: 1, max: 90 } as const;
/** Longest fixed term a quote may name (50 years); longer is "no end date". */
export const MAX_TERM_MONTHS = 600;
/** Stripe takes amounts of up to 8 digits in the minor unit (TRADE-FACTS §3.3). */
export const MAX_PRICE_MINOR = 99_999_999;
/** Longest terms text: well inside what the licence certificate sets on one page (5,000 characters). */
export const MAX_TERMS_TEXT = 4000;

/** Quote ids: "SMQ-" then 24 base32 characters in groups of six (120 random bits). */
export const QUOTE_ID_PATTERN = /^SMQ-[A-Z2-9]{6}(?:-[A-Z2-9]{6}){3}$/;

const required = (label: string, max: number, missing = `${label} is required.`) =>
  z.string({ error: missing }).trim().min(1, { message: missing }).max(max, { message: `${label}: at most ${max} characters.` });
const optionalText = (label: string, max: number) =>
  z.string().trim().max(max, { message: `${label}: at most ${max} characters.` }).optional().default('');

const count = (label: string) =>
  z
    .number({ error: `${label} must be a whole number.` })
    .int({ message: `${label} must be a whole number.` })
    .min(1, { message: `${label} must be at least 1.` })
    .max(1_000_000_000, { message: `${label} is too large.` });

const termMonths = z
  .number({ error: 'Give the term in whole months, or choose no end date.' })
  .int({ message: 'Give the term in whole months.' })
  .min(1, { message: 'The term is at least 1 month.' })
  .max(MAX_TERM_MONTHS, { message: `At most ${MAX_TERM_MONTHS} months; for longer, choose no end date.` })
  .nullable();

// ------------------------------------------------------------------------------------- the enquiry

/** What a buyer sends from the work page. */
export const enquiryInput = z.object({
  workId: z.number({ error: 'Which work?' }).int().positive(),
  use: z.enum(QUOTE_USES, { error: 'Choose editorial or commercial use.' }),
  media: required('Media', 200, 'Say where the picture will appear.'),
  /** Print run or audience cap; null when the buyer does not know or it is open. */
  printRun: count('The print run or audience').nullable(),
  territory: required('Territory', 120, 'Name a country, a region, or say worldwide.'),
  /** Months, or null for no end date (perpetual). */
  termMonths,
  exclusivity: z.enum(EXCLUSIVITIES, { error: 'Choose the exclusivity you need.' }),
  licenseeName: required('The licensee’s name', 120, 'Name the licensee: the person or company who will use the picture.'),
  licenseeOrganisation: optionalText('Organisation', 120),
  message: required('The description of the use', 2000, 'Tell the studio a little about the use.'),
});
export type EnquiryInput = z.infer<typeof enquiryInput>;

// -------------------------------------------------------------------------------- major → minor

export type MinorResult = { ok: true; value: number } | { ok: false; message: string };

/**
 * A price typed in major units ("19.99", "1,250.50", "500") as an exact integer of the currency's minor
 * unit, by string arithmetic — never through binary floats (19.99 × 100 = 1998.999… in IEEE-754,
 * TRADE-FACTS §3.3). Digits come from ISO 4217 via Intl: GBP 2, JPY 0, KWD 3. Three-decimal
 * currencies are rounded to the nearest ten, half up, as Stripe requires (5.124 KWD → 5120).
 */
export function majorToMinor(text: string, currency: string): MinorResult {
  const cleaned = text.trim().replace(/(?<=\d),(?=\d{3}(?:\D|$))/g, '');
  const match = /^(\d{1,12})(?:\.(\d+))?$/.exec(cleaned);
  if (!match) return { ok: false, message: 'Type the price as a number, e.g. 450 or 450.00.' };
  const digits = minorUnitDigits(currency);
  const fraction = match[2] ?? '';
  if (fraction.length > digits) {
    return { ok: false, message: digits === 0 ? `${currency} has no minor unit: type a whole number.` : `${currency} has ${digits} digits after the point at most.` };
  }
  let value = Number(match[1]!.replace(/^0+(?=\d)/, '') + fraction.padEnd(digits, '0'));
  if (digits === 3) value = Math.floor((value + 5) / 10) * 10;
  if (!Number.isSafeInteger(value)) return { ok: false, message: 'That price is too large.' };
  if (value < 1) return { ok: false, message: 'The price must be more than zero.' };
  if (value > MAX_PRICE_MINOR) return { ok: false, message: 'That price is larger than the payment service accepts.' };
  return { ok: true, value };
}

/** Minor units back to the plain text the price box shows: (1999, 'GBP') → "19.99"; (500, 'JPY') → "500". */
export function minorToMajorText(amount: number, currency: string): string {
  const digits = minorUnitDigits(currency);
  if (digits === 0) return String(amount);
  const text = String(amount).padStart(digits + 1, '0');
  return `${text.slice(0, -digits)}.${text.slice(-digits)}`;
}

// --------------------------------------------------------------------------------- the answer

/** What the Studio sends back: terms, a price typed in the shop's currency, how long the offer stands. */
export function answerInput(currency: string) {
  return z
    .object({
      use: z.enum(QUOTE_USES, { error: 'Choose editorial or commercial use.' }),
      media: required('Media', 200),
      cap: count('The cap').nullable(),
      capUnit: z.string().trim().max(40, { message: 'Unit: at most 40 characters.' }).nullable(),
      territory: required('Territory', 120),
      termMonths,
      exclusivity: z.enum(EXCLUSIVITIES, { error: 'Choose the exclusivity.' }),
      terms: required('The terms', MAX_TERMS_TEXT, 'Write the terms in plain words; they go on the certificate.'),
      price: z.string({ error: 'Type the price.' }),
      validityDays: z
        .number({ error: 'Give the validity in whole days.' })
        .int({ message: 'Give the validity in whole days.' })
        .min(VALIDITY_DAYS.min, { message: `The offer stands for at least ${VALIDITY_DAYS.min} day.` })
        .max(VALIDITY_DAYS.max, { message: `The offer stands for at most ${VALIDITY_DAYS.max} days.` }),
      reply: optionalText('The reply', 2000),
    })
    .superRefine((v, ctx) => {
      const price = majorToMinor(v.price, currency);
      if (!price.ok) ctx.addIssue({ code: 'custom', path: ['price'], message: price.message });
      if (v.cap != null && !v.capUnit) ctx.addIssue({ code: 'custom', path: ['capUnit'], message: 'Say what the cap counts (copies, views…).' });
    })
    .transform((v) => ({ ...v, capUnit: v.cap == null ? null : v.capUnit, priceMinor: (majorToMinor(v.price, currency) as { value: number }).value }));
}
export type AnswerInput = z.input<ReturnType<typeof answerInput>>;
export type AnswerData = z.output<ReturnType<typeof answerInput>>;

export const declineInput = z.object({ reason: required('The reason', 1000, 'Give the buyer a reason.') });
export type DeclineInput = z.infer<typeof declineInput>;

// ------------------------------------------------------------------------------ states and words

export type QuoteStatus = 'requested' | 'quoted' | 'declined' | 'paid' | 'withdrawn';
/** A quote as people see it: "expired" is a quoted quote past its expiry. */
export type QuoteState = QuoteStatus | 'expired';

/** The offer ends `validityDays` × 24 h after it was made. */
export function quoteExpiry(answeredAt: Date, validityDays: number): Date {
  if (!Number.isInteger(validityDays) || validityDays < VALIDITY_DAYS.min || validityDays > VALIDITY_DAYS.max) throw new RangeError('validity out of range');
  return new Date(answeredAt.getTime() + validityDays * 86_400_000);
}

/** Expired at the instant of expiry, not a millisecond later: an offer "good until 12:00" is gone at 12:00. */
export function isExpired(expiresAt: Date | string | null, now: Date = new Date()): boolean {
  if (expiresAt == null) return false;
  return now.getTime() >= new Date(expiresAt).getTime();
}

export function quoteState(q: { status: string; expiresAt: Date | string | null }, now: Date = new Date()): QuoteState {
  const status = (['requested', 'quoted', 'declined', 'paid', 'withdrawn'] as const).find((s) => s === q.status) ?? 'withdrawn';
  return status === 'quoted' && isExpired(q.expiresAt, now) ? 'expired' : status;
}

export const STATE_LABEL: Record<QuoteState, string> = {
  requested: 'Waiting for the studio',
  quoted: 'Quoted',
  expired: 'Expired',
  declined: 'Declined',
  paid: 'Paid',
  withdrawn: 'Withdrawn',
};

/** Why a quote in this state cannot go in the cart; null when it can. */
export function notAddableReason(state: QuoteState, expiresAt?: Date | string | null): string | null {
  switch (state) {
    case 'quoted': return null;
    case 'requested': return 'The studio has not answered this enquiry yet.';
    case 'expired': return `This quote expired${expiresAt ? ` on ${formatDay(expiresAt)}` : ''}. Ask the studio for a new one from the work’s page.`;
    case 'declined': return 'The studio declined this enquiry.';
    case 'paid': return 'This quote has been paid for; the licence is in your account.';
    case 'withdrawn': return 'The studio withdrew this quote.';
  }
}

export function formatDay(value: Date | string): string {
  return new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'long', year: 'numeric', hour: '2-digit', minute: '2-digit', timeZone: 'UTC', timeZoneName: 'short' }).format(new Date(value));
}

/** The day only: "2 December 2026". */
export function formatDate(value: Date | string): string {
  return new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' }).format(new Date(value));
}

export function termText(months: number | null): string {
  if (months == null) return 'No end date';
  if (months % 12 === 0) return `${months / 12} ${months === 12 ? 'year' : 'years'}`;
  return `${months} ${months === 1 ? 'month' : 'months'}`;
}

/** The name a quoted licence carries on its certificate and check page, in place of a tier's. */
export function customLicenceName(exclusivity: Exclusivity): string {
  return exclusivity === 'none' ? 'Custom licence' : exclusivity === 'category' ? 'Custom licence, exclusive in its category' : 'Custom licence, fully exclusive';
}

export interface TermsForSummary {
  use: QuoteUse;
  media: string;
  cap: number | null;
  capUnit: string | null;
  territory: string;
  termMonths: number | null;
  exclusivity: Exclusivity;
}

/** One line for the cart and lists: "Commercial; Packaging; up to 50,000 copies; Europe; 2 years; not exclusive". */
export function termsSummary(t: TermsForSummary): string {
  const cap = t.cap == null ? 'no cap' : `up to ${t.cap.toLocaleString('en-GB')} ${t.capUnit ?? ''}`.trim();
  return [USE_LABEL[t.use], t.media, cap, t.territory, termText(t.termMonths), EXCLUSIVITY_LABEL[t.exclusivity].toLowerCase()].join('; ');
}

// ------------------------------------------------------------------------------- page objects

/** What the buyer asked for (stored as the quote's request). */
export interface EnquiryRequest {
  use: QuoteUse;
  media: string;
  printRun: number | null;
  territory: string;
  termMonths: number | null;
  exclusivity: Exclusivity;
  message: string;
}

/** The quoted terms: licence terms plus exclusivity, as the issued licence will carry them. */
export interface QuotedTermsView extends TermsForSummary {
  tierName: string;
  terms: string;
}

/** One quote as pages and islands receive it (plain, serialisable). */
export interface QuoteView {
  id: string;
  state: QuoteState;
  work: { id: number; slug: string; title: string; published: boolean; thumb: { src: string; width: number; height: number; alt: string } | null };
  email: string;
  licenseeName: string;
  licenseeOrganisation: string | null;
  request: EnquiryRequest;
  terms: QuotedTermsView | null;
  price: number | null;
  currency: string | null;
  reply: string | null;
  createdAt: string;
  answeredAt: string | null;
  expiresAt: string | null;
  orderNumber: string | null;
}
