import { describe, expect, it } from 'vitest';
import {
  LAB_PPI_RANGE,
  fitPlacement,
  isTurned,
  labFileName,
  labPlan,
  labRefusal,
  labSheetPixels,
  needsLabPack,
} from '../../src/lib/lab-pack';
import { gradePrint } from '../../src/lib/print-grade';

// Expected numbers are the published tables in TRADE-FACTS §2 (ISO 216 A series; common inch sizes;
// the fill/fit worked examples), written out by hand, never recomputed with the module's formula.

const LANDSCAPE_3_2 = { width: 6000, height: 4000 }; // 3:2 file of TRADE-FACTS §2.4
const PORTRAIT_3_2 = { width: 4000, height: 6000 };
const WIDE_16_9 = { width: 3840, height: 2160 }; // 16:9 file of TRADE-FACTS §2.4
const SQUARE = { width: 5000, height: 5000 };
const inch = (width: number, height: number) => ({ width, height, unit: 'in' as const });
const mm = (width: number, height: number) => ({ width, height, unit: 'mm' as const });

describe('labSheetPixels: print size × ppi, whole pixels', () => {
  it.each([
    [inch(8, 10), 300, 2400, 3000], // TRADE-FACTS §2.2: 8×10 in at 300 ppi = 2400×3000
    [inch(8, 10), 240, 1920, 2400], // TRADE-FACTS §2.2
    [inch(4, 6), 300, 1200, 1800], // TRADE-FACTS §2.2
    [inch(8.5, 11), 300, 2550, 3300], // TRADE-FACTS §2.2 (US Letter)
    [inch(11, 14), 240, 2640, 3360], // TRADE-FACTS §2.2
    [inch(30, 40), 300, 9000, 12000], // TRADE-FACTS §2.2
  ])('%o at %i ppi is %i × %i px (exact inch sizes)', (print, ppi, w, h) => {
    expect(labSheetPixels(PORTRAIT_3_2, print, ppi)).toEqual({ width: w, height: h, turned: false });
  });

  it.each([
    [mm(210, 297), 300, 2480, 3508], // ISO 216 A4; TRADE-FACTS §2.1 px @300 = round(mm / 25.4 × ppi)
    [mm(210, 297), 240, 1984, 2806], // ISO 216 A4; TRADE-FACTS §2.1 px @240
    [mm(297, 420), 300, 3508, 4961], // ISO 216 A3; TRADE-FACTS §2.1
    [mm(148, 210), 300, 1748, 2480], // ISO 216 A5; TRADE-FACTS §2.1
    [mm(841, 1189), 300, 9933, 14043], // ISO 216 A0; TRADE-FACTS §2.1
    [mm(594, 841), 240, 5613, 7946], // ISO 216 A1; TRADE-FACTS §2.1
  ])('ISO A %o at %i ppi is %i × %i px (1 in = 25.4 mm, rounded)', (print, ppi, w, h) => {
    expect(labSheetPixels(PORTRAIT_3_2, print, ppi)).toEqual({ width: w, height: h, turned: false });
  });

  it('turns the sheet to a landscape picture and leaves it for a square one', () => {
    // TRADE-FACTS §2.3: rotate the print to the image's orientation first; §2.2: 8×10 at 300 = 2400×3000
    expect(labSheetPixels(LANDSCAPE_3_2, inch(8, 10), 300)).toEqual({ width: 3000, height: 2400, turned: true });
    // ISO 216 A4 at 300 ppi, TRADE-FACTS §2.1, turned to landscape
    expect(labSheetPixels(LANDSCAPE_3_2, mm(210, 297), 300)).toEqual({ width: 3508, height: 2480, turned: true });
    // a square picture has no orientation to follow (module contract, same as print-grade)
    expect(labSheetPixels(SQUARE, inch(8, 10), 300)).toEqual({ width: 2400, height: 3000, turned: false });
  });

  it('agrees with the print grade on when the paper is turned', () => {
    for (const image of [LANDSCAPE_3_2, PORTRAIT_3_2, WIDE_16_9, SQUARE]) {
      for (const print of [inch(8, 10), inch(10, 8), mm(210, 297), inch(12, 12)]) {
        expect(isTurned(image, print)).toBe(gradePrint({ image, print, mode: 'fill' }).turned);
      }
    }
  });

  it('refuses a ppi that is not positive', () => {
    expect(() => labSheetPixels(PORTRAIT_3_2, inch(8, 10), 0)).toThrow(RangeError);
    expect(() => labSheetPixels(PORTRAIT_3_2, inch(8, 10), Number.NaN)).toThrow(RangeError);
  });

  it('allows the lab ppi range the settings offer', () => {
    expect(LAB_PPI_RANGE).toEqual({ min: 72, max: 1200 }); // shop rule: the settings' range (lab_ppi check in the sales migration)
  });
});

