/**
 * The lab pack's arithmetic: the exact pixel size of a print file at the lab's ppi, the paper turned to
 * the picture, the part of the picture that is printed (fill) and where the picture sits on a white
 * sheet (fit). Pure: no I/O, shared by the server that makes the file and the pages that describe it.
 */
import { gradePrint, type CropRect, type FocalPoint, type PixelSize, type PrintMode, type PrintSize } from './print-grade';
import { pixelsAt } from './paper-sizes';
import { STATE_LABEL, isOrderState } from './order-states';
import { slugOf } from './slug';

/** ppi the shop may ask the lab file to be made at. */
export const LAB_PPI_RANGE = { min: 72, max: 1200 } as const;
export const DEFAULT_LAB_PPI = 300;

export const LAB_FORMATS = ['tiff16', 'jpeg'] as const;
export type LabFormat = (typeof LAB_FORMATS)[number];
export const LAB_FORMAT_LABEL: Record<LabFormat, string> = { tiff16: '16-bit TIFF', jpeg: 'Maximum-quality JPEG' };
export const LAB_FORMAT_EXTENSION: Record<LabFormat, string> = { tiff16: 'tif', jpeg: 'jpg' };
export const LAB_FORMAT_MIME: Record<LabFormat, string> = { tiff16: 'image/tiff', jpeg: 'image/jpeg' };

/** Order states in which a print line may be prepared for the lab. */
export const LAB_ORDER_STATES = ['paid', 'in_production', 'partly_refunded'] as const;

export interface LabLineFacts {
  kind: 'licence' | 'print';
  /** Amount refunded on the line and the line's subtotal, in minor units. */
  refunded: number;
  subtotal: number;
}

/** A print line refunded in full is not made. */
export function refundedInFull(line: Pick<LabLineFacts, 'refunded' | 'subtotal'>): boolean {
  return line.refunded >= line.subtotal;
}

/** True for a line that must have a lab pack before its order goes into production. */
export function needsLabPack(line: LabLineFacts & { labPack: unknown }): boolean {
  return line.kind === 'print' && !refundedInFull(line) && !line.labPack;
}

export interface LabRefusal {
  status: 409;
  code: 'not_a_print' | 'order_not_ready' | 'line_refunded';
  message: string;
}

/** Why a line cannot be prepared for the lab now, or null when it can. */
export function labRefusal(orderStatus: string, line: LabLineFacts): LabRefusal | null {
  if (line.kind !== 'print') return { status: 409, code: 'not_a_print', message: 'This line is a licence; only prints go to the lab.' };
  if (!(LAB_ORDER_STATES as readonly string[]).includes(orderStatus)) {
    const state = isOrderState(orderStatus) ? STATE_LABEL[orderStatus].toLowerCase() : orderStatus;
    return { status: 409, code: 'order_not_ready', message: `The order is ${state}; only orders that are paid, in production or partly refunded go to the lab.` };
  }
  if (refundedInFull(line)) return { status: 409, code: 'line_refunded', message: 'This print was refunded in full; it is not to be made.' };
  return null;
}

/** What the Dispatch order page shows of a prepared pack. */
export interface LabPackView {
  format: LabFormat;
  widthPx: number;
  heightPx: number;
  ppi: number;
  bytes: number;
  preparedAt: string;
  fileName: string;
  fileUrl: string;
  sheetUrl: string;
}

/**
 * True when the paper is turned from its stored (portrait) form to match the picture: a landscape
 * picture prints on landscape paper and a portrait one on portrait paper; a square picture leaves the
 * paper as it is. The same rule as `gradePrint`, so the file matches the grade the buyer was shown.
 */
export function isTurned(image: PixelSize, print: Pick<PrintSize, 'width' | 'height'>): boolean {
  return (image.width > image.height && print.height > print.width) || (image.height > image.width && print.width > print.height);
}

export interface LabSheet {
  /** Exact pixel size of the file: the print size × ppi, each side rounded to whole pixels. */
  width: number;
  height: number;
  turned: boolean;
}

/**
 * The file's pixel size for `print` at `ppi`, turned to the picture's orientation. Each side is
 * round(length in inches × ppi), with 1 in = 25.4 mm: A4 at 300 ppi is 2480 × 3508.
 */
