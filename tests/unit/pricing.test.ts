import { describe, it, expect } from 'vitest';
import { licencePrice, printPrice, lineSubtotal } from '../../src/lib/pricing';

// These are the shop's own business rules, not published facts: prices are integers in minor units,
// recomputed on the server (PRODUCT.md); tier defaults, work overrides and withdrawal are shop settings.

describe('licencePrice', () => {
  it('uses the tier default when the work has no rule', () => {
    expect(licencePrice(15000)).toBe(15000); // business rule (PRODUCT.md)
    expect(licencePrice(15000, { mode: 'default' })).toBe(15000); // business rule (PRODUCT.md)
  });

  it("uses the work's override instead of the tier default", () => {
    expect(licencePrice(15000, { mode: 'override', price: 42000 })).toBe(42000); // business rule (PRODUCT.md)
    expect(licencePrice(15000, { mode: 'override', price: 9000 })).toBe(9000); // business rule (PRODUCT.md)
  });

  it('returns null when the tier is withdrawn for the work', () => {
    expect(licencePrice(15000, { mode: 'withdrawn' })).toBeNull(); // business rule (PRODUCT.md)
  });

  it('rejects prices that are not integer minor units', () => {
    expect(() => licencePrice(150.5)).toThrow(TypeError); // business rule (PRODUCT.md: integer minor units)
    expect(() => licencePrice(15000, { mode: 'override', price: 99.99 })).toThrow(TypeError); // business rule (PRODUCT.md)
  });
});

describe('printPrice', () => {
  it('is the size base price when there is no surcharge or premium', () => {
    expect(printPrice({ sizeBasePrice: 8000, paperSurchargeBp: 0, editionPremiumBp: 0 })).toBe(8000); // business rule (PRODUCT.md)
  });

  it('compounds the paper surcharge, then the edition premium', () => {
    // business rule (PRODUCT.md; composition as documented in pricing.ts): 10000 × 1.25 = 12500; × 1.5 = 18750
    expect(printPrice({ sizeBasePrice: 10000, paperSurchargeBp: 2500, editionPremiumBp: 5000 })).toBe(18750);
    // compounding, not adding: an additive rule would give 10000 × (1 + 0.25 + 0.5) = 17500
    expect(printPrice({ sizeBasePrice: 10000, paperSurchargeBp: 2500, editionPremiumBp: 5000 })).not.toBe(17500);
  });

  it('rounds each step to whole minor units', () => {
    // business rule (PRODUCT.md: integer minor units): 999 + 249.75→250 = 1249; 1249 + 124.9→125 = 1374
    expect(printPrice({ sizeBasePrice: 999, paperSurchargeBp: 2500, editionPremiumBp: 1000 })).toBe(1374);
  });

  it("an override replaces the computed price, whatever the surcharges", () => {
    const parts = { sizeBasePrice: 10000, paperSurchargeBp: 2500, editionPremiumBp: 5000 };
    expect(printPrice({ ...parts, override: 22000 })).toBe(22000); // business rule (PRODUCT.md)
    expect(printPrice({ ...parts, override: 0 })).toBe(0); // business rule: 0 is a real override, not "unset"
  });

  it('a null or missing override falls back to the computed price', () => {
    const parts = { sizeBasePrice: 10000, paperSurchargeBp: 2500, editionPremiumBp: 0 };
    expect(printPrice({ ...parts, override: null })).toBe(12500); // business rule (PRODUCT.md)
    expect(printPrice({ ...parts, override: undefined })).toBe(12500); // business rule (PRODUCT.md)
  });

  it('rejects non-integer prices', () => {
    expect(() => printPrice({ sizeBasePrice: 100.5, paperSurchargeBp: 0, editionPremiumBp: 0 })).toThrow(TypeError); // business rule (PRODUCT.md)
    expect(() =>
      printPrice({ sizeBasePrice: 10000, paperSurchargeBp: 0, editionPremiumBp: 0, override: 199.99 }),
    ).toThrow(TypeError); // business rule (PRODUCT.md)
  });
});

describe('lineSubtotal', () => {
  it('multiplies the unit price by the quantity', () => {
    expect(lineSubtotal({ unitPrice: 18750, quantity: 2 })).toBe(37500); // business rule (PRODUCT.md)
    expect(lineSubtotal({ unitPrice: 18750, quantity: 1 })).toBe(18750); // business rule (PRODUCT.md)
  });

  it.each([0, -1, 1.5, 0.5, Number.NaN, Number.POSITIVE_INFINITY])('rejects quantity %d', (quantity) => {
    expect(() => lineSubtotal({ unitPrice: 18750, quantity })).toThrow(RangeError); // business rule (PRODUCT.md)
  });

  it('rejects a non-integer unit price', () => {
    expect(() => lineSubtotal({ unitPrice: 187.5, quantity: 2 })).toThrow(TypeError); // business rule (PRODUCT.md)
  });
});
