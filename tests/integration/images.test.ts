import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { parse as parseIcc } from 'icc';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { derivativeFilePath, inspectImage, makeDerivatives, sha256File, storeOriginal } from '~/lib/server/images';

let dir: string;
let original: string;

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillmark-images-'));
  original = path.join(dir, 'original.jpg');
  // A flat 6000×4000 frame in one known colour, with a Display P3 profile attached.
  await sharp({ create: { width: 6000, height: 4000, channels: 3, background: { r: 40, g: 90, b: 160 } } })
    .withIccProfile('p3')
    .jpeg({ quality: 95 })
    .toFile(original);
});
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

const magic = (file: string) => fs.readFileSync(file).subarray(0, 12);

describe('image pipeline', () => {
  it('reads pixel size and colour profile from the header', async () => {
    const facts = await inspectImage(original);
    expect(facts).toMatchObject({ format: 'jpeg', width: 6000, height: 4000 });
    expect(facts.colourProfile).toMatch(/P3/);
  });

  it('swaps width and height for EXIF orientations 5–8 (CIPA DC-008 Orientation tag)', async () => {
    const turned = path.join(dir, 'turned.jpg');
    await sharp({ create: { width: 300, height: 200, channels: 3, background: '#888' } }).withMetadata({ orientation: 6 }).jpeg().toFile(turned);
    expect(await inspectImage(turned)).toMatchObject({ width: 200, height: 300 });
  });

  it('refuses an image above the pixel limit before decoding it', async () => {
    // sharp limitInputPixels semantics (TRADE-FACTS §6): 6000×4000 = 24 MP is over a 20 MP limit
    await expect(inspectImage(original, 20_000_000)).rejects.toThrow(/pixel limit/);
  });

  it('makes every derivative at its exact size and format, watermarked, in sRGB', async () => {
    const derivativesDir = path.join(dir, 'derivatives');
    const result = await makeDerivatives(original, { derivativesDir, watermarkText: '© Test preview', contentHash: await sha256File(original) });
    // Long edges 480/960/1600/2400 on a 3:2 frame: height = round(long × 2/3)
    expect(result.derivatives.variants).toEqual([
      { name: 'sm', width: 480, height: 320 },
      { name: 'md', width: 960, height: 640 },
      { name: 'lg', width: 1600, height: 1067 },
      { name: 'xl', width: 2400, height: 1600 },
    ]);
    for (const v of result.derivatives.variants) {
      const base = path.join(derivativesDir, result.derivatives.key, v.name);
      // Magic bytes: JPEG FF D8 FF; WebP "RIFF"…"WEBP"; AVIF "ftypavif" at bytes 4–11 (TRADE-FACTS §6)
      expect([...magic(`${base}.jpg`).subarray(0, 3)]).toEqual([0xff, 0xd8, 0xff]);
      expect(magic(`${base}.webp`).toString('latin1', 0, 4) + magic(`${base}.webp`).toString('latin1', 8, 12)).toBe('RIFFWEBP');
      expect(magic(`${base}.avif`).toString('latin1', 4, 12)).toBe('ftypavif');
      const meta = await sharp(`${base}.jpg`).metadata();
      expect([meta.width, meta.height]).toEqual([v.width, v.height]);
      expect(meta.exif).toBeUndefined();
      expect(meta.icc).toBeDefined();
    }
    const lg = path.join(derivativesDir, result.derivatives.key, 'lg.jpg');
    // Derivatives carry an sRGB profile whatever the original had (IEC 61966-2-1 default web colour space)
    expect(parseIcc((await sharp(lg).metadata()).icc!).description).toMatch(/sRGB/);
    // The watermark brightens the centre; the corners keep the flat colour.
    const { data, info } = await sharp(lg).raw().toBuffer({ resolveWithObject: true });
    const at = (x: number, y: number) => data[(y * info.width + x) * info.channels]!;
    let brighter = 0;
    for (let x = Math.round(info.width * 0.3); x < info.width * 0.7; x += 2) if (at(x, Math.round(info.height / 2)) > at(5, 5) + 25) brighter++;
    expect(brighter).toBeGreaterThan(10);
    expect(result.placeholder).toMatch(/^data:image\/webp;base64,/);
    expect(result.placeholder.length).toBeLessThan(1200);
    expect(result.dominantColor).toMatch(/^#[0-9a-f]{6}$/);
  });

  it('stores originals under a random name and never serves them', async () => {
    const originalsDir = path.join(dir, 'originals');
    const key = await storeOriginal(original, originalsDir, 'jpg');
    expect(key).toMatch(/^[0-9a-f-]{36}\.jpg$/);
    expect(fs.existsSync(path.join(originalsDir, key))).toBe(true);
    expect(fs.readdirSync(originalsDir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
    const d = path.join(dir, 'derivatives');
    expect(derivativeFilePath(d, 'a'.repeat(24), 'lg.jpg')).toBe(path.join(d, 'a'.repeat(24), 'lg.jpg'));
    for (const [k, f] of [['a'.repeat(24), '../originals/x.jpg'], ['..', 'lg.jpg'], ['a'.repeat(24), 'lg.png'], ['a'.repeat(23), 'lg.jpg']] as const) {
      expect(derivativeFilePath(d, k, f)).toBeNull();
    }
  });
});
