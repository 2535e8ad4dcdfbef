import { describe, it, expect } from 'vitest';
import {
  MM_PER_INCH,
  ONE_ARCMINUTE,
  DEFAULT_THRESHOLDS,
  toInches,
  requiredPpi,
  acuityDistance,
  viewingDistance,
  gradeFor,
  gradePrint,
  maxPrintLongEdge,
  type PrintGradeInput,
} from '../../src/lib/print-grade';

// Every expected number below is a published / reference value written out by hand,
// never recomputed with the module's own formula. Sources are named beside each check.

const IMG_3_2 = { width: 6000, height: 4000 }; // 3:2 file used throughout TRADE-FACTS §1.3 and §2.4
const IMG_16_9 = { width: 3840, height: 2160 }; // 16:9 file, TRADE-FACTS §2.4

function grade(input: Partial<PrintGradeInput> & Pick<PrintGradeInput, 'image' | 'print'>) {
  return gradePrint({ mode: 'fill', ...input });
}

describe('units', () => {
  it('uses the exact international inch', () => {
    expect(MM_PER_INCH).toBe(25.4); // 1 in = 25.4 mm exactly (international inch, 1959; TRADE-FACTS unit conventions)
    expect(toInches(25.4, 'mm')).toBe(1); // international inch, TRADE-FACTS unit conventions
    expect(toInches(210, 'mm')).toBeCloseTo(8.27, 2); // ISO 216 A4 short side in inches (TRADE-FACTS §2.1 table)
    expect(toInches(8, 'in')).toBe(8); // inches stay inches (identity)
  });

  it('defines one arcminute as 1/60 degree', () => {
    expect(ONE_ARCMINUTE).toBeCloseTo(2.908882e-4, 10); // θ = 1′ = π/10800 rad = 2.908882e-4 rad, TRADE-FACTS §1.2
  });
});

describe('requiredPpi — 1 arcminute acuity formula (TRADE-FACTS §1.2, check values §1)', () => {
  it.each([
    [12, 286.48], // check values §1 [VERIFIED]; worked example §1.3 #1 (8×10 held at 12 in)
    [10, 343.77], // check values §1 [VERIFIED]
    [24, 143.24], // check values §1 [VERIFIED]; worked example §1.3 #2
    [36, 95.49], // check values §1 [VERIFIED]; worked example §1.3 #3
    [60, 57.3], // check values §1 [VERIFIED]
  ])('at %d in needs %d ppi', (inches, ppi) => {
    expect(requiredPpi(inches)).toBeCloseTo(ppi, 2);
  });

  it.each([
    [300, 291.1], // check values §1; "291 dpi at 30 cm" in the meidokon derivation [PUB], via 25.4 mm per inch
    [500, 174.6], // check values §1; "175 dpi at 50 cm" [PUB], via 25.4 mm per inch
    [1000, 87.3], // check values §1; "87 dpi at 1 m" [PUB], via 25.4 mm per inch
  ])('at %d mm needs %d ppi', (mm, ppi) => {
    const inches = mm / 25.4; // international inch, TRADE-FACTS unit conventions
    expect(requiredPpi(inches)).toBeCloseTo(ppi, 1);
    expect(Math.round(requiredPpi(inches))).toBe(Math.round(ppi)); // whole-dpi values as published [PUB]
  });

  it('equals the published constant 3437.7467 at one inch', () => {
    expect(requiredPpi(1)).toBeCloseTo(3437.7467, 3); // 1/tan(1′) = 3437.7467, TRADE-FACTS §1.2 [VERIFIED]
  });

  it('rejects a distance that is not positive', () => {
    expect(() => requiredPpi(0)).toThrow(RangeError);
    expect(() => requiredPpi(-12)).toThrow(RangeError);
    expect(() => requiredPpi(Number.NaN)).toThrow(RangeError);
  });
});

