import { describe, expect, it } from 'vitest';
import {
  addMonths, averageMinor, editionLabel, lastMonths, monthKey, monthLabel, monthSeries, monthStart, percentText, refundRate,
  salesExportQuery, salesPageQuery, sellThrough, totals,
} from '../../src/lib/sales';

describe('calendar months (UTC)', () => {
  it('names the UTC month of an instant, whatever the offset it was written with', () => {
    // ISO 8601: 23:30 at UTC−02:00 on 31 January is 01:30 UTC on 1 February.
    expect(monthKey(new Date('2026-01-31T23:30:00-02:00'))).toBe('2026-02');
    // ISO 8601: 00:30 at UTC+01:00 on 1 March is 23:30 UTC on 28 February (2026 is not a leap year, Gregorian rule).
    expect(monthKey(new Date('2026-03-01T00:30:00+01:00'))).toBe('2026-02');
  });

  it('adds and subtracts months across year boundaries', () => {
    // Gregorian calendar: December is followed by January of the next year.
    expect(addMonths('2025-12', 1)).toBe('2026-01');
    expect(addMonths('2026-01', -1)).toBe('2025-12');
    expect(addMonths('2026-03', -15)).toBe('2024-12'); // 15 months = 1 year and 3 months
    expect(addMonths('2026-05', 0)).toBe('2026-05');
    expect(() => addMonths('2026-13', 1)).toThrow(RangeError); // ISO 8601 months run 01..12
    expect(() => addMonths('2026-01', 0.5)).toThrow(RangeError);
  });

  it('lists the last N months oldest first, ending with the current one, over a year boundary', () => {
    // Gregorian calendar: the three months ending February 2026 are December 2025, January and February 2026.
    expect(lastMonths(new Date('2026-02-15T12:00:00Z'), 3)).toEqual(['2025-12', '2026-01', '2026-02']);
    const twelve = lastMonths(new Date('2026-12-31T23:59:59Z'), 12);
    expect(twelve).toHaveLength(12);
    expect(twelve[0]).toBe('2026-01'); // a calendar year is January to December
    expect(twelve.at(-1)).toBe('2026-12');
    expect(() => lastMonths(new Date(), 0)).toThrow(RangeError);
  });

  it('starts a month at 00:00 UTC on its first day', () => {
    expect(monthStart('2024-02').toISOString()).toBe('2024-02-01T00:00:00.000Z'); // ISO 8601 extended format
  });

  it('labels months in British English', () => {
    // CLDR en-GB month names (Intl): abbreviated "Jan", wide "January".
    expect(monthLabel('2026-01')).toBe('Jan 2026');
    expect(monthLabel('2025-12', 'long')).toBe('December 2025');
    expect(monthLabel('2025-12', 'axis')).toBe('Dec 25'); // CLDR en-GB with a two-digit year
  });
});

describe('the month series', () => {
  const months = ['2025-11', '2025-12', '2026-01', '2026-02'];

  it('keeps every month of the period, empty ones as zero', () => {
    // Zero-filling gaps so a bar chart's axis has every period (common practice for time series).
    const points = monthSeries(months, [{ month: '2025-12', licences: 12000, prints: 7800, shipping: 900, orders: 2 }], []);
    expect(points.map((p) => p.month)).toEqual(months);
    expect(points[0]).toMatchObject({ licences: 0, prints: 0, gross: 0, refunds: 0, net: 0, orders: 0 });
    expect(points[2]).toMatchObject({ gross: 0, net: 0 });
    expect(points[1]).toMatchObject({ licences: 12000, prints: 7800, gross: 19800, shipping: 900, orders: 2 }); // 120.00 + 78.00
  });

  it('nets refunds against the goods of the month they settle in, shipping kept apart', () => {
    // Net sales = gross sales − returns and allowances (common practice in sales reporting); a refund is
    // counted when it is paid back (cash basis, common practice), not in the month of the sale.
    const points = monthSeries(
      months,
      [
        { month: '2025-12', licences: 45000, prints: 0, shipping: 0, orders: 1 },
        { month: '2026-01', licences: 0, prints: 9800, shipping: 1800, orders: 1 },
      ],
      [
        // A licence bought in December, refunded whole in January: goods 450.00.
        { month: '2026-01', amount: 45000, licences: 45000, prints: 0, shipping: 0 },
        // A print and its shipping refunded in February: 98.00 goods, 18.00 shipping.
        { month: '2026-02', amount: 11600, licences: 0, prints: 9800, shipping: 1800 },
      ],
    );
    expect(points[1]).toMatchObject({ gross: 45000, refunds: 0, net: 45000 });
    expect(points[2]).toMatchObject({ gross: 9800, refunds: 45000, net: 9800 - 45000 }); // a month can net below zero
    expect(points[3]).toMatchObject({ gross: 0, refunds: 9800, shippingRefunds: 1800, net: -9800 });
    expect(totals(points)).toEqual({ gross: 54800, refunds: 54800, net: 0, orders: 2, shipping: 1800, shippingRefunds: 1800 }); // every penny back
  });

  it('counts a refund not allocated to any line as goods, and ignores rows outside the period', () => {
    const points = monthSeries(
      months,
      [{ month: '2024-06', licences: 99999, prints: 0, shipping: 0, orders: 1 }],
      [{ month: '2026-02', amount: 2500, licences: 0, prints: 0, shipping: 0 }],
    );
    expect(totals(points).gross).toBe(0);
    expect(points[3]).toMatchObject({ refunds: 2500, shippingRefunds: 0 });
  });
});

