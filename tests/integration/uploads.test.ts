import fs from 'node:fs';
import path from 'node:path';
import zlib from 'node:zlib';
import sharp from 'sharp';
import type { APIContext } from 'astro';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { POST } from '~/pages/api/studio/uploads';
import { config, resetConfigForTests } from '~/lib/server/config';
import type { Role } from '~/lib/roles';
import { Work, insertSettings, useTempDatabase, type TestData } from '../_fixtures';

let data: TestData;

beforeAll(async () => {
  data = await useTempDatabase();
  await insertSettings({ watermarkText: '© Upload test' });
});
afterAll(async () => data.cleanup());
afterEach(() => {
  delete process.env.UPLOAD_MAX_MB;
  delete process.env.UPLOAD_MAX_MEGAPIXELS;
  resetConfigForTests();
});

function useLimits(limits: { mb?: number; megapixels?: number }) {
  if (limits.mb) process.env.UPLOAD_MAX_MB = String(limits.mb);
  if (limits.megapixels) process.env.UPLOAD_MAX_MEGAPIXELS = String(limits.megapixels);
  resetConfigForTests();
}

const userWith = (role: Role) => ({ id: `user-${role}`, email: `${role}@example.test`, name: role, role, emailVerified: true });

interface UploadOptions {
  name?: string | null;
  role?: Role | null;
  headers?: Record<string, string>;
}

async function upload(body: Uint8Array | string | ReadableStream<Uint8Array> | null, { name = 'upload.jpg', role = 'photographer', headers = {} }: UploadOptions = {}) {
  const h = new Headers({ 'Content-Type': 'application/octet-stream', ...headers });
  if (name !== null) h.set('X-File-Name', encodeURIComponent(name));
  // `duplex: 'half'` is what fetch requires for a streamed request body.
  const init = { method: 'POST', headers: h, body, duplex: 'half' } as RequestInit;
  const request = new Request('http://localhost/api/studio/uploads', init);
  const locals = { user: role ? userWith(role) : null, session: null };
  const response = await POST({ request, locals } as unknown as APIContext);
  return { response, status: response.status, body: (await response.json()) as any };
}

let shade = 0;
/** A small picture no earlier test has made (each gets its own colours, so duplicates are never accidental). */
function picture(width = 640, height = 480) {
  shade += 1;
  const a = { r: (shade * 37) % 256, g: (shade * 71) % 256, b: (shade * 113) % 256 };
  const overlay = Buffer.from(
    `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}"><circle cx="${width / 2}" cy="${height / 2}" r="${Math.min(width, height) / 3}" fill="rgb(${255 - a.r},${255 - a.g},${255 - a.b})"/></svg>`,
  );
  return sharp({ create: { width, height, channels: 3, background: a } }).composite([{ input: overlay }]);
}

/** Grain in every pixel, so cutting the file short really removes picture data. */
const grainy = (width: number, height: number) =>
  sharp({ create: { width, height, channels: 3, background: '#808080', noise: { type: 'gaussian', mean: 128, sigma: 50 } } }).jpeg({ quality: 90 }).toBuffer();

const list = (dir: string) => (fs.existsSync(dir) ? fs.readdirSync(dir).sort() : []);

async function snapshot() {
  const { incomingDir, originalsDir, derivativesDir } = config();
  return { incoming: list(incomingDir), originals: list(originalsDir), derivatives: list(derivativesDir), works: await Work.count() };
}

/** Runs a refused upload and checks that it left no file and no row anywhere. */
async function expectRefusedWithoutTrace<R extends { status: number; body: any }>(run: () => Promise<R>, status: number, code: string): Promise<R> {
  const before = await snapshot();
  const result = await run();
  expect(result.status).toBe(status);
  expect(result.body.error.code).toBe(code);
  expect(typeof result.body.error.message).toBe('string');
  const after = await snapshot();
  expect(after.incoming).toEqual([]);
  expect(after).toEqual({ ...before, incoming: [] });
  return result;
}

function walk(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? walk(path.join(dir, e.name)) : [path.join(dir, e.name)]));
}

/** A stream of `chunks`, then either the end or an error; counts what was pulled. */
function streamOf(chunks: Iterable<Uint8Array>, end: 'close' | Error = 'close') {
  const iterator = chunks[Symbol.iterator]();
  const pulled = { bytes: 0, cancelled: false };
  const stream = new ReadableStream<Uint8Array>({
    pull(controller) {
      const next = iterator.next();
      if (!next.done) {
        pulled.bytes += next.value.byteLength;
        controller.enqueue(next.value);
      } else if (end === 'close') controller.close();
      else controller.error(end);
    },
    cancel() {
      pulled.cancelled = true;
    },
  }, { highWaterMark: 0 });
  return { stream, pulled };
}

