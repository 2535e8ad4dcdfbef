/** Paper sizes: the ISO 216 A series generated from its definition, and pixel sizes at a given ppi. */
import { MM_PER_INCH, type LengthUnit } from './print-grade';

/**
 * ISO 216 A series: A0 is 841 × 1189 mm (1 m², ratio 1:√2); each next size halves the long side,
 * rounded down to whole millimetres. Returns portrait width × height in mm.
 */
export function isoA(n: number): { width: number; height: number } {
  if (!Number.isInteger(n) || n < 0 || n > 10) throw new RangeError('A-series index must be an integer 0..10');
  let width = 841;
  let height = 1189;
  for (let i = 0; i < n; i++) [width, height] = [Math.floor(height / 2), width];
  return { width, height };
}

/** Pixels needed to print `value` (in `unit`) at `ppi`, rounded to whole pixels. */
export function pixelsAt(value: number, unit: LengthUnit, ppi: number): number {
  const inches = unit === 'in' ? value : value / MM_PER_INCH;
  return Math.round(inches * ppi);
}

/** Human label for a size, e.g. "8 × 10 in" or "210 × 297 mm". */
export function sizeLabel(width: number, height: number, unit: LengthUnit): string {
  const fmt = (v: number) => (Number.isInteger(v) ? String(v) : v.toFixed(1).replace(/\.0$/, ''));
  return `${fmt(width)} × ${fmt(height)} ${unit}`;
}