describe('acuityDistance — inverse of the 1 arcminute formula (TRADE-FACTS §1.2)', () => {
  it('300 ppi is retina-limited beyond 11.459 in', () => {
    expect(acuityDistance(300)).toBeCloseTo(11.459, 3); // check values §1 [VERIFIED]
  });
  it('240 ppi is retina-limited beyond 14.324 in', () => {
    expect(acuityDistance(240)).toBeCloseTo(14.324, 3); // check values §1 [VERIFIED]
  });
  it('166.67 ppi (6000 px over 36 in) is retina-limited beyond 20.6 in', () => {
    expect(acuityDistance(6000 / 36)).toBeCloseTo(20.6, 1); // worked example TRADE-FACTS §1.3 #3
  });
  it('rejects a ppi that is not positive', () => {
    expect(() => acuityDistance(0)).toThrow(RangeError);
    expect(() => acuityDistance(-300)).toThrow(RangeError);
    expect(() => acuityDistance(Number.NaN)).toThrow(RangeError);
  });
});

describe('viewingDistance — 1.5 × diagonal (common practice)', () => {
  it('is 1.5 × the diagonal by default', () => {
    // 10×8 in: diagonal √164 = 12.806 in; × 1.5 = 19.209 in — common practice (PRODUCT.md; TRADE-FACTS §1.1)
    expect(viewingDistance(10, 8)).toBeCloseTo(19.209, 3);
    // 3-4-5 triangle: 30×40 in diagonal is 50 in exactly; × 1.5 = 75 in — common practice
    expect(viewingDistance(30, 40)).toBeCloseTo(75, 9);
  });
  it('accepts the upper end of the rule of thumb (2 × diagonal)', () => {
    expect(viewingDistance(30, 40, 2)).toBeCloseTo(100, 9); // "1.5–2 × the print diagonal", TRADE-FACTS §1.1 (common practice)
  });
  it('defaults match the product brief', () => {
    // business rule (PRODUCT.md print grade): target 300, floor 240, wall floor 150, distance 1.5 × diagonal
    expect(DEFAULT_THRESHOLDS).toEqual({ targetPpi: 300, floorPpi: 240, wallFloorPpi: 150, viewingDistanceFactor: 1.5 });
  });
});

describe('maxPrintLongEdge (TRADE-FACTS check values §1, arithmetic)', () => {
  it('6000 px prints 20 / 25 / 40 in at 300 / 240 / 150 ppi', () => {
    expect(maxPrintLongEdge(6000, 300)).toBeCloseTo(20, 9); // check values §1
    expect(maxPrintLongEdge(6000, 240)).toBeCloseTo(25, 9); // check values §1
    expect(maxPrintLongEdge(6000, 150)).toBeCloseTo(40, 9); // check values §1
  });
  it('rejects a ppi that is not positive', () => {
    expect(() => maxPrintLongEdge(6000, 0)).toThrow(RangeError);
    expect(() => maxPrintLongEdge(6000, Number.NaN)).toThrow(RangeError);
  });
});