function* endless(first: Uint8Array, chunkBytes: number) {
  yield first;
  for (;;) yield new Uint8Array(chunkBytes);
}

/** A PNG whose header claims `width`×`height` with nothing real behind it: a pixel-flood ("decompression bomb") probe. */
function pngClaiming(width: number, height: number): Buffer {
  const chunk = (type: string, payload: Buffer) => {
    const length = Buffer.alloc(4);
    length.writeUInt32BE(payload.length);
    const body = Buffer.concat([Buffer.from(type, 'latin1'), payload]);
    const crc = Buffer.alloc(4);
    crc.writeUInt32BE(zlib.crc32(body));
    return Buffer.concat([length, body, crc]);
  };
  // IHDR: width, height, bit depth 8, colour type 2 (truecolour), compression 0, filter 0, interlace 0 (PNG spec §11.2.2)
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr.set([8, 2, 0, 0, 0], 8);
  const signature = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
  return Buffer.concat([signature, chunk('IHDR', ihdr), chunk('IDAT', zlib.deflateSync(Buffer.alloc(1024))), chunk('IEND', Buffer.alloc(0))]);
}

describe('POST /api/studio/uploads — accepted originals', () => {
  const formats = [
    { format: 'jpeg', name: 'Quince on slate.jpg', ext: 'jpg' },
    { format: 'png', name: 'Pear study.png', ext: 'png' },
    { format: 'tiff', name: 'Lemon, cut.tif', ext: 'tif' },
    { format: 'webp', name: 'Fig.webp', ext: 'webp' },
  ] as const;

  for (const { format, name, ext } of formats) {
    it(`takes a ${format.toUpperCase()} file and makes a draft work with derivatives`, async () => {
      const bytes = await picture(640, 480).toFormat(format).toBuffer();
      const { status, body } = await upload(bytes, { name });
      expect(status).toBe(201);
      const title = name.replace(/\.[a-z]+$/, '');
      expect(body.work).toMatchObject({ title, width: 640, height: 480, status: 'draft' });
      expect(Object.keys(body.work).sort()).toEqual(['height', 'id', 'slug', 'status', 'title', 'width']);

      const work = (await Work.findByPk(body.work.id))!;
      expect(work).toMatchObject({ status: 'draft', publishedAt: null, altText: '', caption: '', orientation: 'landscape', seriesId: null });
      expect(work.keywords).toEqual([]);
      // Stored under a server-made random name with the extension of what the content is (OWASP File Upload: rename).
      expect(work.originalKey).toMatch(new RegExp(`^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}\\.${ext}$`));
      const stored = path.join(config().originalsDir, work.originalKey);
      expect(fs.readFileSync(stored).equals(bytes)).toBe(true); // the original is kept untouched
      expect(fs.statSync(stored).mode & 0o077).toBe(0); // readable by the server's user only
      const folder = path.join(config().derivativesDir, work.derivatives.key);
      expect(work.derivatives.variants.map((v) => v.name)).toEqual(['sm', 'md']); // 480 px, then its own 640 px
      for (const v of work.derivatives.variants) for (const e of ['avif', 'webp', 'jpg']) expect(fs.existsSync(path.join(folder, `${v.name}.${e}`))).toBe(true);
      expect(work.placeholder).toMatch(/^data:image\/webp;base64,/);
      expect(list(config().incomingDir)).toEqual([]);
    });
  }

  it('lets the content decide: a PNG named .jpg is stored as PNG', async () => {
    const { status, body } = await upload(await picture(300, 300).png().toBuffer(), { name: 'really-a-png.jpg' });
    expect(status).toBe(201);
    const work = (await Work.findByPk(body.work.id))!;
    expect(work.originalKey).toMatch(/\.png$/);
    expect(work.orientation).toBe('square');
  });

  it('gives width and height as displayed for EXIF orientation 6 (CIPA DC-008 Orientation 0x0112: rotate 90° CW)', async () => {
    const bytes = await picture(600, 400).withMetadata({ orientation: 6 }).jpeg().toBuffer();
    const { status, body } = await upload(bytes, { name: 'turned.jpg' });
    expect(status).toBe(201);
    expect(body.work).toMatchObject({ width: 400, height: 600 });
    expect((await Work.findByPk(body.work.id))!.orientation).toBe('portrait');
  });

  it('reads capture data from the EXIF block', async () => {
    const bytes = await picture(320, 240)
      .withExif({
        IFD0: { Make: 'Testmaker', Model: 'Bench 1' },
        // IFD2 is sharp's name for the Exif IFD; rationals are written as "numerator/denominator"
        IFD2: { ExposureTime: '1/125', FNumber: '8/1', ISOSpeedRatings: '100', FocalLength: '105/1', DateTimeOriginal: '2026:03:14 10:20:30' },
      })
      .jpeg()
      .toBuffer();
    const { status, body } = await upload(bytes, { name: 'exif.jpg' });
    expect(status).toBe(201);
    const work = (await Work.findByPk(body.work.id))!;
    expect(work.capture).toEqual({
      make: 'Testmaker', // Make 0x010F (IFD0)
      model: 'Bench 1', // Model 0x0110 (IFD0)
      exposureTime: 0.008, // ExposureTime 0x829A, RATIONAL seconds: 1/125 = 0.008 s (TRADE-FACTS §4.2)
      fNumber: 8, // FNumber 0x829D, RATIONAL: 8/1 → f/8 (TRADE-FACTS §4.2)
      iso: 100, // ISOSpeedRatings (PhotographicSensitivity) 0x8827, SHORT (TRADE-FACTS §4.2)
      focalLength: 105, // FocalLength 0x920A, RATIONAL mm (TRADE-FACTS §4.2)
      takenAt: '2026-03-14T10:20:30', // DateTimeOriginal 0x9003, "YYYY:MM:DD HH:MM:SS", no zone
    });
  });

  it('records the colour profile of a Display P3 image', async () => {
    const bytes = await picture(320, 240).withIccProfile('p3').jpeg().toBuffer();
    const { status, body } = await upload(bytes, { name: 'p3.jpg' });
    expect(status).toBe(201);
    expect((await Work.findByPk(body.work.id))!.colourProfile).toMatch(/P3/);
  });

  it('makes a safe title from hostile names and still stores the file under a random name', async () => {
    const cases = [
      { name: '../../etc/passwd.jpg', title: 'passwd', slug: 'passwd' },
      { name: 'a\\b.jpg', title: 'b', slug: 'b' },
      { name: 'bell\u0007 and\u0001 nul\u001b.jpg', title: 'bell and nul', slug: 'bell-and-nul' },
      { name: 'Line\nbreak\r\n.jpg', title: 'Line break', slug: 'line-break' },
      { name: '.jpg', title: 'Untitled', slug: 'untitled' },
    ];
    for (const c of cases) {
      const { status, body } = await upload(await picture(200, 150).jpeg().toBuffer(), { name: c.name });
      expect(status, c.name).toBe(201);
      expect(body.work.title).toBe(c.title);
      expect(body.work.slug).toBe(c.slug);
    }
    const everything = walk(data.dir).map((f) => path.basename(f));
    expect(everything.filter((f) => /passwd|bell|^b\.jpg$/.test(f))).toEqual([]);
    for (const key of list(config().originalsDir)) expect(key).toMatch(/^[0-9a-f-]{36}\.(jpg|png|tif|webp)$/);
  });

  it('suffixes the slug when the title is already taken', async () => {
    const first = await upload(await picture(200, 150).jpeg().toBuffer(), { name: 'Still life.jpg' });
    const second = await upload(await picture(200, 150).jpeg().toBuffer(), { name: 'Still life.png' });
    const third = await upload(await picture(200, 150).jpeg().toBuffer(), { name: 'still-life.jpg' });
    expect([first.body.work.slug, second.body.work.slug, third.body.work.slug]).toEqual(['still-life', 'still-life-2', 'still-life-3']);
  });
});

