/** Checkout rules that need no I/O: the form, shipping by zone, VAT included in prices, edition numbers, licence dates. */
import { z } from 'zod';
import { quoteRequest } from './cart';

/**
 * Codes ICU names as regions that are not ISO 3166-1 countries: groupings (EU, EZ, UN, QO, ZZ),
 * pseudo-locales (XA, XB) and exceptionally reserved codes (UK, AC, CP, CQ, DG, EA, IC, TA).
 */
const NOT_COUNTRIES = new Set(['EU', 'EZ', 'UN', 'QO', 'ZZ', 'XA', 'XB', 'UK', 'AC', 'CP', 'CQ', 'DG', 'EA', 'IC', 'TA']);
const regionNames = new Intl.DisplayNames(['en'], { type: 'region' });

function canonicalRegion(code: string): string | null {
  try {
    return Intl.getCanonicalLocales(`und-${code}`)[0]!.split('-')[1] ?? null;
  } catch {
    return null;
  }
}

/** True for a two-letter code that names a country: ICU's region data (Intl.DisplayNames), aliases such as BU → MM excluded. */
export function isCountryCode(code: string): boolean {
  if (!/^[A-Z]{2}$/.test(code) || NOT_COUNTRIES.has(code)) return false;
  const name = regionNames.of(code);
  return Boolean(name) && name !== code && canonicalRegion(code) === code;
}

/** Every country code, for the shipping form's list (sorted by English name). */
export function countryCodes(): string[] {
  const codes: string[] = [];
  for (let a = 65; a <= 90; a++) for (let b = 65; b <= 90; b++) {
    const code = String.fromCharCode(a, b);
    if (isCountryCode(code)) codes.push(code);
  }
  return codes.sort((x, y) => countryName(x).localeCompare(countryName(y), 'en'));
}

export function countryName(code: string): string {
  return regionNames.of(code) ?? code;
}

const text = (max: number) => z.string().trim().min(1, { message: 'Required.' }).max(max);

export const shippingAddressInput = z.object({
  name: text(120),
  line1: text(200),
  line2: z.string().trim().max(200).optional().default(''),
  city: text(120),
  postalCode: z.string().trim().min(2, { message: 'Required.' }).max(20).regex(/^[A-Za-z0-9][A-Za-z0-9 -]*$/, { message: 'Letters, digits, spaces and hyphens only.' }),
  country: z.string().trim().toUpperCase().refine(isCountryCode, { message: 'Choose a country.' }),
});
export type ShippingAddress = z.infer<typeof shippingAddressInput>;

export const licenseeInput = z.object({
  name: text(120),
  organisation: z.string().trim().max(160).optional().default(''),
  intendedUse: text(1000),
});
export type Licensee = z.infer<typeof licenseeInput>;

export const checkoutInput = quoteRequest.extend({
  licensee: licenseeInput.optional(),
  shipping: shippingAddressInput.optional(),
}).superRefine((v, ctx) => {
  if (v.lines.length === 0) ctx.addIssue({ code: 'custom', path: ['lines'], message: 'The cart is empty.' });
  if (v.lines.some((l) => l.kind === 'licence') && !v.licensee) {
    ctx.addIssue({ code: 'custom', path: ['licensee'], message: 'Name the licensee and the intended use.' });
  }
  if (v.lines.some((l) => l.kind === 'print') && !v.shipping) {
    ctx.addIssue({ code: 'custom', path: ['shipping'], message: 'A shipping address is needed for prints.' });
  }
});
export type CheckoutInput = z.infer<typeof checkoutInput>;

export interface ShippingZone { name: string; countries: string[]; firstPrint: number; eachFurtherPrint: number }

/** The zone that lists the country, else the catch-all zone ("*"), else null (the shop does not ship there). */
export function zoneFor(zones: readonly ShippingZone[], country: string): ShippingZone | null {
  return zones.find((z) => z.countries.includes(country)) ?? zones.find((z) => z.countries.includes('*')) ?? null;
}

/** Shipping for `prints` prints: the first at the zone's price, each further one at the lower rate. */
export function shippingCost(zone: ShippingZone, prints: number): number {
  if (!Number.isInteger(prints) || prints < 0) throw new RangeError('print count must be a whole number');
  return prints === 0 ? 0 : zone.firstPrint + (prints - 1) * zone.eachFurtherPrint;
}

/**
 * VAT contained in a VAT-inclusive amount: amount × r / (1 + r), rounded to the minor unit
 * (HMRC VAT Notice 700 §17: the VAT fraction for 20 % is 1/6).
 */
export function vatIncluded(amount: number, rateBp: number): number {
  if (!Number.isSafeInteger(amount) || !Number.isInteger(rateBp) || rateBp < 0) throw new RangeError('bad amount or rate');
  return Math.round((amount * rateBp) / (10000 + rateBp));
}

/** The lowest `count` numbers 1..total not yet taken: numbers returned to an edition are issued again first. */
export function freeEditionNumbers(taken: Iterable<number>, total: number, count: number): number[] | null {
  const used = new Set(taken);
  const free: number[] = [];
  for (let n = 1; n <= total && free.length < count; n++) if (!used.has(n)) free.push(n);
  return free.length === count ? free : null;
}

/**
 * A licence's last day: the day before the same calendar date `months` later (a 12-month licence from
 * 1 March runs to the last day of February). Month ends clamp: 31 Jan + 1 month ends on the last day of February − 1.
 */
export function licenceEndDate(startIso: string, months: number): string {
  const [y, m, d] = startIso.split('-').map(Number) as [number, number, number];
  const targetMonth = m - 1 + months;
  const year = y + Math.floor(targetMonth / 12);
  const month = ((targetMonth % 12) + 12) % 12;
  const lastDay = new Date(Date.UTC(year, month + 1, 0)).getUTCDate();
  const anniversary = new Date(Date.UTC(year, month, Math.min(d, lastDay)));
  anniversary.setUTCDate(anniversary.getUTCDate() - 1);
  return anniversary.toISOString().slice(0, 10);
}