describe('gradePrint — fill vs fit worked examples (TRADE-FACTS §2.3, §2.4)', () => {
  it('6000×4000 on 10×8 in, fill: 500 ppi, crop 5000×4000, 16.67 % lost', () => {
    const r = grade({ image: IMG_3_2, print: { width: 10, height: 8, unit: 'in' }, mode: 'fill' });
    expect(r.turned).toBe(false);
    expect(r.effectivePpi).toBeCloseTo(500, 6); // worked example TRADE-FACTS §2.4
    expect(r.crop.width).toBe(5000); // worked example TRADE-FACTS §2.4
    expect(r.crop.height).toBe(4000); // worked example TRADE-FACTS §2.4
    expect(r.lostShare).toBeCloseTo(0.1667, 4); // worked example TRADE-FACTS §2.4 (1000 px of width, 16.67 %)
    expect(r.imageInches).toEqual({ width: 10, height: 8 }); // fill covers the paper, TRADE-FACTS §2.3
    expect(r.borderInches.leftRight).toBeCloseTo(0, 9); // fill leaves no border, TRADE-FACTS §2.3
    expect(r.borderInches.topBottom).toBeCloseTo(0, 9);
  });

  it('6000×4000 on 10×8 in, fit: 600 ppi, image 10 × 6.667 in with 0.667 in top and bottom', () => {
    const r = grade({ image: IMG_3_2, print: { width: 10, height: 8, unit: 'in' }, mode: 'fit' });
    expect(r.effectivePpi).toBeCloseTo(600, 6); // worked example TRADE-FACTS §2.4
    expect(r.imageInches.width).toBeCloseTo(10, 6); // worked example TRADE-FACTS §2.4
    expect(r.imageInches.height).toBeCloseTo(6.6667, 4); // worked example TRADE-FACTS §2.4
    expect(r.borderInches.leftRight).toBeCloseTo(0, 6); // worked example TRADE-FACTS §2.4
    expect(r.borderInches.topBottom).toBeCloseTo(0.667, 3); // worked example TRADE-FACTS §2.4 ("0.667 in top and bottom")
    expect(r.lostShare).toBe(0); // fit keeps the whole image, TRADE-FACTS §2.3
    expect(r.crop).toEqual({ left: 0, top: 0, width: 6000, height: 4000 }); // whole image, TRADE-FACTS §2.3
  });

  it('turns an 8×10 portrait print to match a landscape image (same as 10×8)', () => {
    // rotate the print to the image's orientation first, TRADE-FACTS §2.3 (common practice)
    const portrait = grade({ image: IMG_3_2, print: { width: 8, height: 10, unit: 'in' }, mode: 'fill' });
    const landscape = grade({ image: IMG_3_2, print: { width: 10, height: 8, unit: 'in' }, mode: 'fill' });
    expect(portrait.turned).toBe(true);
    expect(portrait.paperInches).toEqual({ width: 10, height: 8 });
    expect(portrait.effectivePpi).toBeCloseTo(500, 6); // worked example TRADE-FACTS §2.4 (orientation matched)
    expect(portrait.crop).toEqual(landscape.crop);
    expect(portrait.crop.width).toBe(5000); // worked example TRADE-FACTS §2.4
    // Unturned, §2.4 gives fill 400 ppi with a 3200×4000 crop (46.67 % lost); turning must do better.
    expect(portrait.effectivePpi).toBeGreaterThan(400); // worked example TRADE-FACTS §2.4 (no rotation: 400 ppi)
    expect(portrait.lostShare).toBeLessThan(0.4667); // worked example TRADE-FACTS §2.4 (no rotation: 46.67 % lost)
  });

  it('turns a portrait print for fit as well (8×10 fit equals 10×8 fit, better than unturned 750 ppi / 8 × 5.333 in)', () => {
    const r = grade({ image: IMG_3_2, print: { width: 8, height: 10, unit: 'in' }, mode: 'fit' });
    expect(r.turned).toBe(true);
    expect(r.effectivePpi).toBeCloseTo(600, 6); // worked example TRADE-FACTS §2.4 (orientation matched)
    expect(r.imageInches.height).toBeCloseTo(6.6667, 4); // worked example TRADE-FACTS §2.4
    // unturned the printed image would be 8 × 5.333 in (TRADE-FACTS §2.4): turning gives a bigger picture
    expect(r.imageInches.width * r.imageInches.height).toBeGreaterThan(8 * 5.3333);
  });

  it('turns a landscape print to match a portrait image', () => {
    const r = grade({ image: { width: 4000, height: 6000 }, print: { width: 10, height: 8, unit: 'in' }, mode: 'fill' });
    expect(r.turned).toBe(true);
    expect(r.paperInches).toEqual({ width: 8, height: 10 });
    expect(r.effectivePpi).toBeCloseTo(500, 6); // worked example TRADE-FACTS §2.4 (transposed)
    expect(r.crop.width).toBe(4000); // worked example TRADE-FACTS §2.4 (5000×4000 transposed)
    expect(r.crop.height).toBe(5000);
  });

  it('3840×2160 (16:9) on 10×8 in, fill: 270 ppi, crop 2700×2160, 29.7 % lost', () => {
    const r = grade({ image: IMG_16_9, print: { width: 10, height: 8, unit: 'in' }, mode: 'fill' });
    expect(r.effectivePpi).toBeCloseTo(270, 6); // worked example TRADE-FACTS §2.4
    expect(r.crop.width).toBe(2700); // worked example TRADE-FACTS §2.4
    expect(r.crop.height).toBe(2160); // worked example TRADE-FACTS §2.4
    expect(r.lostShare).toBeCloseTo(0.297, 3); // worked example TRADE-FACTS §2.4 (29.7 % discarded)
  });

  it('3840×2160 (16:9) on 10×8 in, fit: 384 ppi, image 10 × 5.625 in', () => {
    const r = grade({ image: IMG_16_9, print: { width: 10, height: 8, unit: 'in' }, mode: 'fit' });
    expect(r.effectivePpi).toBeCloseTo(384, 6); // worked example TRADE-FACTS §2.4
    expect(r.imageInches.width).toBeCloseTo(10, 6); // worked example TRADE-FACTS §2.4
    expect(r.imageInches.height).toBeCloseTo(5.625, 6); // worked example TRADE-FACTS §2.4
    expect(r.borderInches.topBottom).toBeCloseTo(1.1875, 6); // border = paper − image (TRADE-FACTS §2.3): (8 − 5.625)/2
  });

  it('6000×4000 on 20×16 in, fill: 250 ppi, crop 5000×4000', () => {
    const r = grade({ image: IMG_3_2, print: { width: 20, height: 16, unit: 'in' } });
    expect(r.effectivePpi).toBeCloseTo(250, 6); // check values TRADE-FACTS §2 [VERIFIED]; worked example §1.3 #2
    expect(r.crop.width).toBe(5000); // check values TRADE-FACTS §2
    expect(r.crop.height).toBe(4000); // check values TRADE-FACTS §2
  });

  it('6000×4000 on 14×11 in, fill: 363.64 ppi, crop 5091×4000', () => {
    const r = grade({ image: IMG_3_2, print: { width: 14, height: 11, unit: 'in' } });
    expect(r.effectivePpi).toBeCloseTo(363.64, 2); // check values TRADE-FACTS §2 [VERIFIED]
    expect(r.crop.width).toBe(5091); // check values TRADE-FACTS §2 [VERIFIED]
    expect(r.crop.height).toBe(4000); // check values TRADE-FACTS §2 [VERIFIED]
  });

  it.each(['fill', 'fit'] as const)('6000×4000 on 36×24 in (%s): 166.67 ppi, nothing lost', (mode) => {
    const r = grade({ image: IMG_3_2, print: { width: 36, height: 24, unit: 'in' }, mode });
    expect(r.effectivePpi).toBeCloseTo(166.67, 2); // worked example TRADE-FACTS §2.4 ("166.67 ppi both ways"), §1.3 #3
    expect(r.lostShare).toBeCloseTo(0, 9); // 3:2 prints need no crop, TRADE-FACTS §2.4
    expect(r.crop).toEqual({ left: 0, top: 0, width: 6000, height: 4000 }); // TRADE-FACTS §2.4
    expect(r.imageInches.width).toBeCloseTo(36, 9); // no border, TRADE-FACTS §2.4
    expect(r.imageInches.height).toBeCloseTo(24, 9);
  });

  it('6000 px across 20 in is 300 ppi', () => {
    // effectivePpi(px=6000, in=20) = 300, check values TRADE-FACTS §1 (arithmetic); 20 × 13.333 in is 3:2
    const r = grade({ image: IMG_3_2, print: { width: 20, height: 40 / 3, unit: 'in' } });
    expect(r.effectivePpi).toBeCloseTo(300, 6);
  });
});

