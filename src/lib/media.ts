/** URLs of public derivative files and the srcsets built from them. Isomorphic: no I/O. */

export type DerivativeFormat = 'avif' | 'webp' | 'jpeg';
export interface PictureVariant { name: string; width: number; height: number }
export interface PictureData {
  key: string;
  formats: DerivativeFormat[];
  variants: PictureVariant[];
  placeholder: string;
  dominantColor: string;
  alt: string;
  width: number;
  height: number;
}

const EXT: Record<DerivativeFormat, string> = { avif: 'avif', webp: 'webp', jpeg: 'jpg' };
export const MIME: Record<DerivativeFormat, string> = { avif: 'image/avif', webp: 'image/webp', jpeg: 'image/jpeg' };

export function mediaUrl(key: string, variant: string, format: DerivativeFormat): string {
  return `/media/${key}/${variant}.${EXT[format]}`;
}

export function srcset(picture: Pick<PictureData, 'key' | 'variants'>, format: DerivativeFormat, maxWidth = Infinity): string {
  return picture.variants
    .filter((v, i) => i === 0 || v.width <= maxWidth)
    .map((v) => `${mediaUrl(picture.key, v.name, format)} ${v.width}w`)
    .join(', ');
}

/** The variant closest to `width` px wide without going under it (or the largest there is). */
export function variantAtLeast(picture: Pick<PictureData, 'variants'>, width: number): PictureVariant {
  return picture.variants.find((v) => v.width >= width) ?? picture.variants[picture.variants.length - 1]!;
}
