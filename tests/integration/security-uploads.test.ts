/**
 * Hostile uploads to POST /api/studio/uploads, beyond what uploads.test.ts already covers (text named .jpg,
 * SVG with a script, GIF, a truncated JPEG, a PNG header claiming 100000 × 100000 px, size limits,
 * `../../etc/passwd.jpg` and `a\b.jpg` as names, who may upload).
 *
 * Sources: OWASP File Upload Cheat Sheet (allow-list extensions, validated after decoding the name; double
 * extensions `.jpg.php`; NUL bytes `.php%00.jpg`; do not trust Content-Type; rename to an app-made name;
 * image rewriting destroys appended content; serve through a handler, never the stored file) — TRADE-FACTS
 * §9.1 and its check values (§9: `photo.jpg.php` reject, `photo.php%00.jpg` reject, stored name generated);
 * OWASP ASVS 5.0 5.2.2 (extension + content check + image rewriting), 5.2.6 (pixel flood), 5.3.1 (uploads
 * never executed), 5.3.2 (internal paths); TRADE-FACTS §9.3 (pixel limit read from the header before any
 * decode). JPEG layout: ITU-T T.81 Annex B (SOF0 = FF C0: length, precision, height, width); ZIP end of
 * central directory record: PKWARE APPNOTE 4.3.16 (signature 50 4B 05 06, 22 bytes + comment).
 */
import fs from 'node:fs';
import path from 'node:path';
import sharp from 'sharp';
import type { APIContext } from 'astro';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { POST } from '~/pages/api/studio/uploads';
import { GET as media } from '~/pages/media/[key]/[file]';
import { config, resetConfigForTests } from '~/lib/server/config';
import { fileNameRefusal } from '~/lib/uploads';
import { Work, insertSettings, useTempDatabase, type TestData } from '../_fixtures';

let data: TestData;
beforeAll(async () => {
  data = await useTempDatabase();
  await insertSettings({ watermarkText: 'Security test' });
});
afterAll(async () => data.cleanup());
afterEach(() => {
  delete process.env.UPLOAD_MAX_MEGAPIXELS;
  resetConfigForTests();
});

const photographer = { id: 'u-photographer', email: 'p@example.test', name: 'P', role: 'photographer' as const, emailVerified: true };

async function upload(body: Uint8Array | string, name: string, contentType = 'application/octet-stream') {
  const headers = new Headers({ 'Content-Type': contentType, 'X-File-Name': encodeURIComponent(name) });
  const request = new Request('http://localhost/api/studio/uploads', { method: 'POST', headers, body, duplex: 'half' } as RequestInit);
  const response = await POST({ request, locals: { user: photographer, session: null } } as unknown as APIContext);
  return { status: response.status, body: (await response.json()) as any, headers: response.headers };
}

let shade = 0;
/** A small JPEG no other test made (its own colour, so never a duplicate). */
async function jpeg(width = 320, height = 240): Promise<Buffer> {
  shade += 1;
  return sharp({ create: { width, height, channels: 3, background: { r: (shade * 53) % 256, g: (shade * 89) % 256, b: (shade * 131) % 256 } } }).jpeg().toBuffer();
}

const list = (dir: string) => (fs.existsSync(dir) ? fs.readdirSync(dir).sort() : []);
function walk(dir: string): string[] {
  if (!fs.existsSync(dir)) return [];
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? walk(path.join(dir, e.name)) : [path.join(dir, e.name)]));
}
async function stored() {
  const { incomingDir, originalsDir, derivativesDir } = config();
  return { incoming: list(incomingDir), originals: list(originalsDir), derivatives: list(derivativesDir), works: await Work.count() };
}

/** Appended content an attacker hopes a server will run or a browser will sniff. */
const PAYLOAD = '\n<?php system($_GET["c"]); ?>\n<html><body><script>alert(1)</script></body></html>\n';

