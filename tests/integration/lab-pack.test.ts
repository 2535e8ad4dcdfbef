/**
 * The lab pack against a real temporary SQLite database, real originals on disk and sharp: exact pixel
 * sizes, bit depth, colour profile, resolution, the crop the buyer saw, white borders for fit, the job
 * sheet, the record and audit row, the refusals, and the rule that production needs every pack.
 */
import fs from 'node:fs';
import path from 'node:path';
import zlib from 'node:zlib';
import { parse as parseIcc } from 'icc';
import { PDFArray, PDFDocument, PDFName, PDFRawStream, type PDFPage } from 'pdf-lib';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { APIContext } from 'astro';
import * as prepareRoute from '~/pages/api/dispatch/orders/[number]/lines/[lineId]/lab-pack/index';
import * as fileRoute from '~/pages/api/dispatch/orders/[number]/lines/[lineId]/lab-pack/file';
import * as sheetRoute from '~/pages/api/dispatch/orders/[number]/lines/[lineId]/lab-pack/sheet';
import { POST as move } from '~/pages/api/dispatch/orders/[number]/move';
import * as settingsRoute from '~/pages/api/studio/settings';
import { shopSettingsInput } from '~/lib/settings-schemas';
import { config } from '~/lib/server/config';
import { db } from '~/lib/server/db';
import { printSnapshotFor } from '~/lib/server/lab-pack';
import { AuditEvent, EditionNumber, Order, OrderLine, PrintOffer, Work } from '~/lib/server/models';
import type { LabPackRecord } from '~/lib/server/models/OrderLine';
import type { LabPackView } from '~/lib/lab-pack';
import type { SessionUser } from '~/lib/server/auth-types';
import type { Role } from '~/lib/roles';
import { ShopSettings, insertSettings, insertWork, useTempDatabase, type TestData } from '../_fixtures';
import { makeOffer, writeOriginal } from '../_lab';

let data: TestData;
const as = (role: Role): SessionUser => ({ id: `u-${role}`, email: `${role}@example.com`, name: role, role, emailVerified: true });
const admin = as('admin');

type Handler = (context: APIContext) => Promise<Response> | Response;
function call(handler: Handler, number: string, lineId: number | string, user: SessionUser | null = admin, method = 'GET') {
  const url = new URL(`http://localhost/api/dispatch/orders/${number}/lines/${lineId}/lab-pack`);
  return handler({ params: { number, lineId: String(lineId) }, request: new Request(url, { method }), url, locals: { user, session: null } } as unknown as APIContext);
}
const prepare = (number: string, lineId: number | string, user: SessionUser | null = admin) => call(prepareRoute.POST, number, lineId, user, 'POST');
const moveTo = (number: string, to: string) =>
  move({
    params: { number },
    request: new Request('http://localhost/x', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ to }) }),
    locals: { user: admin, session: null },
  } as unknown as APIContext);

const ids: Record<string, number> = {};
const RED_BAND = 500; // the original's left 500 px are red, the rest grey (invented picture)

async function makeOrder(number: string, status: string, lines: { kind: 'print' | 'licence'; offerId?: number; mode?: 'fill' | 'fit'; workId?: number; refunded?: number }[]) {
  const order = await Order.create({
    number, userId: 'collector', email: 'collector@example.com', status: status as Order['status'], currency: 'GBP', subtotal: 30000, shipping: 900, taxIncluded: 0, total: 30900,
    licenseeName: null, licenseeOrganisation: null, intendedUse: null,
    shippingAddress: { name: 'A Collector', line1: '1 Quay Street', line2: '', city: 'Leith', postalCode: 'EH6 6AA', country: 'GB' },
    stripeSessionId: null, stripePaymentIntentId: null, paidAt: status === 'pending_payment' ? null : new Date(), expiresAt: null, note: null,
  });
  const made: number[] = [];
  for (const l of lines) {
    const workId = l.workId ?? ids.pear!;
    const work = (await Work.findByPk(workId))!;
    const offerId = l.offerId ?? null;
    const offer = offerId ? await PrintOffer.findByPk(offerId, { include: ['edition'] }) : null;
    const line = await OrderLine.create({
      orderId: order.id, kind: l.kind, workId, licenceTierId: null, printOfferId: offerId, editionId: offer?.editionId ?? null, mode: l.kind === 'print' ? (l.mode ?? 'fill') : null,
      quantity: 1, unitPrice: 15000, subtotal: 15000, refunded: l.refunded ?? 0, description: l.kind, detail: '',
      // what checkout records for a print line, made by the same function checkout uses
      snapshot: {
        workTitle: work.title, workSlug: work.slug,
        edition: offer?.edition ? { kind: offer.edition.kind, total: offer.edition.total, artistProofs: offer.edition.artistProofs } : null,
        ...(l.kind === 'print' && offerId ? { print: await printSnapshotFor(offerId, l.mode ?? 'fill') } : {}),
      },
    });
    made.push(line.id);
  }
  return { order, lines: made };
}

