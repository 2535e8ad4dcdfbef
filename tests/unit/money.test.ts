import { describe, it, expect } from 'vitest';
import { minorUnitDigits, formatMoney, applyBasisPoints, assertMinorUnits, sumMinor } from '../../src/lib/money';

// Minor units come from ISO 4217 as Intl (ICU/CLDR) exposes them, cross-checked against Stripe's
// currency list (TRADE-FACTS §3.3). Intl and Stripe disagree for a few currencies (e.g. HUF, ISK,
// TWD are "special cases" at Stripe, and Node 20's ICU gives HUF 0 digits where ISO 4217 lists 2),
// so those are deliberately NOT tested here: only currencies where both sources agree are.

describe('minorUnitDigits', () => {
  it.each([
    ['GBP', 2], // ISO 4217 minor units via Intl; Stripe two-decimal (TRADE-FACTS §3.3)
    ['EUR', 2], // ISO 4217 minor units via Intl; Stripe two-decimal
    ['USD', 2], // ISO 4217 minor units via Intl; Stripe "10 USD → amount=1000" (TRADE-FACTS §3.3)
    ['JPY', 0], // ISO 4217 minor units via Intl; Stripe zero-decimal list (TRADE-FACTS §3.3)
  ])('%s has %d digits', (currency, digits) => {
    expect(minorUnitDigits(currency)).toBe(digits);
  });

  it.each(['BIF', 'CLP', 'DJF', 'GNF', 'JPY', 'KMF', 'KRW', 'PYG', 'RWF', 'UGX', 'VND', 'VUV', 'XAF', 'XOF', 'XPF'])(
    '%s is zero-decimal',
    (currency) => {
      // Stripe zero-decimal list (TRADE-FACTS §3.3); Intl agrees for all of these.
      // MGA is on Stripe's list too but left out: ISO 4217 lists it with 2 digits (from memory).
      expect(minorUnitDigits(currency)).toBe(0);
    },
  );

  it.each(['BHD', 'JOD', 'KWD', 'OMR', 'TND'])('%s is three-decimal', (currency) => {
    expect(minorUnitDigits(currency)).toBe(3); // Stripe three-decimal list (TRADE-FACTS §3.3); ISO 4217 via Intl
  });

  it('is case-insensitive for ISO codes (Stripe wants lowercase in requests)', () => {
    expect(minorUnitDigits('jpy')).toBe(0); // ECMA-402: currency codes are matched case-insensitively
    expect(minorUnitDigits('usd')).toBe(2);
  });

  it('rejects a string that is not an ISO 4217 code shape', () => {
    expect(() => minorUnitDigits('US')).toThrow(RangeError); // ECMA-402: well-formed currency code is 3 letters
  });
});

describe('formatMoney', () => {
  it('1000 USD minor units is ten dollars', () => {
    // Stripe: "charge 10 USD → amount=1000" (TRADE-FACTS §3.3); en-US writes it "$10.00" (CLDR)
    expect(formatMoney(1000, 'USD', 'en-US')).toBe('$10.00');
  });

  it('1999 USD minor units is 19.99 dollars (no float drift)', () => {
    // TRADE-FACTS §3.3: minor units are integers; 19.99 must come back exactly
    expect(formatMoney(1999, 'USD', 'en-US')).toBe('$19.99');
  });

  it('500 JPY is five hundred yen, no fraction digits', () => {
    // Stripe: "charge ¥500 → amount=500" (zero-decimal, TRADE-FACTS §3.3)
    expect(formatMoney(500, 'JPY', 'en-US')).toBe('¥500');
    // ja-JP renders the yen sign as U+FFE5 (fullwidth) in ICU; accept either yen sign, require 500 and no decimals
    expect(formatMoney(500, 'JPY', 'ja-JP')).toMatch(/^[¥\uFFE5]500$/);
  });

  it('5120 KWD minor units is 5.120 dinars', () => {
    // Stripe: "5.124 KWD → 5120" (three-decimal, last digit 0; TRADE-FACTS §3.3)
    const text = formatMoney(5120, 'KWD', 'en-US');
    expect(text).toContain('5.120');
    expect(text).toContain('KWD');
  });

  it('defaults to British English', () => {
    // business rule (PRODUCT.md: amounts formatted with Intl); GBP has 2 digits per ISO 4217
    expect(formatMoney(12500, 'GBP')).toBe('£125.00');
  });

  it.each([10.5, 1998.9999999999998, Number.NaN, Number.POSITIVE_INFINITY, 2 ** 53])(
    'rejects %d, which is not a safe integer count of minor units',
    (amount) => {
      // business rule (PRODUCT.md: prices are integers in minor units);
      // 19.99 × 100 = 1998.9999999999998 in IEEE-754 (TRADE-FACTS §3.3) must not slip through
      expect(() => formatMoney(amount, 'USD', 'en-US')).toThrow(TypeError);
      expect(() => assertMinorUnits(amount)).toThrow(TypeError);
    },
  );
});