describe('POST /api/studio/uploads — duplicates', () => {
  it('answers 409 with the existing work for the same file twice, and keeps one row', async () => {
    const bytes = await picture(400, 300).jpeg().toBuffer();
    const first = await upload(bytes, { name: 'Once.jpg' });
    expect(first.status).toBe(201);
    const before = await snapshot();
    const again = await upload(bytes, { name: 'Twice under another name.jpg' });
    expect(again.status).toBe(409);
    expect(again.body.error).toMatchObject({ code: 'duplicate', existing: { id: first.body.work.id, slug: 'once', title: 'Once' } });
    expect(again.body.error.message).toMatch(/Once/);
    expect(await snapshot()).toEqual(before);
    expect(await Work.count({ where: { originalSha256: (await Work.findByPk(first.body.work.id))!.originalSha256 } })).toBe(1);
  });

  it('lets only one of two simultaneous uploads of the same file through, and keeps its derivatives', async () => {
    const bytes = await picture(400, 300).png().toBuffer();
    const results = await Promise.all([upload(bytes, { name: 'race a.png' }), upload(bytes, { name: 'race b.png' })]);
    expect(results.map((r) => r.status).sort()).toEqual([201, 409]);
    const winner = (await Work.findByPk(results.find((r) => r.status === 201)!.body.work.id))!;
    expect(await Work.count({ where: { originalSha256: winner.originalSha256 } })).toBe(1);
    expect(fs.existsSync(path.join(config().derivativesDir, winner.derivatives.key, 'sm.jpg'))).toBe(true);
    expect(list(config().originalsDir).filter((f) => f.endsWith('.png'))).toContain(winner.originalKey);
    expect(list(config().incomingDir)).toEqual([]);
    // Only the winner's original is on disk: every stored original belongs to a row.
    const keys = new Set((await Work.findAll({ attributes: ['originalKey'] })).map((w) => w.originalKey));
    for (const file of list(config().originalsDir)) expect(keys.has(file)).toBe(true);
  });
});