/** Every string a page shows (hex strings to Tj, as the shop's PDFs write them), read with node:zlib. */
function shownText(page: PDFPage): string {
  const contents = page.node.Contents();
  const streams = contents instanceof PDFArray ? contents.asArray().map((ref) => page.doc.context.lookup(ref)) : [contents];
  const out: string[] = [];
  for (const stream of streams) {
    if (!(stream instanceof PDFRawStream)) continue;
    const raw = Buffer.from(stream.getContents());
    const source = (stream.dict.get(PDFName.of('Filter')) === PDFName.of('FlateDecode') ? zlib.inflateSync(raw) : raw).toString('latin1');
    for (const m of source.matchAll(/<([0-9A-Fa-f\s]*)>\s*Tj/g)) {
      out.push(Buffer.from(m[1]!.replace(/\s/g, ''), 'hex').toString('latin1').replace(/\xd7/g, '×'));
    }
  }
  return out.join(' ');
}

async function pixel(file: string, x: number, y: number): Promise<[number, number, number]> {
  const { data: px } = await sharp(file).extract({ left: x, top: y, width: 1, height: 1 }).removeAlpha().raw().toBuffer({ resolveWithObject: true });
  return [px[0]!, px[1]!, px[2]!];
}
const isWhite = ([r, g, b]: number[]) => r! >= 250 && g! >= 250 && b! >= 250;
const isRed = ([r, g, b]: number[]) => r! > 180 && g! < 90 && b! < 90;
const isGrey = ([r, g, b]: number[]) => [r, g, b].every((v) => Math.abs(v! - 128) <= 8);

const labFile = (record: LabPackRecord, which: 'file' | 'sheet' = 'file') => path.join(config().labDir, record[which]);
const packOf = async (lineId: number) => (await OrderLine.findByPk(lineId))!.labPack ?? null;

