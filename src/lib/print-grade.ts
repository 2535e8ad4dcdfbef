/**
 * Print grades: how well an image of a given pixel size holds a given print size.
 * Pure arithmetic, no I/O, so the Gallery, the Studio, the cart quote and the lab file all agree.
 */

export const MM_PER_INCH = 25.4; // international inch (1959), exact
/** One arcminute in radians: the detail a normal (6/6, 20/20) eye resolves. */
export const ONE_ARCMINUTE = Math.PI / 10800;

export type LengthUnit = 'mm' | 'in';
export type PrintMode = 'fill' | 'fit';
export type Grade = 'crisp' | 'fine' | 'wall' | 'too-small';

export const GRADE_LABEL: Record<Grade, string> = {
  crisp: 'Crisp',
  fine: 'Fine',
  wall: 'Wall',
  'too-small': 'Too small',
};

export interface GradeThresholds {
  /** ppi at or above which a print is Crisp (shop target). */
  targetPpi: number;
  /** ppi at or above which a print is Fine (shop floor). */
  floorPpi: number;
  /** Lowest ppi a Wall print may have, whatever the viewing distance. */
  wallFloorPpi: number;
  /** Viewing distance as a multiple of the print's diagonal. */
  viewingDistanceFactor: number;
}

export const DEFAULT_THRESHOLDS: GradeThresholds = {
  targetPpi: 300,
  floorPpi: 240,
  wallFloorPpi: 150,
  viewingDistanceFactor: 1.5,
};

export interface PixelSize { width: number; height: number }
export interface PrintSize { width: number; height: number; unit: LengthUnit }
/** Point of interest as fractions of the image's width and height (0..1). */
export interface FocalPoint { x: number; y: number }
export interface CropRect { left: number; top: number; width: number; height: number }

export interface PrintGradeInput {
  image: PixelSize;
  print: PrintSize;
  mode: PrintMode;
  focal?: FocalPoint;
  thresholds?: GradeThresholds;
}

export interface PrintGradeResult {
  /** The paper in inches, turned to match the image's orientation. */
  paperInches: { width: number; height: number };
  /** True when the paper was turned from the orientation it was given in. */
  turned: boolean;
  mode: PrintMode;
  effectivePpi: number;
  /** The part of the image that is printed, in source pixels (the whole image for fit). */
  crop: CropRect;
  /** Share of the source pixels left out of the print (0 for fit). */
  lostShare: number;
  /** Size of the printed image on the paper, in inches (smaller than the paper for fit). */
  imageInches: { width: number; height: number };
  /** White border on each side, in inches (0 for fill). */
  borderInches: { leftRight: number; topBottom: number };
  viewingDistanceInches: number;
  /** ppi the eye can resolve at that distance (1 arcminute acuity). */
  eyePpi: number;
  grade: Grade;
}

const EPSILON = 1e-9;

export function toInches(value: number, unit: LengthUnit): number {
  return unit === 'in' ? value : value / MM_PER_INCH;
}

/** ppi needed so one pixel subtends one arcminute at `distanceInches`: 1 / (d · tan 1′). */
export function requiredPpi(distanceInches: number): number {
  if (!(distanceInches > 0)) throw new RangeError('viewing distance must be positive');
  return 1 / (distanceInches * Math.tan(ONE_ARCMINUTE));
}

/** Distance (inches) beyond which a print at `ppi` is limited by the eye, not the file. */
export function acuityDistance(ppi: number): number {
  if (!(ppi > 0)) throw new RangeError('ppi must be positive');
  return 1 / (ppi * Math.tan(ONE_ARCMINUTE));
}

/** Common practice: a print is looked at from about `factor` × its diagonal. */
export function viewingDistance(widthInches: number, heightInches: number, factor = DEFAULT_THRESHOLDS.viewingDistanceFactor): number {
  return factor * Math.hypot(widthInches, heightInches);
}

/**
 * Grades on whole ppi, the figure the buyer is shown: a file made for A4 at 300 ppi (2480 px across
 * 210 mm, ISO 216 rounding) prints at 299.96 ppi and is Crisp, as its maker intended.
 */
export function gradeFor(effectivePpi: number, eyePpi: number, t: GradeThresholds = DEFAULT_THRESHOLDS): Grade {
  const ppi = Math.round(effectivePpi + EPSILON);
  if (ppi >= t.targetPpi) return 'crisp';
  if (ppi >= t.floorPpi) return 'fine';
  if (ppi >= Math.max(Math.round(eyePpi), t.wallFloorPpi)) return 'wall';
  return 'too-small';
}

function clamp(value: number, min: number, max: number): number {
  return Math.min(Math.max(value, min), max);
}

function assertPositive(name: string, value: number): void {
  if (!Number.isFinite(value) || value <= 0) throw new RangeError(`${name} must be a positive number`);
}

/** Grades one print of one image: orientation, crop, effective ppi, viewing distance and grade. */
export function gradePrint(input: PrintGradeInput): PrintGradeResult {
  const { image, print, mode } = input;
  const t = input.thresholds ?? DEFAULT_THRESHOLDS;
  const focal = input.focal ?? { x: 0.5, y: 0.5 };
  assertPositive('image width', image.width);
  assertPositive('image height', image.height);
  assertPositive('print width', print.width);
  assertPositive('print height', print.height);

  let pw = toInches(print.width, print.unit);
  let ph = toInches(print.height, print.unit);
  const imageLandscape = image.width > image.height;
  const imagePortrait = image.height > image.width;
  const turned = (imageLandscape && ph > pw) || (imagePortrait && pw > ph);
  if (turned) [pw, ph] = [ph, pw];

  const ppiW = image.width / pw;
  const ppiH = image.height / ph;

  let effectivePpi: number;
  let crop: CropRect;
  let lostShare: number;
  let imageInches: { width: number; height: number };
  if (mode === 'fill') {
    effectivePpi = Math.min(ppiW, ppiH);
    const width = Math.min(image.width, Math.round(pw * effectivePpi));
    const height = Math.min(image.height, Math.round(ph * effectivePpi));
    const left = Math.round(clamp(focal.x * image.width - width / 2, 0, image.width - width));
    const top = Math.round(clamp(focal.y * image.height - height / 2, 0, image.height - height));
    crop = { left, top, width, height };
    lostShare = Math.max(0, 1 - (pw * ph * effectivePpi * effectivePpi) / (image.width * image.height));
    imageInches = { width: pw, height: ph };
  } else {
    effectivePpi = Math.max(ppiW, ppiH);
    crop = { left: 0, top: 0, width: image.width, height: image.height };
    lostShare = 0;
    imageInches = { width: image.width / effectivePpi, height: image.height / effectivePpi };
  }

  const viewingDistanceInches = viewingDistance(pw, ph, t.viewingDistanceFactor);
  const eyePpi = requiredPpi(viewingDistanceInches);
  return {
    paperInches: { width: pw, height: ph },
    turned,
    mode,
    effectivePpi,
    crop,
    lostShare,
    imageInches,
    borderInches: { leftRight: (pw - imageInches.width) / 2, topBottom: (ph - imageInches.height) / 2 },
    viewingDistanceInches,
    eyePpi,
    grade: gradeFor(effectivePpi, eyePpi, t),
  };
}

/** Longest edge (inches) the image can print at `ppi`. */
export function maxPrintLongEdge(longEdgePx: number, ppi: number): number {
  assertPositive('ppi', ppi);
  return longEdgePx / ppi;
}