describe('fitPlacement: the whole picture centred on white', () => {
  it('6000×4000 on 10×8 in at 300 ppi prints 10 × 6.667 in with 0.667 in top and bottom', () => {
    // TRADE-FACTS §2.4: fit prints 10 × 6.667 in, 1.333 in border in total (0.667 in top and bottom)
    const p = fitPlacement(LANDSCAPE_3_2, { width: 3000, height: 2400 });
    expect(p.width).toBe(3000); // 10 in × 300 ppi
    expect(p.height).toBe(2000); // 6.6667 in × 300 ppi
    expect(p.left).toBe(0);
    expect(p.top).toBe(200); // 0.6667 in × 300 ppi
    expect(2400 - p.top - p.height).toBe(200);
  });

  it('6000×4000 on 8×10 in (not turned) prints 8 × 5.333 in', () => {
    // TRADE-FACTS §2.4: fit(6000×4000 → 8×10 in, no rotation) = 8 × 5.3333 in
    const p = fitPlacement(LANDSCAPE_3_2, { width: 2400, height: 3000 });
    expect(p.width).toBe(2400); // 8 in × 300 ppi
    expect(Math.abs(p.height - 5.3333 * 300)).toBeLessThanOrEqual(0.5);
    expect(p.top + p.height + (3000 - p.top - p.height)).toBe(3000);
    expect(Math.abs(p.top - (3000 - p.top - p.height))).toBeLessThanOrEqual(1); // centred
  });

  it('3840×2160 on 10×8 in prints 10 × 5.625 in', () => {
    // TRADE-FACTS §2.4: fit(3840×2160 → 10×8 in) = 10 × 5.625 in → 1687.5 px at 300 ppi
    const p = fitPlacement(WIDE_16_9, { width: 3000, height: 2400 });
    expect(p.width).toBe(3000);
    expect(Math.abs(p.height - 1687.5)).toBeLessThanOrEqual(0.5);
    expect(Math.abs(p.top - (2400 - p.top - p.height))).toBeLessThanOrEqual(1);
  });

  it('a tall picture is limited by the height and gets side borders', () => {
    // 3:2 portrait on 8×10 at 300 ppi: 10 in high → 6.667 in wide (arithmetic on TRADE-FACTS §2.3 fit formula)
    const p = fitPlacement(PORTRAIT_3_2, { width: 2400, height: 3000 });
    expect(p.height).toBe(3000);
    expect(p.width).toBe(2000);
    expect(p.left).toBe(200);
    expect(p.top).toBe(0);
  });
});