beforeAll(async () => {
  data = await useTempDatabase();
  await insertSettings({ shopName: 'Test Shop', photographerName: 'Test Photographer' });
  await db().query("INSERT INTO users (id, name, email, email_verified, role, created_at, updated_at) VALUES ('collector', 'C', 'collector@example.com', 1, 'buyer', $1, $1)", { bind: [new Date().toISOString()] });
  // 3000 × 2000 upright, stored turned (EXIF orientation 6) in Display P3: the pipeline must turn it and convert to sRGB.
  const pear = await insertWork('pear', 3000, 2000, { originalKey: 'pear.jpg', title: 'Pear on Slate' });
  const upright = await sharp({ create: { width: 3000, height: 2000, channels: 3, background: { r: 128, g: 128, b: 128 } } })
    .composite([{ input: { create: { width: RED_BAND, height: 2000, channels: 3, background: { r: 220, g: 30, b: 30 } } }, left: 0, top: 0 }])
    .png()
    .toBuffer();
  await writeOriginal(pear, () => sharp(upright).rotate(270).withMetadata({ orientation: 6 }).withIccProfile('p3'));
  ids.pear = pear.id;
  ids.ghost = (await insertWork('ghost', 3000, 2000, { originalKey: 'never-stored.jpg' })).id;
  ids.inch8x10 = (await makeOffer(pear.id, { slug: '8x10', label: '8 × 10 in', unit: 'in', width: 8, height: 10 })).id;
  ids.a4 = (await makeOffer(pear.id, { slug: 'a4', label: 'A4', unit: 'mm', width: 210, height: 297 }, 10)).id;
  ids.ghostOffer = (await makeOffer(ids.ghost, { slug: '8x10', label: '8 × 10 in', unit: 'in', width: 8, height: 10 })).id;

  const main = await makeOrder('SM-261203-LABAAA', 'paid', [
    { kind: 'print', offerId: ids.inch8x10, mode: 'fill' },
    { kind: 'print', offerId: ids.a4, mode: 'fit' },
    { kind: 'licence' },
  ]);
  [ids.fill, ids.fit, ids.licence] = main.lines;
  await EditionNumber.create({ editionId: (await PrintOffer.findByPk(ids.a4))!.editionId, number: 3, orderLineId: ids.fit!, state: 'sold', reservedUntil: null, certificateSerial: 'SMC-261203-LABAAA-003' });
  // The Studio moves the focal point after the sale: the pack must still use the crop that was bought.
  await Work.update({ focalX: 0 }, { where: { id: pear.id } });

  for (const state of ['pending_payment', 'expired', 'cancelled', 'refunded']) {
    const made = await makeOrder(`SM-261203-${state.slice(0, 6).toUpperCase().padEnd(6, 'X')}`, state, [{ kind: 'print', offerId: ids.inch8x10 }]);
    ids[state] = made.lines[0]!;
  }
  const partly = await makeOrder('SM-261203-PARTLY', 'partly_refunded', [
    { kind: 'print', offerId: ids.inch8x10, refunded: 15000 },
    { kind: 'print', offerId: ids.a4, mode: 'fit' },
  ]);
  [ids.refundedLine, ids.partlyLive] = partly.lines;
  ids.ghostLine = (await makeOrder('SM-261203-GHOSTS', 'paid', [{ kind: 'print', offerId: ids.ghostOffer, workId: ids.ghost }])).lines[0]!;
});
afterAll(async () => data.cleanup());