describe('POST /api/studio/uploads — refusals leave nothing behind', () => {
  it('refuses a text file named photo.jpg (415; content check, ASVS 5.2.2)', async () => {
    const { body } = await expectRefusedWithoutTrace(() => upload('Just some words, not a picture at all.', { name: 'photo.jpg' }), 415, 'unsupported_type');
    expect(body.error.message).toMatch(/JPEG, PNG, TIFF or WebP/);
  });

  it('refuses an SVG (415)', async () => {
    const svg = '<?xml version="1.0"?><svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"><script>alert(1)</script></svg>';
    const { body } = await expectRefusedWithoutTrace(() => upload(svg, { name: 'drawing.svg' }), 415, 'unsupported_type');
    expect(body.error.message).toMatch(/SVG/);
  });

  it('refuses a GIF (415)', async () => {
    const gif = await sharp({ create: { width: 20, height: 20, channels: 3, background: '#a33' } }).gif().toBuffer();
    const { body } = await expectRefusedWithoutTrace(() => upload(gif, { name: 'anim.jpg' }), 415, 'unsupported_type');
    expect(body.error.message).toMatch(/GIF/);
  });

  it('refuses a JPEG cut to 60 % as damaged (422; sharp failOn "warning", TRADE-FACTS §9.3)', async () => {
    const whole = await grainy(800, 600);
    const cut = whole.subarray(0, Math.floor(whole.length * 0.6));
    const { body } = await expectRefusedWithoutTrace(() => upload(cut, { name: 'cut.jpg' }), 422, 'damaged');
    expect(body.error.message).toMatch(/damaged or incomplete/);
  });

  it('refuses an image over the pixel limit (422; ASVS 5.2.6 pixel flood)', async () => {
    useLimits({ megapixels: 1 });
    const bytes = await picture(1200, 1000).jpeg().toBuffer(); // 1.2 MP > 1 MP
    const { body } = await expectRefusedWithoutTrace(() => upload(bytes, { name: 'big.jpg' }), 422, 'too_many_pixels');
    expect(body.error.message).toMatch(/too many pixels: the limit is 1 megapixel\./);
  });

  it('refuses a header claiming 100000 × 100000 px from the header alone, before any decoding', async () => {
    // 10 gigapixels ≫ the 150 MP default; the data behind the header is rubbish, so only a header check can say "too many pixels".
    await expectRefusedWithoutTrace(() => upload(pngClaiming(100_000, 100_000), { name: 'bomb.png' }), 422, 'too_many_pixels');
  });

  it('refuses a body over the size limit from its Content-Length, before reading it (413; ASVS 5.2.1)', async () => {
    useLimits({ mb: 1 });
    const { stream, pulled } = streamOf(endless(Buffer.from([0xff, 0xd8, 0xff, 0xe0]), 64 * 1024));
    const result = await expectRefusedWithoutTrace(
      () => upload(stream, { name: 'huge.jpg', headers: { 'Content-Length': String(2 * 1024 * 1024) } }),
      413,
      'too_large',
    );
    expect(result.body.error.message).toMatch(/1 MB/);
    expect(pulled.bytes).toBeLessThanOrEqual(4); // at most what a stream pre-reads; nothing was consumed
  });

  it('stops reading a stream that keeps going the moment it passes the limit (413)', async () => {
    useLimits({ mb: 1 });
    const jpegStart = (await picture(64, 64).jpeg().toBuffer()).subarray(0, 600);
    const { stream, pulled } = streamOf(endless(jpegStart, 64 * 1024));
    const { response } = await expectRefusedWithoutTrace(() => upload(stream, { name: 'endless.jpg' }), 413, 'too_large');
    // 1 MiB limit; reading stops within a couple of 64 KiB chunks of it.
    expect(pulled.bytes).toBeGreaterThan(1024 * 1024);
    expect(pulled.bytes).toBeLessThan(1024 * 1024 + 3 * 64 * 1024);
    expect(response.headers.get('Connection')).toBe('close');
  });

  it('cleans up when the stream errors half way (client went away)', async () => {
    const whole = await grainy(600, 400);
    const half = whole.subarray(0, Math.floor(whole.length / 2));
    const chunks = [half.subarray(0, 1000), half.subarray(1000)];
    const { stream } = streamOf(chunks, new Error('socket hang up'));
    await expectRefusedWithoutTrace(() => upload(stream, { name: 'gone.jpg' }), 400, 'aborted');
  });

  it('answers 400 without X-File-Name, with a malformed one, or with an empty body', async () => {
    const bytes = await picture(100, 100).jpeg().toBuffer();
    await expectRefusedWithoutTrace(() => upload(bytes, { name: null }), 400, 'missing_file_name');
    await expectRefusedWithoutTrace(() => upload(bytes, { name: null, headers: { 'X-File-Name': '%E0%A4%A' } }), 400, 'invalid_file_name');
    await expectRefusedWithoutTrace(() => upload(null, { name: 'nothing.jpg' }), 400, 'empty');
    await expectRefusedWithoutTrace(() => upload(new Uint8Array(0), { name: 'nothing.jpg' }), 400, 'empty');
    await expectRefusedWithoutTrace(() => upload(streamOf([]).stream, { name: 'nothing.jpg' }), 400, 'empty');
  });
});

