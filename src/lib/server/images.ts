/**
 * The image pipeline (sharp): reads an original, stores it privately, and makes the public derivatives —
 * watermarked AVIF, WebP and JPEG at fixed sizes, a tiny blurred placeholder and the dominant colour.
 * Used by the demo seed and by Studio uploads.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { createRequire } from 'node:module';
import sharp from 'sharp';
import exifReader from 'exif-reader';
import { parse as parseIcc } from 'icc';
import type { CaptureData, DerivativeFormat, DerivativeSet, VariantName } from './models/Work';

const require = createRequire(import.meta.url);
/** Shipped with the app so watermarks never depend on the fonts a machine happens to have. */
export const WATERMARK_FONT_FILE = require.resolve('@expo-google-fonts/dm-serif-display/400Regular/DMSerifDisplay_400Regular.ttf');

/** Bump when the derivative recipe changes, so new files get new (cache-busting) names. */
const PIPELINE_VERSION = 2;

/**
 * Encoder settings, chosen by measurement (bench/RESULTS.md, image ingest): on a 24 MP upload the
 * slower settings (AVIF effort 2, WebP effort 4, mozjpeg's trellis) took about 4 s of CPU for files
 * 5–15 % smaller; these take about a quarter of that. AVIF effort 0 makes files as small as effort 2 here.
 */
const ENCODE = {
  avif: { quality: 55, effort: 0 },
  webp: { quality: 78, effort: 1 },
  jpeg: { quality: 82, progressive: true, optimiseCoding: true, quantisationTable: 3 },
} as const;

export const VARIANTS: readonly { name: VariantName; longEdge: number }[] = [
  { name: 'sm', longEdge: 480 },
  { name: 'md', longEdge: 960 },
  { name: 'lg', longEdge: 1600 },
  { name: 'xl', longEdge: 2400 },
];
export const FORMATS: readonly DerivativeFormat[] = ['avif', 'webp', 'jpeg'];
export const EXTENSION: Record<DerivativeFormat, string> = { avif: 'avif', webp: 'webp', jpeg: 'jpg' };

/** Default pixel limit for originals (about 100 megapixels); configurable by callers. */
export const DEFAULT_PIXEL_LIMIT = 100_000_000;

export interface ImageFacts {
  format: string;
  /** Pixel size after applying the EXIF orientation. */
  width: number;
  height: number;
  colourProfile: string | null;
  capture: CaptureData;
}

function round(value: number, digits: number): number {
  const f = 10 ** digits;
  return Math.round(value * f) / f;
}

/** Capture data from a raw EXIF block (CIPA DC-008 tags), leaving out what is missing or implausible. */
export function captureFromExif(exif: Buffer | undefined): CaptureData {
  if (!exif) return {};
  let parsed: ReturnType<typeof exifReader>;
  try {
    parsed = exifReader(exif);
  } catch {
    return {};
  }
  const image = parsed.Image ?? {};
  const photo = parsed.Photo ?? {};
  const capture: CaptureData = {};
  const text = (v: unknown) => (typeof v === 'string' && v.trim() ? v.replace(/\0+$/, '').trim() : undefined);
  const positive = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) && v > 0 ? v : undefined);
  capture.make = text(image.Make);
  capture.model = text(image.Model);
  capture.lens = text(photo.LensModel);
  capture.exposureTime = positive(photo.ExposureTime);
  capture.fNumber = positive(photo.FNumber) && round(photo.FNumber as number, 1);
  const iso = photo.ISOSpeedRatings ?? photo.PhotographicSensitivity;
  capture.iso = positive(Array.isArray(iso) ? iso[0] : iso);
  capture.focalLength = positive(photo.FocalLength) && round(photo.FocalLength as number, 1);
  const taken = photo.DateTimeOriginal;
  // EXIF dates carry no zone; exif-reader reads them as UTC, so the ISO string keeps the wall-clock time.
  if (taken instanceof Date && !Number.isNaN(taken.getTime())) capture.takenAt = taken.toISOString().slice(0, 19);
  for (const key of Object.keys(capture) as (keyof CaptureData)[]) if (capture[key] === undefined) delete capture[key];
  return capture;
}

