/** Capture notes for display: exposure in the photographer's usual notation. */

export interface CaptureFields {
  make?: string; model?: string; lens?: string;
  exposureTime?: number; fNumber?: number; iso?: number; focalLength?: number; takenAt?: string;
}

/** Shutter speed as photographers write it: 1/125 s below a second, 2 s or 1.5 s above. */
export function formatExposure(seconds: number): string {
  if (!(seconds > 0)) throw new RangeError('exposure time must be positive');
  if (seconds >= 1) return `${Number.isInteger(seconds) ? seconds : seconds.toFixed(1)} s`;
  return `1/${Math.round(1 / seconds)} s`;
}

export function formatAperture(fNumber: number): string {
  return `f/${Number.isInteger(fNumber) ? fNumber : fNumber.toFixed(1)}`;
}

export function captureLines(c: CaptureFields): { label: string; value: string }[] {
  const lines: { label: string; value: string }[] = [];
  if (c.exposureTime) lines.push({ label: 'Exposure', value: formatExposure(c.exposureTime) });
  if (c.fNumber) lines.push({ label: 'Aperture', value: formatAperture(c.fNumber) });
  if (c.iso) lines.push({ label: 'ISO', value: String(c.iso) });
  if (c.focalLength) lines.push({ label: 'Focal length', value: `${c.focalLength} mm` });
  if (c.lens) lines.push({ label: 'Lens', value: c.lens });
  const camera = [c.make, c.model].filter(Boolean).join(' ');
  if (camera) lines.push({ label: 'Camera', value: camera });
  if (c.takenAt) lines.push({ label: 'Taken', value: c.takenAt.slice(0, 10) });
  return lines;
}
