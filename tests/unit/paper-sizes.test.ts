import { describe, it, expect } from 'vitest';
import { isoA, pixelsAt } from '../../src/lib/paper-sizes';

// Expected values are the published tables in TRADE-FACTS §2.1 (ISO 216 A series) and §2.2
// (common US photographic sizes), written out by hand.

describe('isoA — ISO 216 A series', () => {
  it.each([
    [0, 841, 1189], // ISO 216 (A-series table; TRADE-FACTS §2.1)
    [1, 594, 841], // ISO 216 (TRADE-FACTS §2.1)
    [2, 420, 594], // ISO 216 (TRADE-FACTS §2.1)
    [3, 297, 420], // ISO 216 (TRADE-FACTS §2.1)
    [4, 210, 297], // ISO 216 (TRADE-FACTS §2.1; check values §2)
    [5, 148, 210], // ISO 216 (TRADE-FACTS §2.1; check values §2)
    [6, 105, 148], // ISO 216 (TRADE-FACTS check values §2: A6 = 105×148)
  ])('A%d is %d × %d mm', (n, width, height) => {
    expect(isoA(n)).toEqual({ width, height });
  });

  it.each([
    [7, 74, 105], // from memory (ISO 216 A7)
    [8, 52, 74], // from memory (ISO 216 A8)
    [10, 26, 37], // from memory (ISO 216 A10)
  ])('A%d is %d × %d mm', (n, width, height) => {
    expect(isoA(n)).toEqual({ width, height });
  });

  it('A0 has an area of about one square metre', () => {
    const { width, height } = isoA(0);
    // ISO 216 definition: A0 area = 1 m² (TRADE-FACTS §2.1); 841 × 1189 = 999 949 mm² after rounding
    expect(Math.abs(width * height - 1_000_000) / 1_000_000).toBeLessThan(0.001);
  });

  it('every size keeps the 1:√2 ratio within millimetre rounding', () => {
    for (let n = 0; n <= 6; n++) {
      const { width, height } = isoA(n);
      // ISO 216 definition: aspect ratio 1:√2 (TRADE-FACTS §2.1); rounding to whole mm moves A6 by 0.33 %
      expect(Math.abs(height / width - Math.SQRT2) / Math.SQRT2).toBeLessThan(0.005);
      expect(height).toBeGreaterThan(width); // portrait width × height (module contract)
    }
  });

  it.each([-1, 11, 1.5, Number.NaN, Number.POSITIVE_INFINITY])('isoA(%d) throws RangeError', (n) => {
    expect(() => isoA(n)).toThrow(RangeError);
  });
});

describe('pixelsAt — mm via 25.4 mm per inch (TRADE-FACTS §2.1: px = round(mm / 25.4 × ppi))', () => {
  it('A4 at 300 ppi is 2480 × 3508 px', () => {
    expect(pixelsAt(210, 'mm', 300)).toBe(2480); // ISO 216 A4 + 25.4 mm/in, TRADE-FACTS §2.1 / check values §2
    expect(pixelsAt(297, 'mm', 300)).toBe(3508); // ISO 216 A4 + 25.4 mm/in, TRADE-FACTS §2.1 / check values §2
  });

  it('A4 at 240 ppi is 1984 × 2806 px', () => {
    expect(pixelsAt(210, 'mm', 240)).toBe(1984); // TRADE-FACTS §2.1 table
    expect(pixelsAt(297, 'mm', 240)).toBe(2806); // TRADE-FACTS §2.1 table
  });

  it.each([
    // [A-size, px@300 w, px@300 h, px@240 w, px@240 h] — TRADE-FACTS §2.1 table [VERIFIED]
    [0, 9933, 14043, 7946, 11235],
    [1, 7016, 9933, 5613, 7946],
    [2, 4961, 7016, 3969, 5613],
    [3, 3508, 4961, 2806, 3969],
    [4, 2480, 3508, 1984, 2806],
    [5, 1748, 2480, 1398, 1984],
  ])('A%d matches the TRADE-FACTS §2.1 pixel table', (n, w300, h300, w240, h240) => {
    const { width, height } = isoA(n);
    expect([pixelsAt(width, 'mm', 300), pixelsAt(height, 'mm', 300)]).toEqual([w300, h300]); // TRADE-FACTS §2.1
    expect([pixelsAt(width, 'mm', 240), pixelsAt(height, 'mm', 240)]).toEqual([w240, h240]); // TRADE-FACTS §2.1
  });
});

describe('pixelsAt — inch sizes (TRADE-FACTS §2.2 table, common practice sizes)', () => {
  it.each([
    [8, 10, 2400, 3000], // 8×10 @300, TRADE-FACTS §2.2
    [11, 14, 3300, 4200], // 11×14 @300, TRADE-FACTS §2.2
    [16, 20, 4800, 6000], // 16×20 @300, TRADE-FACTS §2.2
    [8.5, 11, 2550, 3300], // 8.5×11 (US Letter) @300, TRADE-FACTS §2.2
    [4, 6, 1200, 1800], // 4×6 @300, TRADE-FACTS §2.2
    [24, 36, 7200, 10800], // 24×36 @300, TRADE-FACTS §2.2
  ])('%d×%d in at 300 ppi is %d × %d px', (w, h, pw, ph) => {
    expect(pixelsAt(w, 'in', 300)).toBe(pw);
    expect(pixelsAt(h, 'in', 300)).toBe(ph);
  });

  it.each([
    [8, 10, 1920, 2400], // 8×10 @240, TRADE-FACTS §2.2
    [8.5, 11, 2040, 2640], // 8.5×11 @240, TRADE-FACTS §2.2
    [5, 7, 1200, 1680], // 5×7 @240, TRADE-FACTS §2.2
  ])('%d×%d in at 240 ppi is %d × %d px', (w, h, pw, ph) => {
    expect(pixelsAt(w, 'in', 240)).toBe(pw);
    expect(pixelsAt(h, 'in', 240)).toBe(ph);
  });
});