describe('applyBasisPoints — half away from zero', () => {
  it('25 % of 1000 is 250', () => {
    expect(applyBasisPoints(1000, 2500)).toBe(250); // 1 basis point = 0.01 % (definition)
  });

  it('rounds halves away from zero, unlike Math.round', () => {
    // business rule (money.ts contract): half away from zero.
    // ECMA-262 Math.round rounds ties toward +∞ (Math.round(-0.5) is -0), so negatives are the real test.
    expect(applyBasisPoints(1, 5000)).toBe(1); // 0.5 → 1
    expect(applyBasisPoints(-1, 5000)).toBe(-1); // −0.5 → −1
    expect(applyBasisPoints(3, 5000)).toBe(2); // 1.5 → 2
    expect(applyBasisPoints(-3, 5000)).toBe(-2); // −1.5 → −2
    expect(applyBasisPoints(5, 5000)).toBe(3); // 2.5 → 3 (banker's rounding would give 2)
    expect(applyBasisPoints(-5, 5000)).toBe(-3); // −2.5 → −3
    expect(applyBasisPoints(1000, -25)).toBe(-3); // −2.5 → −3 (negative rate)
  });

  it('rounds non-halves to the nearest unit', () => {
    expect(applyBasisPoints(1, 4999)).toBe(0); // 0.4999 → 0
    expect(applyBasisPoints(1, 5001)).toBe(1); // 0.5001 → 1
    expect(applyBasisPoints(-1, 5001)).toBe(-1); // −0.5001 → −1
    expect(applyBasisPoints(999, 2500)).toBe(250); // 249.75 → 250
  });

  it('never returns negative zero (Intl would print it as "-£0.00")', () => {
    // business rule (PRODUCT.md: amounts are integers formatted with Intl); Intl formats -0 with a minus sign
    expect(Object.is(applyBasisPoints(-1, 1), 0)).toBe(true); // −0.0001 → 0
    expect(Object.is(applyBasisPoints(0, -100), 0)).toBe(true);
    expect(formatMoney(applyBasisPoints(-1, 1), 'GBP')).toBe('£0.00');
  });

  it('rejects non-integer amounts and rates', () => {
    expect(() => applyBasisPoints(10.5, 100)).toThrow(TypeError); // business rule (PRODUCT.md: integer minor units)
    expect(() => applyBasisPoints(1000, 2.5)).toThrow(TypeError); // business rule (money.ts: whole basis points)
  });
});

describe('sumMinor', () => {
  it('adds integer minor units and rejects fractions', () => {
    expect(sumMinor([1999, 1, 8000])).toBe(10000); // arithmetic
    expect(sumMinor([])).toBe(0);
    expect(() => sumMinor([1000, 0.5])).toThrow(TypeError); // business rule (PRODUCT.md: integer minor units)
  });
});