describe('gradePrint — ISO paper in millimetres', () => {
  it('grades A4 (210×297 mm) for a 6000×4000 file', () => {
    const r = grade({ image: IMG_3_2, print: { width: 210, height: 297, unit: 'mm' } });
    expect(r.turned).toBe(true); // portrait A4 turned to the landscape file, TRADE-FACTS §2.3
    expect(r.paperInches.width).toBeCloseTo(11.69, 2); // ISO 216 A4 in inches, TRADE-FACTS §2.1 table
    expect(r.paperInches.height).toBeCloseTo(8.27, 2); // ISO 216 A4 in inches, TRADE-FACTS §2.1 table
    // A4 at 300 ppi needs 2480×3508 px (ISO 216 + 25.4 mm/in, TRADE-FACTS §2.1); this file has more on both edges
    expect(r.effectivePpi).toBeGreaterThan(300);
    // 4000 px across the 210 mm side: 4000 / (210 / 25.4) = 483.81 ppi — ISO 216 A4 + international inch
    expect(r.effectivePpi).toBeCloseTo(483.81, 2);
    // crop keeps the 1:√2 A-series shape: 4000 × 297/210 = 5657 px — ISO 216 (A4 210×297 mm)
    expect(r.crop.width).toBe(5657);
    expect(r.crop.height).toBe(4000);
    expect(r.grade).toBe('crisp'); // business rule (PRODUCT.md print grade: Crisp ≥ 300)
  });

  it('a file of exactly the ISO 216 A4 pixel size at 300 ppi prints at about 300 ppi', () => {
    // 3508×2480 px is A4 at 300 ppi (TRADE-FACTS §2.1 table, px = round(mm / 25.4 × ppi))
    const r = grade({ image: { width: 3508, height: 2480 }, print: { width: 210, height: 297, unit: 'mm' } });
    expect(r.effectivePpi).toBeCloseTo(300, 0); // within the ±0.5 px rounding of the published table
    expect(r.lostShare).toBeLessThan(0.001); // same shape, practically nothing cropped
    expect(r.grade).toBe('crisp'); // made for A4 at 300 ppi, so Crisp (graded on whole ppi)
  });
});

