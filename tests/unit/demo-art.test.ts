import exifReader from 'exif-reader';
import sharp from 'sharp';
import { describe, expect, it } from 'vitest';
import { DEMO_SCENE_SLUGS, renderDemoOriginal, type CaptureData } from '../../db/seeders/demo-art';

// EXIF tag meanings: CIPA DC-008 (Exif 2.32). ExposureTime (0x829A), FNumber (0x829D) and
// FocalLength (0x920A) are RATIONALs; ISOSpeedRatings / PhotographicSensitivity (0x8827) is a SHORT;
// DateTimeOriginal (0x9003) is "YYYY:MM:DD HH:MM:SS" with no zone; LensModel (0xA434) is ASCII.

const capture: CaptureData = {
  make: 'Stillmark Demo Optics',
  model: 'SD-1 (generated)',
  lens: '90 mm 1:2.8 Macro (generated)',
  exposureTime: '1/125',
  fNumber: 11,
  iso: 100,
  focalLength: 90,
  takenAt: '2026-03-14T10:22:05',
};
const render = (slug: string, width: number, height: number) =>
  renderDemoOriginal(slug, { width, height, capture, artist: 'Demo Artist', copyright: '2026 Demo Artist', description: `Demo ${slug}` });

describe('demo art', () => {
  it('lists the sixteen demo scenes', () => {
    expect(DEMO_SCENE_SLUGS).toHaveLength(16);
    expect(DEMO_SCENE_SLUGS).toContain('carafe-amber-hour');
    expect(DEMO_SCENE_SLUGS).toContain('egg-held-light');
  });

  it('renders a JPEG of exactly the requested size, landscape and portrait', async () => {
    for (const [slug, width, height] of [['carafe-amber-hour', 600, 400], ['spools', 400, 600]] as const) {
      const meta = await sharp(await render(slug, width, height)).metadata();
      expect(meta).toMatchObject({ format: 'jpeg', width, height, space: 'srgb', channels: 3, isProgressive: false });
    }
  });

  it('writes the capture data into EXIF so that it reads back', async () => {
    const meta = await sharp(await render('three-pears', 600, 400)).metadata();
    const exif = exifReader(meta.exif!);
    expect(exif.Image).toMatchObject({
      Make: 'Stillmark Demo Optics',
      Model: 'SD-1 (generated)',
      Artist: 'Demo Artist',
      Copyright: '2026 Demo Artist',
      ImageDescription: 'Demo three-pears',
    });
    expect(exif.Photo?.ExposureTime).toBeCloseTo(1 / 125, 6); // 0.008 s
    expect(exif.Photo?.FNumber).toBe(11);
    expect(exif.Photo?.ISOSpeedRatings).toBe(100);
    expect(exif.Photo?.FocalLength).toBe(90);
    expect(exif.Photo?.LensModel).toBe('90 mm 1:2.8 Macro (generated)');
    expect(exif.Photo?.ColorSpace).toBe(1); // sRGB
    // exif-reader reads the zone-less EXIF date as UTC, so the ISO string keeps the wall-clock time.
    expect((exif.Photo?.DateTimeOriginal as Date).toISOString().slice(0, 19)).toBe('2026-03-14T10:22:05');
  });

  it('is deterministic per slug and differs between slugs', async () => {
    const a1 = await render('moon-snail', 600, 400);
    const a2 = await render('moon-snail', 600, 400);
    const b = await render('cowrie-row', 600, 400);
    expect(a1.equals(a2)).toBe(true);
    expect(a1.equals(b)).toBe(false);
    const pixels = async (buf: Buffer) => sharp(buf).resize(60, 40).raw().toBuffer();
    const [pa, pb] = await Promise.all([pixels(a1), pixels(b)]);
    const meanDiff = pa.reduce((sum, v, i) => sum + Math.abs(v - pb[i]), 0) / pa.length;
    expect(meanDiff).toBeGreaterThan(8);
  });

  it('rejects an unknown scene', async () => {
    await expect(render('no-such-scene', 60, 40)).rejects.toThrow(/unknown scene/);
  });
});