/** An empty ZIP archive whose comment carries the payload: a JPEG with it appended reads as both (a "GIFAR"). */
function zipWithComment(comment: string): Buffer {
  const text = Buffer.from(comment, 'latin1');
  const eocd = Buffer.alloc(22);
  eocd.writeUInt32LE(0x06054b50, 0); // end of central directory signature (APPNOTE 4.3.16)
  eocd.writeUInt16LE(text.length, 20); // comment length; disk numbers, counts, size and offset stay 0
  return Buffer.concat([eocd, text]);
}

/** A real JPEG whose SOF0 header is rewritten to claim `width` × `height` (ITU-T T.81 B.2.2). */
async function jpegClaiming(width: number, height: number): Promise<Buffer> {
  const bytes = Buffer.from(await sharp({ create: { width: 16, height: 16, channels: 3, background: '#777' } }).jpeg({ progressive: false }).toBuffer());
  const sof = bytes.indexOf(Buffer.from([0xff, 0xc0]));
  expect(sof).toBeGreaterThan(0);
  bytes.writeUInt16BE(height, sof + 5); // after marker (2), length (2), precision (1)
  bytes.writeUInt16BE(width, sof + 7);
  return bytes;
}

describe('names that try to pass for something else (OWASP: allow-listed extension on the decoded name)', () => {
  it('refuses a double extension and other endings outside the allow-list before reading the body, leaving nothing', async () => {
    const before = await stored();
    const picture = await jpeg();
    for (const name of ['photo.jpg.php', 'photo.JPG.PHP', 'shell.phtml', 'page.html', 'photo.jpg.svg', 'photo.exe', 'photo\u202Egpj.exe']) {
      const { status, body, headers } = await upload(picture, name);
      expect(status, name).toBe(415);
      expect(body.error.code).toBe('unsupported_type');
      expect(body.error.message).toMatch(/JPEG, PNG, TIFF or WebP/);
      // refused before the body was read: the connection is closed after the answer
      expect(headers.get('connection')).toBe('close');
    }
    expect(await stored()).toEqual(before);
  });

  it('refuses a NUL byte in the name ("photo.php%00.jpg", TRADE-FACTS §9 check values)', async () => {
    const before = await stored();
    const { status, body } = await upload(await jpeg(), decodeURIComponent('photo.php%00.jpg'));
    expect(status).toBe(400);
    expect(body.error.code).toBe('invalid_file_name');
    expect(await stored()).toEqual(before);
  });

  it('accepts the allowed endings in any case, and a name with no ending (the content decides)', () => {
    for (const name of ['a.jpg', 'a.JPEG', 'a.png', 'a.TIF', 'a.tiff', 'a.webp', 'IMG_0001', 'Study 2.1', '../../etc/passwd.jpg', '..\\..\\x.jpg']) {
      expect(fileNameRefusal(name), name).toBeNull();
    }
  });

  it('stores traversal names under a random name inside the originals folder only', async () => {
    const names = ['..\\..\\windows\\x.jpg', '..%2F..%2Fx.jpg', '/etc/cron.d/x.jpg', `${'../'.repeat(20)}x.jpg`];
    for (const name of names) {
      const { status, body } = await upload(await jpeg(), name);
      expect(status, name).toBe(201);
      expect(body.work.title).not.toMatch(/[/\\]/);
    }
    for (const key of list(config().originalsDir)) expect(key).toMatch(/^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}\.(jpg|png|tif|webp)$/);
    // Nothing was written outside the data folder's uploads tree.
    const outside = walk(data.dir).filter((f) => !f.startsWith(config().uploadsDir) && !f.startsWith(path.dirname(config().databasePath)));
    expect(outside).toEqual([]);
  });
});