describe('gradePrint — crop position (centred by default, sharp position "centre", TRADE-FACTS §2.3)', () => {
  const tenByEight = { width: 10, height: 8, unit: 'in' as const };

  it('centres the crop by default', () => {
    const r = grade({ image: IMG_3_2, print: tenByEight });
    expect(r.crop).toEqual({ left: 500, top: 0, width: 5000, height: 4000 }); // (6000 − 5000)/2, centred default, TRADE-FACTS §2.3
    const wide = grade({ image: IMG_16_9, print: tenByEight });
    expect(wide.crop).toEqual({ left: 570, top: 0, width: 2700, height: 2160 }); // (3840 − 2700)/2, centred default, TRADE-FACTS §2.3
  });

  it('moves the crop toward the focal point', () => {
    // business rule (PRODUCT.md: the chooser shows the crop); window centred on the focal point 0.55 × 6000 = 3300
    const r = grade({ image: IMG_3_2, print: tenByEight, focal: { x: 0.55, y: 0.5 } });
    expect(r.crop.left).toBe(800); // 3300 − 5000/2
    const left = grade({ image: IMG_3_2, print: tenByEight, focal: { x: 0.45, y: 0.5 } });
    expect(left.crop.left).toBe(200); // 2700 − 5000/2
  });

  it('keeps the crop inside the image for focal points on the edges', () => {
    const topLeft = grade({ image: IMG_3_2, print: tenByEight, focal: { x: 0, y: 0 } });
    expect(topLeft.crop).toEqual({ left: 0, top: 0, width: 5000, height: 4000 });
    const bottomRight = grade({ image: IMG_3_2, print: tenByEight, focal: { x: 1, y: 1 } });
    expect(bottomRight.crop).toEqual({ left: 1000, top: 0, width: 5000, height: 4000 });

    // portrait file on an 8×10 print: the crop is 4000×5000 and moves vertically (§2.4 transposed)
    const tall = { width: 4000, height: 6000 };
    const up = grade({ image: tall, print: { width: 8, height: 10, unit: 'in' }, focal: { x: 0, y: 0 } });
    expect(up.crop).toEqual({ left: 0, top: 0, width: 4000, height: 5000 });
    const down = grade({ image: tall, print: { width: 8, height: 10, unit: 'in' }, focal: { x: 1, y: 1 } });
    expect(down.crop).toEqual({ left: 0, top: 1000, width: 4000, height: 5000 });
  });

  it.each([
    [0, 0], [1, 1], [0, 1], [1, 0], [0.5, 0.5], [0.99, 0.01],
  ])('focal (%d, %d) never pushes the 16:9 crop outside the image', (x, y) => {
    const r = grade({ image: IMG_16_9, print: { width: 14, height: 11, unit: 'in' }, focal: { x, y } });
    expect(r.crop.left).toBeGreaterThanOrEqual(0);
    expect(r.crop.top).toBeGreaterThanOrEqual(0);
    expect(r.crop.left + r.crop.width).toBeLessThanOrEqual(3840);
    expect(r.crop.top + r.crop.height).toBeLessThanOrEqual(2160);
  });
});