describe('headline ratios', () => {
  it('averages in whole minor units, rounding half away from zero', () => {
    // Arithmetic: 100.00 + 50.01 over two orders is 75.005, which rounds half away from zero to 75.01
    // (the rounding money.ts uses throughout).
    expect(averageMinor(15001, 2)).toBe(7501);
    expect(averageMinor(10000, 3)).toBe(3333); // 33.333…
    expect(averageMinor(0, 0)).toBeNull();
    expect(() => averageMinor(100, -1)).toThrow(RangeError);
  });

  it('gives the refund rate as refunds over gross, or none without revenue', () => {
    expect(refundRate(200000, 10000)).toBe(0.05); // 100.00 of 2,000.00 is 5 % (arithmetic)
    expect(refundRate(0, 0)).toBeNull();
    expect(percentText(0.05)).toBe('5%'); // CLDR en-GB percent pattern (Intl)
    expect(percentText(0.004)).toBe('0.4%');
    expect(percentText(null)).toBe('—');
  });
});

describe('edition sell-through', () => {
  it('counts sold numbers against N only, proofs noted apart', () => {
    // TRADE-FACTS §8.2: numbered n/N with n = 1…N; artist's proofs are outside the count
    // (≤ 10 % of N, so 2 for an edition of 25).
    expect(sellThrough(3, 25)).toEqual({ sold: 3, total: 25, remaining: 22, ratio: 0.12 });
    expect(editionLabel(3, 25, 2)).toBe('3/25 · 2 AP');
    expect(editionLabel(0, 5, 0)).toBe('0/5'); // TRADE-FACTS §8.2: no proofs for five (10 % of 5 rounds down to 0)
  });

  it('is complete at N and refuses more than N', () => {
    // TRADE-FACTS §8 check values: an edition of 10 that sold 10 takes no further sale.
    expect(sellThrough(10, 10)).toMatchObject({ remaining: 0, ratio: 1 });
    expect(() => sellThrough(11, 10)).toThrow(RangeError);
    expect(() => sellThrough(1, 0)).toThrow(RangeError); // an edition has N ≥ 1 (PRODUCT.md)
  });
});

describe('query schemas', () => {
  it('keeps the period to 3, 6 or 12 months and falls back to 12', () => {
    expect(salesPageQuery.parse({ months: '6' })).toEqual({ months: 6 });
    expect(salesPageQuery.parse({ months: '7' })).toEqual({ months: 12 });
    expect(salesPageQuery.parse({})).toEqual({ months: 12 });
  });

  it('takes real calendar days for the exports, first day before last', () => {
    // Gregorian leap rule: 2028 is a leap year, 2026 is not.
    expect(salesExportQuery.safeParse({ from: '2028-02-29' }).success).toBe(true);
    expect(salesExportQuery.safeParse({ from: '2026-02-29' }).success).toBe(false);
    expect(salesExportQuery.safeParse({ to: '2026-04-31' }).success).toBe(false); // April has 30 days
    expect(salesExportQuery.safeParse({ from: '2026-03-01', to: '2026-03-01' }).success).toBe(true);
    const reversed = salesExportQuery.safeParse({ from: '2026-03-02', to: '2026-03-01' });
    expect(reversed.success).toBe(false);
    expect(reversed.error!.issues[0]!.path).toEqual(['to']);
    expect(salesExportQuery.safeParse({ form: '2026-03-01' }).success).toBe(false); // a misspelt name is not ignored
    expect(salesExportQuery.parse({ from: '', to: '' })).toEqual({}); // blank form fields mean no limit
  });
});