export function labSheetPixels(image: PixelSize, print: PrintSize, ppi: number): LabSheet {
  if (!Number.isFinite(ppi) || ppi <= 0) throw new RangeError('ppi must be a positive number');
  const turned = isTurned(image, print);
  const w = pixelsAt(print.width, print.unit, ppi);
  const h = pixelsAt(print.height, print.unit, ppi);
  if (w < 1 || h < 1) throw new RangeError('the print is smaller than one pixel at this ppi');
  return turned ? { width: h, height: w, turned } : { width: w, height: h, turned };
}

/** Where a picture scaled to fit lands on the sheet, in sheet pixels. */
export interface Placement {
  left: number;
  top: number;
  width: number;
  height: number;
}

/**
 * Fit ("contain"): the whole picture scaled to the largest size inside the sheet, centred, the rest
 * left white. The side that limits the scale fills the sheet exactly; an odd leftover pixel goes to
 * the right or bottom border.
 */
export function fitPlacement(image: PixelSize, sheet: PixelSize): Placement {
  if (!(image.width > 0 && image.height > 0 && sheet.width > 0 && sheet.height > 0)) throw new RangeError('sizes must be positive');
  let width: number;
  let height: number;
  // Compare image.width / image.height with sheet.width / sheet.height without dividing.
  if (image.width * sheet.height >= sheet.width * image.height) {
    width = sheet.width;
    height = Math.min(sheet.height, Math.max(1, Math.round((image.height * sheet.width) / image.width)));
  } else {
    height = sheet.height;
    width = Math.min(sheet.width, Math.max(1, Math.round((image.width * sheet.height) / image.height)));
  }
  return { left: Math.floor((sheet.width - width) / 2), top: Math.floor((sheet.height - height) / 2), width, height };
}

function cropInside(crop: CropRect, image: PixelSize): boolean {
  return [crop.left, crop.top, crop.width, crop.height].every(Number.isInteger)
    && crop.left >= 0 && crop.top >= 0 && crop.width >= 1 && crop.height >= 1
    && crop.left + crop.width <= image.width && crop.top + crop.height <= image.height;
}

export interface LabPlanInput {
  /** The original's pixel size, upright (EXIF orientation applied). */
  image: PixelSize;
  print: PrintSize;
  mode: PrintMode;
  ppi: number;
  /** The focal point the crop is centred on (fill). */
  focal?: FocalPoint;
  /** The crop recorded when the print was bought; used when it still fits the original. */
  crop?: CropRect | null;
}

export interface LabPlan {
  sheet: LabSheet;
  mode: PrintMode;
  /** The part of the original that is printed, in original pixels (the whole picture for fit). */
  crop: CropRect;
  /** Where that part lands on the sheet (the whole sheet for fill). */
  placement: Placement;
  /** White border on each side in sheet pixels (zero for fill). */
  border: { left: number; right: number; top: number; bottom: number };
}

/** Everything the lab file's pipeline needs: the crop to cut, the size to make it and where it goes. */
export function labPlan(input: LabPlanInput): LabPlan {
  const { image, print, mode, ppi } = input;
  const sheet = labSheetPixels(image, print, ppi);
  let crop: CropRect;
  let placement: Placement;
  if (mode === 'fill') {
    crop = input.crop && cropInside(input.crop, image) ? { ...input.crop } : gradePrint({ image, print, mode: 'fill', focal: input.focal }).crop;
    placement = { left: 0, top: 0, width: sheet.width, height: sheet.height };
  } else {
    crop = { left: 0, top: 0, width: image.width, height: image.height };
    placement = fitPlacement(image, sheet);
  }
  return {
    sheet,
    mode,
    crop,
    placement,
    border: {
      left: placement.left,
      right: sheet.width - placement.left - placement.width,
      top: placement.top,
      bottom: sheet.height - placement.top - placement.height,
    },
  };
}

/** A file name part from free text: ASCII letters, digits and hyphens. */
export function fileSlug(text: string, fallback = 'print'): string {
  return slugOf(text, fallback, 40);
}

/** The lab file's name, e.g. "SM-261203-ABCDEF-L12-three-pears-a4-fill-300ppi.tif". */
export function labFileName(p: { orderNumber: string; lineId: number; workSlug: string; sizeLabel: string; mode: PrintMode; ppi: number; format: LabFormat }): string {
  const order = p.orderNumber.replace(/[^A-Za-z0-9-]/g, '') || 'order';
  return `${order}-L${p.lineId}-${fileSlug(p.workSlug, 'work')}-${fileSlug(p.sizeLabel, 'size')}-${p.mode}-${p.ppi}ppi.${LAB_FORMAT_EXTENSION[p.format]}`;
}