describe('POST /api/studio/uploads — who may upload', () => {
  it('answers 401 signed out and 403 for a buyer, before looking at the body', async () => {
    const { stream, pulled } = streamOf(endless(new Uint8Array(16), 1024));
    await expectRefusedWithoutTrace(() => upload(stream, { role: null }), 401, 'unauthenticated');
    await expectRefusedWithoutTrace(() => upload(stream, { role: 'buyer' }), 403, 'forbidden');
    await expectRefusedWithoutTrace(() => upload(stream, { role: 'buyer', name: null }), 403, 'forbidden');
    expect(pulled.bytes).toBeLessThanOrEqual(16);
  });

  it('lets a photographer and an admin upload', async () => {
    for (const role of ['photographer', 'admin'] as const) {
      const { status } = await upload(await picture(200, 200).webp().toBuffer(), { role, name: `${role}.webp` });
      expect(status, role).toBe(201);
    }
  });
});

describe('POST /api/studio/uploads — streaming', () => {
  it('writes the body to disk while it is still arriving, never waiting for the whole of it', async () => {
    // A PNG signature, then 64 MiB of zeros. Half way, the sender pauses: by then most of what was sent must
    // already be in the incoming file, which is only possible if the body is streamed, not buffered.
    const chunkBytes = 1024 * 1024;
    const total = 64;
    const half = total / 2;
    let release!: () => void;
    const paused = new Promise<void>((resolve) => (release = resolve));
    let sent = 0;
    const stream = new ReadableStream<Uint8Array>({
      async pull(controller) {
        if (sent === half) await paused;
        const chunk = new Uint8Array(chunkBytes);
        if (sent === 0) chunk.set([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
        controller.enqueue(chunk);
        sent += 1;
        if (sent === total) controller.close();
      },
    });
    const result = expectRefusedWithoutTrace(() => upload(stream, { name: 'long.png' }), 422, 'damaged');
    await expect.poll(() => sent, { timeout: 10_000 }).toBe(half);
    const onDisk = async () => {
      const parts = list(config().incomingDir).filter((f) => f.endsWith('.part'));
      return parts.length === 1 ? fs.statSync(path.join(config().incomingDir, parts[0]!)).size : 0;
    };
    // A few chunks may still be in flight between the stream and the file.
    await expect.poll(onDisk, { timeout: 10_000 }).toBeGreaterThanOrEqual((half - 4) * chunkBytes);
    release();
    await result;
    expect(sent).toBe(total);
  });
});