describe('labPlan', () => {
  it('fill: 6000×4000 on 10×8 in crops 5000×4000, centred, and fills the sheet', () => {
    // TRADE-FACTS §2.4: fill crop window 5000×4000; §2.3: centred by default
    const plan = labPlan({ image: LANDSCAPE_3_2, print: inch(8, 10), mode: 'fill', ppi: 300 });
    expect(plan.crop).toEqual({ left: 500, top: 0, width: 5000, height: 4000 });
    expect(plan.sheet).toEqual({ width: 3000, height: 2400, turned: true }); // TRADE-FACTS §2.2, turned
    expect(plan.placement).toEqual({ left: 0, top: 0, width: 3000, height: 2400 });
    expect(plan.border).toEqual({ left: 0, right: 0, top: 0, bottom: 0 });
  });

  it('fill: the crop follows the focal point and stays inside the picture', () => {
    // TRADE-FACTS §2.4 crop 5000×4000: 1000 px to spare across; focal at the edges clamps to 0 and 1000
    expect(labPlan({ image: LANDSCAPE_3_2, print: inch(8, 10), mode: 'fill', ppi: 300, focal: { x: 0, y: 0.5 } }).crop.left).toBe(0);
    expect(labPlan({ image: LANDSCAPE_3_2, print: inch(8, 10), mode: 'fill', ppi: 300, focal: { x: 1, y: 0.5 } }).crop.left).toBe(1000);
  });

  it('fill: uses the crop recorded at purchase when it fits the original, else recomputes', () => {
    const bought = { left: 250, top: 0, width: 5000, height: 4000 }; // invented record; only "inside or not" matters
    expect(labPlan({ image: LANDSCAPE_3_2, print: inch(8, 10), mode: 'fill', ppi: 300, focal: { x: 0.9, y: 0.5 }, crop: bought }).crop).toEqual(bought);
    const outside = { left: 2000, top: 0, width: 5000, height: 4000 };
    expect(labPlan({ image: LANDSCAPE_3_2, print: inch(8, 10), mode: 'fill', ppi: 300, crop: outside }).crop).toEqual({ left: 500, top: 0, width: 5000, height: 4000 });
  });

  it('fit: the whole picture, placed with white borders', () => {
    const plan = labPlan({ image: LANDSCAPE_3_2, print: inch(8, 10), mode: 'fit', ppi: 300 });
    expect(plan.crop).toEqual({ left: 0, top: 0, width: 6000, height: 4000 });
    // TRADE-FACTS §2.4: 10 × 6.667 in on 10×8 → 0.667 in (200 px at 300 ppi) top and bottom
    expect(plan.border).toEqual({ left: 0, right: 0, top: 200, bottom: 200 });
  });

  it('A4 fill at 300 ppi gives the ISO sheet in pixels', () => {
    const plan = labPlan({ image: PORTRAIT_3_2, print: mm(210, 297), mode: 'fill', ppi: 300 });
    expect([plan.sheet.width, plan.sheet.height]).toEqual([2480, 3508]); // TRADE-FACTS §2.1 A4 @300
  });
});

describe('which lines go to the lab', () => {
  const print = { kind: 'print' as const, refunded: 0, subtotal: 12000 };
  it('prepares print lines of paid, in-production and partly refunded orders', () => {
    // shop rule: a print is made once paid, until shipped; partly refunded orders go on
    for (const state of ['paid', 'in_production', 'partly_refunded']) expect(labRefusal(state, print)).toBeNull();
  });
  it('refuses other states, licences and prints refunded in full', () => {
    for (const state of ['pending_payment', 'expired', 'cancelled', 'refunded', 'shipped', 'delivered']) {
      expect(labRefusal(state, print)?.code, state).toBe('order_not_ready');
    }
    expect(labRefusal('paid', { ...print, kind: 'licence' })?.code).toBe('not_a_print');
    expect(labRefusal('paid', { ...print, refunded: 12000 })?.code).toBe('line_refunded');
    expect(labRefusal('paid', { ...print, refunded: 11999 })).toBeNull(); // part refunded: still printed
    expect(labRefusal('pending_payment', print)?.message).toMatch(/pending payment/);
  });
  it('needs a pack for every print not refunded in full', () => {
    expect(needsLabPack({ ...print, labPack: null })).toBe(true);
    expect(needsLabPack({ ...print, labPack: { file: 'x' } })).toBe(false);
    expect(needsLabPack({ ...print, refunded: 12000, labPack: null })).toBe(false);
    expect(needsLabPack({ ...print, kind: 'licence', labPack: null })).toBe(false);
  });
});

describe('labFileName', () => {
  it('names the order, line, work, size, mode and ppi, in safe characters', () => {
    expect(labFileName({ orderNumber: 'SM-261203-ABCDEF', lineId: 12, workSlug: 'three-pears', sizeLabel: 'A4', mode: 'fill', ppi: 300, format: 'tiff16' }))
      .toBe('SM-261203-ABCDEF-L12-three-pears-a4-fill-300ppi.tif');
    expect(labFileName({ orderNumber: 'SM/../x', lineId: 3, workSlug: 'Pêche & Crème', sizeLabel: '8 × 10 in', mode: 'fit', ppi: 240, format: 'jpeg' }))
      .toBe('SMx-L3-peche-creme-8-x-10-in-fit-240ppi.jpg');
  });
});