describe('gradePrint — viewing distance and eye ppi', () => {
  it('10×8 in is seen from 19.21 in, where the eye needs 178.96 ppi', () => {
    const r = grade({ image: IMG_3_2, print: { width: 10, height: 8, unit: 'in' } });
    expect(r.viewingDistanceInches).toBeCloseTo(19.209, 3); // 1.5 × √(10² + 8²), common practice (PRODUCT.md)
    expect(r.eyePpi).toBeCloseTo(178.96, 2); // 3437.7467 / 19.209, 1 arcminute acuity formula, TRADE-FACTS §1.2
  });
  it('36×24 in is seen from 64.9 in, where the eye needs 52.97 ppi', () => {
    const r = grade({ image: IMG_3_2, print: { width: 36, height: 24, unit: 'in' } });
    expect(r.viewingDistanceInches).toBeCloseTo(64.9, 1); // 1.5 × √(36² + 24²), common practice
    expect(r.eyePpi).toBeCloseTo(52.97, 2); // 3437.7467 / 64.9, TRADE-FACTS §1.2
  });
});

describe('gradeFor — grade boundaries (business rule, PRODUCT.md print grade)', () => {
  // business rule (PRODUCT.md print grade, graded on the whole ppi the buyer is shown)
  it('300 is Crisp, 299.5 rounds to 300, 299.4 is Fine', () => {
    expect(gradeFor(300, 100)).toBe('crisp'); // business rule (PRODUCT.md): Crisp ≥ target 300
    expect(gradeFor(299.5, 100)).toBe('crisp'); // shown as 300 ppi, so graded as 300
    expect(gradeFor(299.4, 100)).toBe('fine'); // business rule (PRODUCT.md): below target, ≥ floor 240
  });
  it('240 is Fine, 239.4 is not', () => {
    expect(gradeFor(240, 100)).toBe('fine'); // business rule (PRODUCT.md): Fine ≥ floor 240
    expect(gradeFor(239.4, 100)).toBe('wall'); // business rule (PRODUCT.md): ≥ eye 100 and ≥ wall floor 150
  });
  it('Wall needs both the eye ppi and the wall floor', () => {
    expect(gradeFor(200, 180)).toBe('wall'); // business rule (PRODUCT.md): 200 ≥ 180 and ≥ 150
    expect(gradeFor(200, 201)).toBe('too-small'); // business rule (PRODUCT.md): below the eye's ppi
    expect(gradeFor(149.4, 100)).toBe('too-small'); // business rule (PRODUCT.md): below the wall floor 150
    expect(gradeFor(150, 100)).toBe('wall'); // business rule (PRODUCT.md): exactly the wall floor
    expect(gradeFor(150, 150)).toBe('wall'); // business rule (PRODUCT.md): exactly both
  });
});