describe('polyglots: a valid picture with something else appended', () => {
  for (const [label, tail] of [['HTML and PHP', Buffer.from(PAYLOAD, 'latin1')], ['a ZIP archive (GIFAR-like)', zipWithComment(PAYLOAD)]] as const) {
    it(`keeps a JPEG with ${label} appended only as a private original; every public file is re-encoded without it`, async () => {
      const bytes = Buffer.concat([await jpeg(640, 480), tail]);
      const { status, body } = await upload(bytes, 'still life.jpg');
      expect(status).toBe(201);
      const work = (await Work.findByPk(body.work.id))!;
      // stored under an app-made name, never served from there
      expect(work.originalKey).toMatch(/^[0-9a-f-]{36}\.jpg$/);
      const key = work.derivatives.key;
      const files = list(path.join(config().derivativesDir, key));
      expect(files.length).toBeGreaterThan(0);
      for (const file of files) {
        const content = fs.readFileSync(path.join(config().derivativesDir, key, file)).toString('latin1');
        expect(content, file).not.toContain('alert(1)');
        expect(content, file).not.toContain('<?php');
        expect(content, file).not.toContain('PK\u0005\u0006');
      }
      // The media handler serves those derivatives as images that must not be sniffed, and nothing else.
      for (const file of files) {
        const response = await media({ params: { key, file }, request: new Request(`http://localhost/media/${key}/${file}`) } as unknown as APIContext);
        expect(response.status, file).toBe(200);
        expect(response.headers.get('content-type')).toMatch(/^image\/(avif|webp|jpeg)$/);
        expect(response.headers.get('x-content-type-options')).toBe('nosniff');
        await response.arrayBuffer();
      }
      for (const [k, f] of [[key, work.originalKey], [key, `../../originals/${work.originalKey}`], ['../originals', work.originalKey], [key, 'sm.jpg.php'], [key, 'sm.html']]) {
        const response = await media({ params: { key: k, file: f }, request: new Request('http://localhost/media/x/y') } as unknown as APIContext);
        expect(response.status, `${k}/${f}`).toBe(404);
      }
    });
  }
});

describe('decompression bombs (pixel flood, ASVS 5.2.6; TRADE-FACTS §9.3)', () => {
  it('refuses a tiny JPEG whose header claims 60000 × 60000 px, from the header, without decoding it', async () => {
    const bomb = await jpegClaiming(60000, 60000);
    expect(bomb.length).toBeLessThan(2000); // a few hundred bytes that would decode to 3.6 gigapixels
    const before = await stored();
    const started = performance.now();
    const { status, body } = await upload(bomb, 'bomb.jpg');
    expect(status).toBe(422);
    expect(body.error.code).toBe('too_many_pixels');
    // Decoding 3.6 GP (≈ 10.8 GB as 8-bit RGB) would take far longer; the header read takes milliseconds.
    expect(performance.now() - started).toBeLessThan(2000);
    expect(await stored()).toEqual(before);
  });
});

describe('the declared Content-Type is not trusted (OWASP: "Content-Type is user-supplied")', () => {
  it('stores by the content whatever the request says, and refuses non-images dressed as images', async () => {
    const asHtml = await upload(await jpeg(), 'declared-html.jpg', 'text/html');
    expect(asHtml.status).toBe(201);
    expect((await Work.findByPk(asHtml.body.work.id))!.originalKey).toMatch(/\.jpg$/);
    const png = await sharp({ create: { width: 200, height: 100, channels: 3, background: '#345' } }).png().toBuffer();
    const pngAsJpeg = await upload(png, 'declared-jpeg.png', 'image/jpeg');
    expect(pngAsJpeg.status).toBe(201);
    expect((await Work.findByPk(pngAsJpeg.body.work.id))!.originalKey).toMatch(/\.png$/);

    const before = await stored();
    const svg = '<svg xmlns="http://www.w3.org/2000/svg" onload="alert(1)"><script>alert(1)</script></svg>';
    expect((await upload(svg, 'vector.jpg', 'image/jpeg')).status).toBe(415);
    expect((await upload(svg, 'vector.png', 'image/svg+xml')).status).toBe(415);
    const html = `<!doctype html><script>alert(1)</script>`;
    expect((await upload(html, 'page.jpg', 'image/jpeg')).status).toBe(415);
    // A multipart form body is not a picture either: the endpoint takes the raw file only.
    const form = `--b\r\nContent-Disposition: form-data; name="file"; filename="x.jpg"\r\nContent-Type: image/jpeg\r\n\r\n${(await jpeg()).toString('latin1')}\r\n--b--\r\n`;
    expect((await upload(form, 'form.jpg', 'multipart/form-data; boundary=b')).status).toBe(415);
    expect(await stored()).toEqual(before);
  });
});
