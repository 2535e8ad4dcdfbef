import { describe, expect, it } from 'vitest';
import { checkoutInput, countryCodes, freeEditionNumbers, isCountryCode, licenceEndDate, shippingCost, vatIncluded, zoneFor } from '../../src/lib/checkout';

describe('VAT included in a price', () => {
  it('takes the VAT fraction 1/6 out of a 20 % VAT-inclusive price', () => {
    // HMRC VAT Notice 700: at the 20 % standard rate the VAT fraction is 1/6 (from memory)
    expect(vatIncluded(12000, 2000)).toBe(2000);
    expect(vatIncluded(6900, 2000)).toBe(1150);
    // rounding to the nearest penny: 1/6 of 1001 = 166.83
    expect(vatIncluded(1001, 2000)).toBe(167);
    expect(vatIncluded(5000, 0)).toBe(0);
  });
});

describe('shipping by zone', () => {
  const zones = [
    { name: 'UK', countries: ['GB'], firstPrint: 900, eachFurtherPrint: 300 },
    { name: 'World', countries: ['*'], firstPrint: 2500, eachFurtherPrint: 800 },
  ];
  it('finds the zone naming the country, else the catch-all', () => {
    expect(zoneFor(zones, 'GB')?.name).toBe('UK'); // business rule (PRODUCT.md: shipping by zone)
    expect(zoneFor(zones, 'JP')?.name).toBe('World');
    expect(zoneFor(zones.slice(0, 1), 'JP')).toBeNull();
  });
  it('charges the first print in full and each further one at the lower rate', () => {
    expect(shippingCost(zones[0]!, 0)).toBe(0);
    expect(shippingCost(zones[0]!, 1)).toBe(900);
    expect(shippingCost(zones[0]!, 3)).toBe(1500);
  });
});

describe('edition numbers', () => {
  it('issues the next number after those sold (TRADE-FACTS §8 check values)', () => {
    expect(freeEditionNumbers([1, 2, 3, 4, 5, 6, 7], 25, 1)).toEqual([8]); // next after 7/25 is 8/25
  });
  it('refuses a sale beyond N (TRADE-FACTS §8: N=10 sold 10 → rejected)', () => {
    expect(freeEditionNumbers([1, 2, 3, 4, 5, 6, 7, 8, 9, 10], 10, 1)).toBeNull();
    expect(freeEditionNumbers([1, 2, 3], 5, 3)).toBeNull();
  });
  it('issues a number returned to the edition before higher ones', () => {
    expect(freeEditionNumbers([1, 3, 4], 5, 2)).toEqual([2, 5]);
  });
});

describe('licence dates', () => {
  it('runs to the day before the anniversary', () => {
    // common practice: a 12-month term from 1 March ends on the last day of February
    expect(licenceEndDate('2026-03-01', 12)).toBe('2027-02-28');
    expect(licenceEndDate('2026-12-01', 24)).toBe('2028-11-30');
    expect(licenceEndDate('2026-01-15', 1)).toBe('2026-02-14');
  });
});

describe('checkout form', () => {
  const licence = { kind: 'licence' as const, workId: 1, tierId: 1 };
  const print = { kind: 'print' as const, offerId: 1, mode: 'fill' as const, quantity: 1 };
  const address = { name: 'A Collector', line1: '1 Quay Street', city: 'Leith', postalCode: 'EH6 6AA', country: 'gb' };
  it('needs a licensee for licences and an address for prints', () => {
    const missing = checkoutInput.safeParse({ lines: [licence, print] });
    expect(missing.success).toBe(false);
    const paths = missing.success ? [] : missing.error.issues.map((i) => i.path.join('.'));
    expect(paths).toEqual(expect.arrayContaining(['licensee', 'shipping']));
    const ok = checkoutInput.safeParse({ lines: [licence, print], licensee: { name: 'Desk', intendedUse: 'A feature on glass' }, shipping: address });
    expect(ok.success).toBe(true);
    expect(ok.success && ok.data.shipping?.country).toBe('GB');
  });
  it('accepts ISO 3166-1 alpha-2 countries only', () => {
    expect(isCountryCode('GB')).toBe(true); // ISO 3166-1
    expect(isCountryCode('DE')).toBe(true);
    expect(isCountryCode('UK')).toBe(false); // exceptionally reserved, not assigned (from memory)
    expect(isCountryCode('EU')).toBe(false); // a union, not a country
    expect(isCountryCode('QQ')).toBe(false);
    expect(isCountryCode('BU')).toBe(false); // Burma's withdrawn code; ISO 3166-1 now uses MM
    // ISO 3166-1 lists 249 officially assigned alpha-2 codes (from memory); ICU adds Kosovo (XK)
    expect(countryCodes().length).toBeGreaterThanOrEqual(249);
    expect(countryCodes().length).toBeLessThanOrEqual(250);
    expect(checkoutInput.safeParse({ lines: [print], shipping: { ...address, country: 'ZZ' } }).success).toBe(false);
  });
});