describe('preparing the lab pack', () => {
  it('is for admins only', async () => {
    expect((await prepare('SM-261203-LABAAA', ids.fill!, null)).status).toBe(401);
    expect((await prepare('SM-261203-LABAAA', ids.fill!, as('photographer'))).status).toBe(403);
    expect((await prepare('SM-261203-LABAAA', ids.fill!, as('buyer'))).status).toBe(403);
    expect((await call(fileRoute.GET, 'SM-261203-LABAAA', ids.fill!, as('photographer'))).status).toBe(403);
    expect(await packOf(ids.fill!)).toBeNull();
  });

  it('fill, 8 × 10 in, 16-bit TIFF: exact size, 16 bits, sRGB profile, 300 ppi, the crop as bought', async () => {
    const response = await prepare('SM-261203-LABAAA', ids.fill!);
    expect(response.status).toBe(200);
    const { pack } = (await response.json()) as { pack: LabPackView };
    // TRADE-FACTS §2.2: 8×10 in at 300 ppi = 2400×3000; turned to the landscape picture (TRADE-FACTS §2.3)
    expect(pack).toMatchObject({ widthPx: 3000, heightPx: 2400, ppi: 300, format: 'tiff16' });
    const record = (await packOf(ids.fill!))!;
    const file = labFile(record);
    expect(fs.existsSync(file)).toBe(true);
    expect(record.file.startsWith('SM-261203-LABAAA/')).toBe(true);
    const meta = await sharp(file).metadata();
    expect([meta.format, meta.width, meta.height]).toEqual(['tiff', 3000, 2400]);
    expect(meta.depth).toBe('ushort'); // 16 bits per sample
    expect(meta.channels).toBe(3);
    expect(meta.icc).toBeDefined();
    expect(parseIcc(meta.icc!).description).toMatch(/sRGB/); // IEC 61966-2-1 profile embedded
    expect(Math.round(meta.density!)).toBe(300);
    expect(meta.resolutionUnit).toBe('inch');
    expect(record.bytes).toBe(fs.statSync(file).size);

    // The crop as bought: fill ppi = min(3000/10, 2000/8) = 250 → crop 2500 × 2000 centred at left 250
    // (TRADE-FACTS §2.3), so the 500 px red band shows as 250 px × 1.2 = 300 px on the left.
    // Had the moved focal point (x = 0) been used, red would reach 600 px.
    expect(isRed(await pixel(file, 150, 1200))).toBe(true);
    expect(isGrey(await pixel(file, 450, 1200))).toBe(true);
    expect(isGrey(await pixel(file, 2900, 100))).toBe(true);

    const audit = await AuditEvent.findAll({ where: { action: 'lab.prepare', subjectId: String(ids.fill) } });
    expect(audit).toHaveLength(1);
    expect(audit[0]!.after).toMatchObject({ widthPx: 3000, heightPx: 2400, ppi: 300, crop: { left: 250, top: 0, width: 2500, height: 2000 } });
    expect(audit[0]!.actorEmail).toBe('admin@example.com');
  });

  it('fit, A4, limited edition: ISO sheet in pixels, white borders, picture in the middle, job sheet names the serial', async () => {
    const response = await prepare('SM-261203-LABAAA', ids.fit!);
    expect(response.status).toBe(200);
    const record = (await packOf(ids.fit!))!;
    // ISO 216 A4 at 300 ppi = 2480 × 3508 (TRADE-FACTS §2.1), turned to landscape
    expect([record.widthPx, record.heightPx]).toEqual([3508, 2480]);
    const file = labFile(record);
    const meta = await sharp(file).metadata();
    expect([meta.width, meta.height, meta.depth]).toEqual([3508, 2480, 'ushort']);
    // Fit (TRADE-FACTS §2.3): 3:2 picture across 3508 px is 2338.7 px high → about 70 px white above and below.
    expect(isWhite(await pixel(file, 1754, 20))).toBe(true);
    expect(isWhite(await pixel(file, 1754, 2460))).toBe(true);
    expect(isGrey(await pixel(file, 1754, 1240))).toBe(true);
    expect(isRed(await pixel(file, 20, 1240))).toBe(true); // the whole picture: its left edge (red) reaches the sheet's edge
    expect(isGrey(await pixel(file, 3490, 1240))).toBe(true);

    const pdfBytes = fs.readFileSync(labFile(record, 'sheet'));
    expect(pdfBytes.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    const doc = await PDFDocument.load(pdfBytes);
    expect(doc.getPageCount()).toBe(1);
    const text = shownText(doc.getPages()[0]!).replace(/\s+/g, ' ');
    expect(text).toContain('SM-261203-LABAAA');
    expect(text).toContain('3/10'); // edition mark n/N
    expect(text).toContain('SMC-261203-LABAAA-003');
    expect(text).toContain('210 × 297 mm (8.27 × 11.69 in)'); // ISO 216 A4 in both units, 1 in = 25.4 mm
    expect(text).toContain('3,508 × 2,480 px at 300 ppi');
    expect(text).toContain(path.basename(record.file));
    expect(text).toContain('Pear on Slate');
    expect(text).toMatch(/Leith EH6 6AA/);
    expect(doc.getKeywords()).toContain('SMC-261203-LABAAA-003');
  });

  it('downloads the file and the job sheet as attachments, not cached', async () => {
    const record = (await packOf(ids.fill!))!;
    const file = await call(fileRoute.GET, 'SM-261203-LABAAA', ids.fill!);
    expect(file.status).toBe(200);
    expect(file.headers.get('content-type')).toBe('image/tiff');
    expect(file.headers.get('content-disposition')).toBe(`attachment; filename="${path.basename(record.file)}"`);
    expect(file.headers.get('cache-control')).toMatch(/no-store/);
    expect((await file.arrayBuffer()).byteLength).toBe(record.bytes);
    const sheet = await call(sheetRoute.GET, 'SM-261203-LABAAA', ids.fill!);
    expect(sheet.headers.get('content-type')).toBe('application/pdf');
    expect(sheet.headers.get('content-disposition')).toMatch(/^attachment; filename=".*-job-sheet\.pdf"$/);
    expect(Buffer.from(await sheet.arrayBuffer()).subarray(0, 5).toString('latin1')).toBe('%PDF-');
    const none = await call(fileRoute.GET, 'SM-261203-LABAAA', ids.licence!);
    expect(none.status).toBe(404);
    expect((await none.json()).error.code).toBe('no_lab_pack');
  });

  it('prepared again as a maximum-quality JPEG at 240 ppi, replaces the old files', async () => {
    const old = (await packOf(ids.fill!))!;
    await ShopSettings.update({ labFormat: 'jpeg', labPpi: 240 }, { where: { id: 1 } });
    try {
      const response = await prepare('SM-261203-LABAAA', ids.fill!);
      expect(response.status).toBe(200);
      const record = (await packOf(ids.fill!))!;
      // TRADE-FACTS §2.2: 8×10 in at 240 ppi = 1920×2400, turned to landscape
      expect(record).toMatchObject({ format: 'jpeg', widthPx: 2400, heightPx: 1920, ppi: 240 });
      const meta = await sharp(labFile(record)).metadata();
      expect([meta.format, meta.width, meta.height, meta.depth]).toEqual(['jpeg', 2400, 1920, 'uchar']);
      expect(meta.chromaSubsampling).toBe('4:4:4');
      expect(meta.density).toBe(240);
      expect(parseIcc(meta.icc!).description).toMatch(/sRGB/);
      expect(meta.orientation ?? 1).toBe(1); // the pixels are upright; no stale orientation
      expect(fs.existsSync(labFile(old))).toBe(false);
      expect(fs.existsSync(labFile(old, 'sheet'))).toBe(false);
      expect(fs.existsSync(path.dirname(labFile(old)))).toBe(false);
      const audit = await AuditEvent.findAll({ where: { action: 'lab.prepare', subjectId: String(ids.fill) }, order: [['id', 'ASC']] });
      expect(audit).toHaveLength(2);
      expect(audit[1]!.before).toMatchObject({ format: 'tiff16', ppi: 300 });
      expect(audit[1]!.after).toMatchObject({ format: 'jpeg', ppi: 240 });
    } finally {
      await ShopSettings.update({ labFormat: 'tiff16', labPpi: 300 }, { where: { id: 1 } });
    }
  });
});

describe('refusals change nothing', () => {
  const refused = async (number: string, lineId: number | string, status: number, code: string) => {
    const before = await AuditEvent.count();
    const packBefore = typeof lineId === 'number' ? ((await OrderLine.findByPk(lineId))?.labPack ?? null) : null;
    const response = await prepare(number, lineId);
    expect(response.status, `${number} ${lineId}`).toBe(status);
    const body = await response.json();
    expect(body.error.code, `${number} ${lineId}`).toBe(code);
    expect(body.error.message.length).toBeGreaterThan(10);
    expect(await AuditEvent.count()).toBe(before);
    if (typeof lineId === 'number') {
      const line = await OrderLine.findByPk(lineId);
      if (line) expect(line.labPack ?? null).toEqual(packBefore);
    }
    if (number !== 'SM-261203-GHOSTS' || lineId === ids.ghostLine) expect(fs.existsSync(path.join(config().labDir, number))).toBe(false);
    return body.error.message as string;
  };

  it('unknown orders and lines are 404', async () => {
    await refused('SM-000000-NOSUCH', 1, 404, 'not_found');
    await refused('SM-261203-GHOSTS', 999999, 404, 'not_found');
    await refused('SM-261203-GHOSTS', ids.fill!, 404, 'not_found'); // a line of another order
    await refused('SM-261203-GHOSTS', 'abc', 404, 'not_found');
  });

  it('a licence line, orders not paid, a print refunded in full, a missing original are refused', async () => {
    expect(await refused('SM-261203-PARTLY', ids.refundedLine!, 409, 'line_refunded')).toMatch(/refunded in full/);
    expect(await refused('SM-261203-PENDIN', ids.pending_payment!, 409, 'order_not_ready')).toMatch(/pending payment/);
    await refused('SM-261203-EXPIRE', ids.expired!, 409, 'order_not_ready');
    await refused('SM-261203-CANCEL', ids.cancelled!, 409, 'order_not_ready');
    await refused('SM-261203-REFUND', ids.refunded!, 409, 'order_not_ready');
    expect(await refused('SM-261203-GHOSTS', ids.ghostLine!, 409, 'original_missing')).toMatch(/original/);
    // The licence line of the prepared order: refused, its pack stays null (the order's folder exists for the prints).
    const response = await prepare('SM-261203-LABAAA', ids.licence!);
    expect(response.status).toBe(409);
    expect((await response.json()).error.code).toBe('not_a_print');
    expect(await packOf(ids.licence!)).toBeNull();
  });
});

describe('production needs every lab pack', () => {
  it('refuses to start production until each print not refunded in full has its pack', async () => {
    const main = await Order.findOne({ where: { number: 'SM-261203-LABAAA' } });
    const extra = await makeOrder('SM-261203-NOPACK', 'paid', [
      { kind: 'print', offerId: ids.inch8x10 },
      { kind: 'print', offerId: ids.a4, mode: 'fit' },
    ]);
    const refusedMove = await moveTo('SM-261203-NOPACK', 'in_production');
    expect(refusedMove.status).toBe(409);
    const body = await refusedMove.json();
    expect(body.error.code).toBe('lab_pack_missing');
    expect(body.error.message).toMatch(new RegExp(`line ${extra.lines[0]}.*line ${extra.lines[1]}`));
    expect((await Order.findOne({ where: { number: 'SM-261203-NOPACK' } }))!.status).toBe('paid');

    // one of two prepared: still refused, naming only the other
    expect((await prepare('SM-261203-NOPACK', extra.lines[0]!)).status).toBe(200);
    const still = await (await moveTo('SM-261203-NOPACK', 'in_production')).json();
    expect(still.error.message).toMatch(new RegExp(`line ${extra.lines[1]}`));
    expect(still.error.message).not.toMatch(new RegExp(`line ${extra.lines[0]}\\b`));

    // the order whose two prints are prepared goes into production (its licence line needs nothing)
    expect(main!.status).toBe('paid');
    expect((await moveTo('SM-261203-LABAAA', 'in_production')).status).toBe(200);
    // and may still be prepared again while in production
    expect((await prepare('SM-261203-LABAAA', ids.fit!)).status).toBe(200);
  });

  it('a print refunded in full needs no pack: the partly refunded order goes into production with the other one prepared', async () => {
    expect((await moveTo('SM-261203-PARTLY', 'in_production')).status).toBe(409);
    expect((await prepare('SM-261203-PARTLY', ids.partlyLive!)).status).toBe(200);
    expect((await moveTo('SM-261203-PARTLY', 'in_production')).status).toBe(200);
    expect(await packOf(ids.refundedLine!)).toBeNull();
  });
});

describe('lab settings in Studio → Settings', () => {
  const put = async (change: Record<string, unknown>) => {
    const current = (await (await settingsRoute.GET({ locals: { user: admin, session: null } } as unknown as APIContext)).json()).settings;
    return settingsRoute.PUT({
      request: new Request('http://localhost/api/studio/settings', { method: 'PUT', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ ...current, ...change }) }),
      locals: { user: admin, session: null },
    } as unknown as APIContext);
  };

  it('reads and saves the lab ppi and format', async () => {
    const saved = await put({ labPpi: 360, labFormat: 'jpeg' });
    expect(saved.status).toBe(200);
    expect((await saved.json()).settings).toMatchObject({ labPpi: 360, labFormat: 'jpeg' });
    expect((await ShopSettings.findByPk(1))!.labPpi).toBe(360);
    await put({ labPpi: 300, labFormat: 'tiff16' });
  });

  it('refuses a ppi outside 72–1200 or not whole, and an unknown format, on the server and in the shared schema', async () => {
    for (const [change, field] of [[{ labPpi: 71 }, 'labPpi'], [{ labPpi: 1201 }, 'labPpi'], [{ labPpi: 300.5 }, 'labPpi'], [{ labFormat: 'png' }, 'labFormat']] as const) {
      const response = await put(change);
      expect(response.status, JSON.stringify(change)).toBe(400);
      expect(Object.keys((await response.json()).error.fields)).toContain(field);
      const base = { shopName: 'S', photographerName: 'P', tagline: '', currency: 'GBP', targetPpi: 300, floorPpi: 240, wallFloorPpi: 150, viewingDistanceFactor: 1.5, watermarkText: 'w', limitedEditionPremiumBp: 0 };
      const parsed = shopSettingsInput.safeParse({ ...base, ...change });
      expect(parsed.success).toBe(false);
    }
    // the range ends are allowed (shop rule: 72–1200 ppi, as the sales migration's check)
    expect((await put({ labPpi: 72 })).status).toBe(200);
    expect((await put({ labPpi: 1200 })).status).toBe(200);
    expect((await put({ labPpi: 300 })).status).toBe(200);
    expect((await ShopSettings.findByPk(1))!.labPpi).toBe(300);
  });
});