describe('gradePrint — grades (business rule, PRODUCT.md print grade)', () => {
  it('acceptance: 2400×1600 px on 8×10 in fill is Wall at 200 ppi', () => {
    const r = grade({ image: { width: 2400, height: 1600 }, print: { width: 8, height: 10, unit: 'in' } });
    expect(r.effectivePpi).toBeCloseTo(200, 6); // business rule (PRODUCT.md acceptance case)
    // 200 ≥ 178.96 (eye at 1.5 × diagonal, TRADE-FACTS §1.2) and ≥ 150 (wall floor)
    expect(r.grade).toBe('wall'); // business rule (PRODUCT.md acceptance case)
  });

  it('acceptance: 2400×1600 px on 16×20 in fill is Too small at 100 ppi', () => {
    const r = grade({ image: { width: 2400, height: 1600 }, print: { width: 16, height: 20, unit: 'in' } });
    expect(r.effectivePpi).toBeCloseTo(100, 6); // business rule (PRODUCT.md acceptance case)
    expect(r.grade).toBe('too-small'); // business rule (PRODUCT.md acceptance case): 100 < wall floor 150
  });

  it('acceptance: 6000×4000 px on 8×10 in fill is Crisp at 500 ppi', () => {
    const r = grade({ image: IMG_3_2, print: { width: 8, height: 10, unit: 'in' } });
    expect(r.effectivePpi).toBeCloseTo(500, 6); // worked example TRADE-FACTS §2.4; business rule (PRODUCT.md acceptance case)
    expect(r.grade).toBe('crisp');
  });

  it('6000×4000 on 20×16 in fill (250 ppi) is Fine', () => {
    const r = grade({ image: IMG_3_2, print: { width: 20, height: 16, unit: 'in' } });
    expect(r.grade).toBe('fine'); // 250 ppi (TRADE-FACTS §2.4) is ≥ 240 and < 300 — business rule (PRODUCT.md)
  });

  it('6000×4000 on 36×24 in (166.67 ppi) is Wall', () => {
    const r = grade({ image: IMG_3_2, print: { width: 36, height: 24, unit: 'in' } });
    // 166.67 ≥ 150 (wall floor) and ≥ 52.97 (eye at 64.9 in, TRADE-FACTS §1.2) — business rule (PRODUCT.md)
    expect(r.grade).toBe('wall');
  });

  it('Wall is refused when ppi clears the wall floor but not the eye (small print seen up close)', () => {
    // 1000×800 on 5×4 in: 200 ppi ≥ 150, but at 1.5 × 6.403 in = 9.60 in the eye needs 357.9 ppi (TRADE-FACTS §1.2)
    const r = grade({ image: { width: 1000, height: 800 }, print: { width: 5, height: 4, unit: 'in' } });
    expect(r.effectivePpi).toBeCloseTo(200, 6);
    expect(r.eyePpi).toBeCloseTo(357.92, 2); // 3437.7467 / 9.6047, TRADE-FACTS §1.2
    expect(r.grade).toBe('too-small'); // business rule (PRODUCT.md): Wall needs ≥ the eye's ppi
  });

  it('Wall is refused when ppi clears the eye but not the wall floor (big print seen from afar)', () => {
    // 3000×2000 on 36×24 in: 83.33 ppi ≥ 52.97 (eye, TRADE-FACTS §1.2) but < 150 wall floor
    const r = grade({ image: { width: 3000, height: 2000 }, print: { width: 36, height: 24, unit: 'in' } });
    expect(r.effectivePpi).toBeCloseTo(83.33, 2);
    expect(r.effectivePpi).toBeGreaterThan(r.eyePpi);
    expect(r.grade).toBe('too-small'); // business rule (PRODUCT.md): Wall needs ≥ wall floor 150
  });
});

