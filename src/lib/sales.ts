/**
 * Studio → Sales, the pure half: calendar-month buckets (UTC), the month series with refunds netted,
 * edition sell-through, headline ratios, and the query schemas of the page and the CSV exports.
 * The numbers come from `lib/server/sales.ts`; nothing here does I/O.
 */
import { z } from 'zod';
import { minorUnitDigits } from './money';

/** Periods the page offers, in calendar months ending with the current one. */
export const SALES_PERIODS = [3, 6, 12] as const;
export type SalesPeriod = (typeof SALES_PERIODS)[number];
export const DEFAULT_PERIOD: SalesPeriod = 12;

/** The page's query: an unknown or missing period falls back to the default instead of failing the page. */
export const salesPageQuery = z.object({
  months: z.coerce
    .number()
    .refine((m): m is SalesPeriod => (SALES_PERIODS as readonly number[]).includes(m))
    .catch(DEFAULT_PERIOD),
});

/** An empty form field is no value: the export form sends `from=` when the day is left blank. */
const blankAsAbsent = (v: unknown) => (v === '' ? undefined : v);

/** The CSV exports' query: optional UTC days, `to` taking in the whole of its day. */
export const salesExportQuery = z
  .object({
    from: z.preprocess(blankAsAbsent, z.iso.date('Give the first day as YYYY-MM-DD.').optional()),
    to: z.preprocess(blankAsAbsent, z.iso.date('Give the last day as YYYY-MM-DD.').optional()),
  })
  .strict()
  .refine((q) => !q.from || !q.to || q.from <= q.to, { path: ['to'], message: 'The last day comes on or after the first day.' });
export type SalesExportQuery = z.infer<typeof salesExportQuery>;

const MONTH_KEY = /^(\d{4})-(0[1-9]|1[0-2])$/;

/** The UTC calendar month of an instant, as "YYYY-MM". */
export function monthKey(at: Date): string {
  return at.toISOString().slice(0, 7);
}

function parseMonth(key: string): { year: number; month: number } {
  const m = MONTH_KEY.exec(key);
  if (!m) throw new RangeError(`not a month key: ${key}`);
  return { year: Number(m[1]), month: Number(m[2]) - 1 };
}

/** The month `n` months after `key` (n may be negative), across year boundaries. */
export function addMonths(key: string, n: number): string {
  if (!Number.isInteger(n)) throw new RangeError('months must be a whole number');
  const { year, month } = parseMonth(key);
  const index = year * 12 + month + n;
  return `${String(Math.floor(index / 12)).padStart(4, '0')}-${String((index % 12) + 1).padStart(2, '0')}`;
}

/** The first instant of a month (UTC). */
export function monthStart(key: string): Date {
  const { year, month } = parseMonth(key);
  return new Date(Date.UTC(year, month, 1));
}

/** `count` consecutive months ending with the month of `now`, oldest first. */
export function lastMonths(now: Date, count: number): string[] {
  if (!Number.isInteger(count) || count < 1) throw new RangeError('count must be a positive whole number');
  const end = monthKey(now);
  return Array.from({ length: count }, (_, i) => addMonths(end, i - count + 1));
}

/** A month for a chart axis ("Jan 26"), a label ("Jan 2026") or a table ("January 2026"). */
export function monthLabel(key: string, style: 'axis' | 'short' | 'long' = 'short', locale = 'en-GB'): string {
  const options: Intl.DateTimeFormatOptions = style === 'axis' ? { month: 'short', year: '2-digit' } : { month: style, year: 'numeric' };
  return new Intl.DateTimeFormat(locale, { ...options, timeZone: 'UTC' }).format(monthStart(key));
}

/** Revenue of one month and kind, as the server sums it (minor units). */
export interface RevenueRow { month: string; licences: number; prints: number; shipping: number; orders: number }
/** Refunds settled in one month: the whole amount and what it was allocated to (minor units). */
export interface RefundRow { month: string; amount: number; licences: number; prints: number; shipping: number }