/** Reads an image's header: format, oriented size, colour profile and capture data. No full decode. */
export async function inspectImage(input: string | Buffer, pixelLimit = DEFAULT_PIXEL_LIMIT): Promise<ImageFacts> {
  const meta = await sharp(input, { limitInputPixels: pixelLimit }).metadata();
  if (!meta.width || !meta.height || !meta.format) throw new Error('not a readable image');
  if (meta.width * meta.height > pixelLimit) throw new Error(`image exceeds the pixel limit of ${pixelLimit}`);
  const turned = (meta.orientation ?? 1) >= 5;
  let colourProfile: string | null = null;
  if (meta.icc) {
    try {
      colourProfile = parseIcc(meta.icc).description ?? 'embedded profile';
    } catch {
      colourProfile = 'unreadable profile';
    }
  }
  return {
    format: meta.format,
    width: turned ? meta.height : meta.width,
    height: turned ? meta.width : meta.height,
    colourProfile,
    capture: captureFromExif(meta.exif),
  };
}

export async function sha256File(file: string): Promise<string> {
  const hash = crypto.createHash('sha256');
  for await (const chunk of fs.createReadStream(file)) hash.update(chunk as Buffer);
  return hash.digest('hex');
}

/** Writes `data` next to `target` under a temporary name, then renames it into place. */
export async function writeFileAtomic(target: string, data: Buffer): Promise<void> {
  await fsp.mkdir(path.dirname(target), { recursive: true });
  const temp = `${target}.${crypto.randomBytes(6).toString('hex')}.tmp`;
  await fsp.writeFile(temp, data);
  await fsp.rename(temp, target);
}

/** Stores an original under a random name in `originalsDir` and returns its key (never shown to anyone). */
export async function storeOriginal(source: string | Buffer, originalsDir: string, extension: string): Promise<string> {
  const key = `${crypto.randomUUID()}.${extension.replace(/[^a-z0-9]/gi, '').toLowerCase()}`;
  const target = path.join(originalsDir, key);
  if (Buffer.isBuffer(source)) await writeFileAtomic(target, source);
  else {
    await fsp.mkdir(originalsDir, { recursive: true });
    const temp = `${target}.tmp`;
    await fsp.copyFile(source, temp);
    await fsp.rename(temp, target);
  }
  return key;
}

const watermarkCache = new Map<string, Buffer>();

/** The watermark for an image of `width` px: the shop's text, light and translucent, about half the width. */
async function watermarkFor(text: string, width: number): Promise<Buffer> {
  const cacheKey = `${width}\u0000${text}`;
  const cached = watermarkCache.get(cacheKey);
  if (cached) return cached;
  const escaped = text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
  const rendered = await sharp({
    text: {
      text: `<span foreground="#ffffff">${escaped}</span>`,
      font: 'DM Serif Display',
      fontfile: WATERMARK_FONT_FILE,
      width: Math.round(width * 0.56),
      height: Math.round(width * 0.07),
      rgba: true,
      align: 'centre',
    },
  })
    .png()
    .toBuffer();
  // Fade the glyphs to a quiet 30 % so the picture still reads through.
  const faded = await sharp(rendered).ensureAlpha().linear([1, 1, 1, 0.3], [0, 0, 0, 0]).png().toBuffer();
  watermarkCache.set(cacheKey, faded);
  return faded;
}

/**
 * Encodes running at once: one per core keeps the cores busy (each encode runs on one libvips thread
 * here); more only add encoders' working memory to the peak (bench/RESULTS.md, image ingest).
 */
const ENCODES_AT_ONCE = Math.max(2, os.availableParallelism());

// libvips' operation cache keeps recent results for reuse; this app never repeats an operation on the same
// pixels, so it only raised the peak memory of an upload (by about 30 MB on 24 MP).
sharp.cache(false);

/** Runs the tasks with at most `limit` in flight, in the order given; rejects on the first failure. */
async function runAtMost(limit: number, tasks: (() => Promise<unknown>)[]): Promise<void> {
  let next = 0;
  const worker = async () => {
    while (next < tasks.length) await tasks[next++]!();
  };
  await Promise.all(Array.from({ length: Math.min(limit, tasks.length) }, worker));
}

export interface DerivativeResult {
  derivatives: DerivativeSet;
  placeholder: string;
  dominantColor: string;
}

function hex(n: number): string {
  return Math.max(0, Math.min(255, Math.round(n))).toString(16).padStart(2, '0');
}

/**
 * Makes every public derivative of an original: oriented, converted to sRGB, watermarked, at each variant
 * size in AVIF, WebP and JPEG. Files go to a temporary folder renamed into place, so a crash leaves no half set.
 */