describe('gradePrint — custom thresholds (business rule, PRODUCT.md: shop target / floor / wall floor)', () => {
  const print = { width: 20, height: 16, unit: 'in' as const }; // 6000×4000 → 250 ppi fill (TRADE-FACTS §2.4)

  it('a lower target makes 250 ppi Crisp', () => {
    const r = grade({ image: IMG_3_2, print, thresholds: { ...DEFAULT_THRESHOLDS, targetPpi: 250 } });
    expect(r.grade).toBe('crisp'); // business rule (PRODUCT.md): Crisp ≥ the shop's target
  });

  it('a higher floor turns 250 ppi from Fine into Wall', () => {
    const r = grade({ image: IMG_3_2, print, thresholds: { ...DEFAULT_THRESHOLDS, floorPpi: 260 } });
    expect(r.grade).toBe('wall'); // business rule (PRODUCT.md): 250 ≥ 150 and ≥ eye 89.48 (TRADE-FACTS §1.2)
  });

  it('a higher wall floor turns Wall into Too small', () => {
    const image = IMG_3_2;
    const big = { width: 36, height: 24, unit: 'in' as const }; // 166.67 ppi, TRADE-FACTS §2.4
    expect(grade({ image, print: big }).grade).toBe('wall');
    const r = grade({ image, print: big, thresholds: { ...DEFAULT_THRESHOLDS, wallFloorPpi: 180 } });
    expect(r.grade).toBe('too-small'); // business rule (PRODUCT.md): below the shop's wall floor
  });

  it('a longer viewing distance (2 × diagonal) lowers the eye ppi and can make a print Wall', () => {
    // 1700×1360 on 10×8 in = 170 ppi; eye at 1.5 × diag (19.21 in) needs 178.96, at 2 × diag (25.61 in) 134.22
    const image = { width: 1700, height: 1360 };
    const tenByEight = { width: 10, height: 8, unit: 'in' as const };
    const near = grade({ image, print: tenByEight });
    expect(near.grade).toBe('too-small'); // 170 < 178.96 — TRADE-FACTS §1.2, business rule (PRODUCT.md)
    const far = grade({ image, print: tenByEight, thresholds: { ...DEFAULT_THRESHOLDS, viewingDistanceFactor: 2 } });
    expect(far.viewingDistanceInches).toBeCloseTo(25.612, 3); // 2 × √164, "1.5–2 × diagonal" TRADE-FACTS §1.1 (common practice)
    expect(far.eyePpi).toBeCloseTo(134.22, 2); // 3437.7467 / 25.612, TRADE-FACTS §1.2
    expect(far.grade).toBe('wall'); // 170 ≥ 150 and ≥ 134.22 — business rule (PRODUCT.md)
  });
});

describe('gradePrint — bad input', () => {
  const ok: PrintGradeInput = { image: IMG_3_2, print: { width: 10, height: 8, unit: 'in' }, mode: 'fill' };
  it.each([
    ['image width 0', { ...ok, image: { width: 0, height: 4000 } }],
    ['image height negative', { ...ok, image: { width: 6000, height: -4000 } }],
    ['image width NaN', { ...ok, image: { width: Number.NaN, height: 4000 } }],
    ['image height Infinity', { ...ok, image: { width: 6000, height: Number.POSITIVE_INFINITY } }],
    ['print width 0', { ...ok, print: { width: 0, height: 8, unit: 'in' as const } }],
    ['print height negative', { ...ok, print: { width: 10, height: -8, unit: 'in' as const } }],
    ['print width NaN', { ...ok, print: { width: Number.NaN, height: 8, unit: 'in' as const } }],
    ['print height NaN (mm)', { ...ok, print: { width: 210, height: Number.NaN, unit: 'mm' as const } }],
  ])('%s throws RangeError', (_label, input) => {
    expect(() => gradePrint(input)).toThrow(RangeError);
  });
});