export interface MonthPoint {
  month: string;
  /** Gross revenue from licence lines, VAT included. */
  licences: number;
  /** Gross revenue from print lines, VAT included. */
  prints: number;
  /** licences + prints. */
  gross: number;
  /** Refunds of goods settled this month (everything refunded except shipping). */
  refunds: number;
  /** gross − refunds: may be negative in a month with little revenue and a large refund. */
  net: number;
  shipping: number;
  shippingRefunds: number;
  orders: number;
}

/**
 * One point per month in `months` (empty months are zero). Refunds net against goods: a refund's
 * shipping part is kept apart, and an amount not allocated to any line counts as goods.
 */
export function monthSeries(months: readonly string[], revenue: readonly RevenueRow[], refunds: readonly RefundRow[]): MonthPoint[] {
  const points = new Map<string, MonthPoint>(
    months.map((month) => [month, { month, licences: 0, prints: 0, gross: 0, refunds: 0, net: 0, shipping: 0, shippingRefunds: 0, orders: 0 }]),
  );
  for (const row of revenue) {
    const p = points.get(row.month);
    if (!p) continue;
    p.licences += row.licences;
    p.prints += row.prints;
    p.shipping += row.shipping;
    p.orders += row.orders;
  }
  for (const row of refunds) {
    const p = points.get(row.month);
    if (!p) continue;
    const shipping = Math.min(row.shipping, row.amount);
    p.shippingRefunds += shipping;
    p.refunds += row.amount - shipping;
  }
  for (const p of points.values()) {
    p.gross = p.licences + p.prints;
    p.net = p.gross - p.refunds;
  }
  return [...points.values()];
}

export interface PeriodTotals { gross: number; refunds: number; net: number; orders: number; shipping: number; shippingRefunds: number }

export function totals(points: readonly MonthPoint[]): PeriodTotals {
  const sum = (key: keyof PeriodTotals) => points.reduce((n, p) => n + p[key], 0);
  return { gross: sum('gross'), refunds: sum('refunds'), net: sum('net'), orders: sum('orders'), shipping: sum('shipping'), shippingRefunds: sum('shippingRefunds') };
}

/** Mean in whole minor units (half away from zero), or null with nothing to average. */
export function averageMinor(total: number, count: number): number | null {
  if (!Number.isSafeInteger(total) || !Number.isInteger(count) || count < 0) throw new RangeError('bad total or count');
  if (count === 0) return null;
  return Math.sign(total) * Math.round(Math.abs(total) / count) + 0;
}

/** Refunds as a share of gross revenue (0..n), or null when there was no revenue to refund against. */
export function refundRate(gross: number, refunded: number): number | null {
  if (gross < 0 || refunded < 0) throw new RangeError('amounts are not negative');
  return gross === 0 ? null : refunded / gross;
}

export interface SellThrough { sold: number; total: number; remaining: number; ratio: number }

/** How much of a limited edition of N has sold. Artist's proofs sit outside N and are not counted. */
export function sellThrough(sold: number, total: number): SellThrough {
  if (!Number.isInteger(total) || total < 1) throw new RangeError('an edition has N ≥ 1');
  if (!Number.isInteger(sold) || sold < 0 || sold > total) throw new RangeError(`sold must be 0..${total}`);
  return { sold, total, remaining: total - sold, ratio: sold / total };
}

/** "3/25" with the proofs noted beside it: "3/25 · 2 AP". */
export function editionLabel(sold: number, total: number, artistProofs: number): string {
  return `${sold}/${total}${artistProofs > 0 ? ` · ${artistProofs} AP` : ''}`;
}

/** A share as a whole-number percentage ("12 %"), or "—" when there is none. */
export function percentText(ratio: number | null, locale = 'en-GB'): string {
  if (ratio === null) return '—';
  return new Intl.NumberFormat(locale, { style: 'percent', maximumFractionDigits: ratio > 0 && ratio < 0.01 ? 1 : 0 }).format(ratio);
}

/** Chart axis ticks: whole major units, compact above a thousand ("£1.2K"), so the axis stays narrow. */
export function compactMoney(amount: number, currency: string, locale = 'en-GB'): string {
  return new Intl.NumberFormat(locale, { style: 'currency', currency, notation: 'compact', minimumFractionDigits: 0, maximumFractionDigits: 1 }).format(amount / 10 ** minorUnitDigits(currency));
}