export async function makeDerivatives(
  originalPath: string,
  options: { derivativesDir: string; watermarkText: string; contentHash: string; pixelLimit?: number },
): Promise<DerivativeResult> {
  const key = crypto
    .createHash('sha256')
    .update(`${options.contentHash}\u0000${options.watermarkText}\u0000${PIPELINE_VERSION}`)
    .digest('hex')
    .slice(0, 24);
  const largest = VARIANTS[VARIANTS.length - 1]!.longEdge;
  // Decode the original once, into an oriented sRGB working copy no larger than the biggest variant.
  const { data, info } = await sharp(originalPath, { limitInputPixels: options.pixelLimit ?? DEFAULT_PIXEL_LIMIT })
    .rotate()
    .resize(largest, largest, { fit: 'inside', withoutEnlargement: true })
    .toColourspace('srgb')
    .removeAlpha()
    .raw()
    .toBuffer({ resolveWithObject: true });
  const raw = { raw: { width: info.width, height: info.height, channels: info.channels } } as const;

  const finalDir = path.join(options.derivativesDir, key);
  const variants: DerivativeSet['variants'] = [];
  const tempDir = `${finalDir}.${crypto.randomBytes(6).toString('hex')}.tmp`;
  await fsp.mkdir(tempDir, { recursive: true });
  let tiny: Buffer;
  let stats: sharp.Stats;
  try {
    // Each size is resized and watermarked in one pass (all sizes side by side); then every file of every
    // size is encoded at once, largest first, so both cores stay busy to the last file (libuv's pool runs
    // four at a time). Sizes one after another, each waiting for its slowest format, left a core idle.
    const longEdge = Math.max(info.width, info.height);
    // A small original stops at its own size: no variant larger than the one that reaches it.
    const needed = VARIANTS.slice(0, VARIANTS.findIndex((v) => v.longEdge >= longEdge) + 1 || VARIANTS.length);
    const marked = await Promise.all(
      needed.map(async (variant) => {
        const mark = await watermarkFor(options.watermarkText, Math.round(info.width * Math.min(1, variant.longEdge / longEdge)));
        const out = await sharp(data, raw)
          .resize(variant.longEdge, variant.longEdge, { fit: 'inside', withoutEnlargement: true })
          .composite([{ input: mark, gravity: 'centre' }])
          .raw()
          .toBuffer({ resolveWithObject: true });
        return { name: variant.name, data: out.data, width: out.info.width, height: out.info.height, channels: out.info.channels };
      }),
    );
    variants.push(...marked.map(({ name, width, height }) => ({ name, width, height })));
    const encodes = [...marked].reverse().flatMap((m) => {
      const source = () => sharp(m.data, { raw: { width: m.width, height: m.height, channels: m.channels } }).removeAlpha().withIccProfile('srgb');
      return [
        () => source().avif(ENCODE.avif).toFile(path.join(tempDir, `${m.name}.avif`)),
        () => source().webp(ENCODE.webp).toFile(path.join(tempDir, `${m.name}.webp`)),
        () => source().jpeg(ENCODE.jpeg).toFile(path.join(tempDir, `${m.name}.jpg`)),
      ];
    });
    [tiny, stats] = await Promise.all([
      sharp(data, raw).resize(24, 24, { fit: 'inside' }).blur(1.2).webp({ quality: 40 }).toBuffer(),
      sharp(data, raw).resize(64, 64, { fit: 'inside' }).stats(),
      runAtMost(ENCODES_AT_ONCE, encodes),
    ]);
    // The folder's name is a hash of everything that went into it, so a folder already there (another
    // process got there first) holds the same files: keep it and drop ours.
    try {
      await fsp.rename(tempDir, finalDir);
    } catch (error) {
      const code = (error as NodeJS.ErrnoException).code;
      if (code !== 'ENOTEMPTY' && code !== 'EEXIST') throw error;
      await fsp.rm(tempDir, { recursive: true, force: true });
    }
  } catch (error) {
    await fsp.rm(tempDir, { recursive: true, force: true });
    throw error;
  }

  const { dominant } = stats;
  return {
    derivatives: { key, formats: [...FORMATS], variants },
    placeholder: `data:image/webp;base64,${tiny.toString('base64')}`,
    dominantColor: `#${hex(dominant.r)}${hex(dominant.g)}${hex(dominant.b)}`,
  };
}

/** Path of one derivative file, or null when the request does not name one exactly (no traversal). */
export function derivativeFilePath(derivativesDir: string, key: string, file: string): string | null {
  if (!/^[a-f0-9]{24}$/.test(key)) return null;
  const match = /^(sm|md|lg|xl)\.(avif|webp|jpg)$/.exec(file);
  if (!match) return null;
  return path.join(derivativesDir, key, file);
}

export const CONTENT_TYPE: Record<string, string> = { avif: 'image/avif', webp: 'image/webp', jpg: 'image/jpeg' };
