/**
 * The lab pack for a print line: the print-ready file cut from the private original (the buyer's crop,
 * exactly the print size at the shop's lab ppi, sRGB with its profile, 16-bit TIFF or quality-100
 * JPEG) and its job sheet (PDF). Both are written into a temporary folder and renamed into place
 * under the lab folder; the line's record and the audit row are written in one transaction, and a
 * previous pack is removed after that commits.
 *
 * The crop is the one the buyer saw: checkout records the focal point, the original's size and the
 * crop on the line, so a focal point moved later in the Studio does not change a print already sold.
 * Lines bought before that record existed fall back to the work's current focal point.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { Readable } from 'node:stream';
import sharp, { type Sharp } from 'sharp';
import type { Transaction } from 'sequelize';
import { z } from 'zod';
import { config } from './config';
import { db } from './db';
import { recordAudit, type AuditActor } from './audit';
import { jsonError } from './http';
import { exifText, xmlEscape } from './delivery';
import { jobSheetPdf, type JobSheetData } from './lab-sheet';
import { Edition, EditionNumber, Order, OrderLine, Paper, PrintOffer, PrintSize, ShopSettings, Work } from './models';
import type { LabPackRecord } from './models/OrderLine';
import {
  DEFAULT_LAB_PPI,
  LAB_FORMAT_MIME,
  labFileName,
  labPlan,
  labRefusal,
  type LabFormat,
  type LabPackView,
  type LabPlan,
} from '../lab-pack';
import { gradePrint, type PrintMode } from '../print-grade';

export class LabPackError extends Error {
  constructor(readonly status: number, readonly code: string, message: string) {
    super(message);
  }
}

const notFound = (what: 'order' | 'line') =>
  new LabPackError(404, 'not_found', what === 'order' ? 'No such order.' : 'This order has no such line.');

/** What checkout records about a print line, so the lab makes what was bought. */
export const printSnapshot = z.object({
  size: z.object({ label: z.string().min(1), width: z.number().positive(), height: z.number().positive(), unit: z.enum(['mm', 'in']) }),
  paper: z.object({ name: z.string().min(1), weightGsm: z.number().int().positive().nullable() }).nullable(),
  focal: z.object({ x: z.number().min(0).max(1), y: z.number().min(0).max(1) }),
  image: z.object({ width: z.number().int().positive(), height: z.number().int().positive() }),
  crop: z.object({ left: z.number().int().min(0), top: z.number().int().min(0), width: z.number().int().positive(), height: z.number().int().positive() }),
});
export type PrintSnapshot = z.infer<typeof printSnapshot>;

/**
 * The print as bought, for the order line's snapshot at checkout: size and paper as sold, and the
 * focal point, original size and crop the buyer was shown (the crop is the same for fill and fit
 * lines' records; a fit print uses the whole picture).
 */
export async function printSnapshotFor(offerId: number, mode: PrintMode, transaction?: Transaction): Promise<PrintSnapshot | null> {
  const offer = await PrintOffer.findByPk(offerId, {
    include: [{ model: PrintSize, as: 'size' }, { model: Paper, as: 'paper' }],
    transaction,
  });
  const work = offer ? await Work.findByPk(offer.workId, { transaction }) : null;
  if (!offer?.size || !work) return null;
  const { size, paper } = offer;
  const image = { width: work.width, height: work.height };
  const focal = { x: work.focalX, y: work.focalY };
  const { crop } = gradePrint({ image, print: { width: size.width, height: size.height, unit: size.unit }, mode, focal });
  return {
    size: { label: size.label, width: size.width, height: size.height, unit: size.unit },
    paper: paper ? { name: paper.name, weightGsm: paper.weightGsm } : null,
    focal,
    image,
    crop,
  };
}

function parseLineId(value: string | undefined): number | null {
  return value && /^[1-9][0-9]{0,9}$/.test(value) ? Number(value) : null;
}

async function findLine(number: string, lineIdParam: string | undefined): Promise<{ order: Order; line: OrderLine }> {
  const order = number.length <= 64 ? await Order.findOne({ where: { number } }) : null;
  if (!order) throw notFound('order');
  const lineId = parseLineId(lineIdParam);
  const line = lineId ? await OrderLine.findOne({ where: { id: lineId, orderId: order.id } }) : null;
  if (!line) throw notFound('line');
  return { order, line };
}

/** Folder names from order numbers: they are "SM-YYMMDD-XXXXXX", but never trust a name with a path. */
function orderFolder(number: string): string {
  return number.replace(/[^A-Za-z0-9-]/g, '_') || 'order';
}

/** An absolute path for a stored relative one, refused if it would leave the lab folder. */
function insideLab(relative: string): string | null {
  const root = path.resolve(config().labDir);
  const full = path.resolve(root, relative);
  return full.startsWith(root + path.sep) ? full : null;
}

export function labPackView(orderNumber: string, lineId: number, pack: LabPackRecord | null): LabPackView | null {
  if (!pack) return null;
  const base = `/api/dispatch/orders/${encodeURIComponent(orderNumber)}/lines/${lineId}/lab-pack`;
  return {
    format: pack.format,
    widthPx: pack.widthPx,
    heightPx: pack.heightPx,
    ppi: pack.ppi,
    bytes: pack.bytes,
    preparedAt: pack.preparedAt,
    fileName: path.basename(pack.file),
    fileUrl: `${base}/file`,
    sheetUrl: `${base}/sheet`,
  };
}

// -------------------------------------------------------------------------------------- the file

/** Small XMP packet naming the maker and the job (XMP Part 1 packet wrapper; Dublin Core fields). */
function labXmp(creator: string, rights: string, title: string): string {
  const e = xmlEscape;
  return [
    '<?xpacket begin="\uFEFF" id="W5M0MpCehiHzreSzNTczkc9d"?>',
    '<x:xmpmeta xmlns:x="adobe:ns:meta/">',
    ' <rdf:RDF xmlns:rdf="http://www.w3.org/1999/02/22-rdf-syntax-ns#">',
    '  <rdf:Description rdf:about="" xmlns:dc="http://purl.org/dc/elements/1.1/">',
    `   <dc:creator><rdf:Seq><rdf:li>${e(creator)}</rdf:li></rdf:Seq></dc:creator>`,
    `   <dc:rights><rdf:Alt><rdf:li xml:lang="x-default">${e(rights)}</rdf:li></rdf:Alt></dc:rights>`,
    `   <dc:title><rdf:Alt><rdf:li xml:lang="x-default">${e(title)}</rdf:li></rdf:Alt></dc:title>`,
    '  </rdf:Description>',
    ' </rdf:RDF>',
    '</x:xmpmeta>',
    '<?xpacket end="w"?>',
  ].join('\n');
}

const WHITE = { r: 255, g: 255, b: 255, alpha: 1 };

/**
 * One sharp (libvips) pipeline from the original on disk to the file on disk: turned upright, cut to
 * the crop, scaled to exactly the sheet (fill) or to the picture's place on it and extended with white
 * (fit), converted to sRGB with the profile embedded, and the ppi written as the file's resolution.
 * No decoded pixels pass through JavaScript. A 16-bit TIFF is processed at 16 bits throughout.
 */
export function labFilePipeline(
  originalPath: string,
  plan: LabPlan,
  options: { format: LabFormat; ppi: number; sequential: boolean; creator: string; rights: string; title: string },
): Sharp {
  const { format, ppi } = options;
  let p = sharp(originalPath, { limitInputPixels: Math.max(config().uploadMaxPixels, 1), sequentialRead: options.sequential }).rotate();
  if (format === 'tiff16') p = p.pipelineColourspace('rgb16');
  p = p
    .flatten({ background: WHITE })
    .extract(plan.crop)
    .resize(plan.placement.width, plan.placement.height, { fit: 'fill', kernel: 'lanczos3' });
  const { left, right, top, bottom } = plan.border;
  if (left || right || top || bottom) p = p.extend({ left, right, top, bottom, background: WHITE });
  p = p
    // density: the ppi as the file's resolution (JFIF density for JPEG, XResolution/YResolution for TIFF)
    .withMetadata({ density: ppi })
    .withIccProfile('srgb')
    // withMetadata keeps the original's metadata; replace EXIF and XMP so no stale orientation or size rides along.
    .withExif({ IFD0: { Artist: exifText(options.creator) || 'unknown', Copyright: exifText(options.rights) || 'unknown', ImageDescription: exifText(options.title) || 'lab file', Software: 'Stillmark lab pack' } })
    .withXmp(labXmp(options.creator, options.rights, options.title));
  if (format === 'tiff16') {
    return p.toColourspace('rgb16').tiff({ compression: 'lzw', predictor: 'horizontal', xres: ppi / 25.4, yres: ppi / 25.4, resolutionUnit: 'inch' });
  }
  // Huffman optimisation (sharp's default) holds every DCT coefficient of the image in memory, about
  // 2 GB for an A0 sheet at 300 ppi; the standard tables keep the encoder streaming.
  return p.jpeg({ quality: 100, chromaSubsampling: '4:4:4', optimiseCoding: false });
}

/** The original's upright size and whether it needs turning (EXIF orientation 2–8). */
async function uprightSize(file: string): Promise<{ width: number; height: number; oriented: boolean }> {
  const meta = await sharp(file, { limitInputPixels: Math.max(config().uploadMaxPixels, 1) }).metadata();
  if (!meta.width || !meta.height) throw new Error('not a readable image');
  const orientation = meta.orientation ?? 1;
  const turned = orientation >= 5;
  return { width: turned ? meta.height : meta.width, height: turned ? meta.width : meta.height, oriented: orientation > 1 };
}

// -------------------------------------------------------------------------------------- preparing

/** Removes temporary folders an interrupted run left in the order's folder (older than an hour). */
async function sweepStaleTemp(orderDir: string): Promise<void> {
  const entries = await fsp.readdir(orderDir, { withFileTypes: true }).catch(() => []);
  for (const entry of entries) {
    if (!entry.isDirectory() || !entry.name.startsWith('.tmp-')) continue;
    const full = path.join(orderDir, entry.name);
    const stat = await fsp.stat(full).catch(() => null);
    if (stat && Date.now() - stat.mtimeMs > 3_600_000) await fsp.rm(full, { recursive: true, force: true }).catch(() => undefined);
  }
}

/** One pack at a time: each decodes an original of up to 150 MP, so they queue rather than run side by side. */
let queue: Promise<unknown> = Promise.resolve();
function oneAtATime<T>(job: () => Promise<T>): Promise<T> {
  const run = queue.then(job, job);
  queue = run.catch(() => undefined);
  return run;
}

interface Resolved {
  size: PrintSnapshot['size'];
  paper: PrintSnapshot['paper'];
  focal: { x: number; y: number };
  bought: PrintSnapshot | null;
}

async function resolvePrint(line: OrderLine, work: Work): Promise<Resolved> {
  const snap = printSnapshot.safeParse((line.snapshot as { print?: unknown }).print);
  if (snap.success) return { size: snap.data.size, paper: snap.data.paper, focal: snap.data.focal, bought: snap.data };
  // A line from before checkout recorded the print: the offer's size and paper, the work's focal point now.
  const offer = line.printOfferId
    ? await PrintOffer.findByPk(line.printOfferId, { include: [{ model: PrintSize, as: 'size' }, { model: Paper, as: 'paper' }] })
    : null;
  if (!offer?.size) throw new LabPackError(409, 'print_unknown', 'The print size of this line is not recorded and its offer is gone; the file cannot be sized.');
  return {
    size: { label: offer.size.label, width: offer.size.width, height: offer.size.height, unit: offer.size.unit },
    paper: offer.paper ? { name: offer.paper.name, weightGsm: offer.paper.weightGsm } : null,
    focal: { x: work.focalX, y: work.focalY },
    bought: null,
  };
}

async function editionOf(line: OrderLine): Promise<JobSheetData['edition']> {
  const snap = (line.snapshot as { edition?: { kind?: string; total?: number | null } | null }).edition;
  const edition = snap ?? (line.editionId ? await Edition.findByPk(line.editionId) : null);
  if (!edition) return null;
  if (edition.kind !== 'limited' || !edition.total) return { kind: 'open' };
  const numbers = await EditionNumber.findAll({ where: { orderLineId: line.id }, order: [['number', 'ASC']] });
  return { kind: 'limited', total: edition.total, numbers: numbers.map((n) => ({ number: n.number, serial: n.certificateSerial, state: n.state })) };
}

/**
 * Makes (or re-makes) the lab pack of one print line and records it. Refuses, changing nothing, when
 * the line is a licence, the order is not paid / in production / partly refunded, the line was
 * refunded in full, or the original is missing.
 */
export async function prepareLabPack(number: string, lineIdParam: string | undefined, actor: AuditActor): Promise<LabPackView> {
  const { order, line } = await findLine(number, lineIdParam);
  const refusal = labRefusal(order.status, line);
  if (refusal) throw new LabPackError(refusal.status, refusal.code, refusal.message);
  const work = await Work.findByPk(line.workId);
  if (!work) throw new LabPackError(409, 'original_missing', 'The work of this line no longer exists, so there is no original to print from.');
  const originalPath = path.join(config().originalsDir, path.basename(work.originalKey));
  if (!fs.existsSync(originalPath)) {
    throw new LabPackError(409, 'original_missing', `The original of “${work.title}” is missing from the uploads folder; it must be restored before the print can be prepared.`);
  }
  const print = await resolvePrint(line, work);
  return oneAtATime(() => makePack(order, line, work, originalPath, print, actor));
}

async function makePack(order: Order, line: OrderLine, work: Work, originalPath: string, print: Resolved, actor: AuditActor): Promise<LabPackView> {
  const settings = (await ShopSettings.findByPk(1))!;
  const ppi = settings.labPpi ?? DEFAULT_LAB_PPI;
  const format: LabFormat = settings.labFormat === 'jpeg' ? 'jpeg' : 'tiff16';
  const mode: PrintMode = line.mode === 'fit' ? 'fit' : 'fill';

  let image: Awaited<ReturnType<typeof uprightSize>>;
  try {
    image = await uprightSize(originalPath);
  } catch (error) {
    console.error(`lab pack: cannot read the original of work ${work.id}`, error);
    throw new LabPackError(422, 'original_unreadable', `The original of “${work.title}” cannot be read; nothing was changed.`);
  }
  const boughtCropFits = print.bought && print.bought.image.width === image.width && print.bought.image.height === image.height;
  const plan = labPlan({
    image,
    print: print.size,
    mode,
    ppi,
    focal: print.focal,
    crop: boughtCropFits ? print.bought!.crop : null,
  });
  const cropNote = boughtCropFits
    ? 'the crop the buyer saw, as recorded at checkout'
    : print.bought
      ? 'recomputed: the original changed size since the purchase; centred on the focal point recorded at checkout'
      : `centred on the work's focal point (${Math.round(print.focal.x * 100)} %, ${Math.round(print.focal.y * 100)} %); no crop was recorded at checkout`;

  const fileName = labFileName({ orderNumber: order.number, lineId: line.id, workSlug: work.slug, sizeLabel: print.size.label, mode, ppi, format });
  const sheetName = fileName.replace(/\.[a-z]+$/, '-job-sheet.pdf');
  const orderDir = path.join(config().labDir, orderFolder(order.number));
  const stamp = new Date().toISOString().replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z');
  const folder = `L${line.id}-${stamp}-${crypto.randomBytes(3).toString('hex')}`;
  const temp = path.join(orderDir, `.tmp-${crypto.randomUUID()}`);
  const final = path.join(orderDir, folder);
  await sweepStaleTemp(orderDir);
  await fsp.mkdir(temp, { recursive: true });
  const preparedAt = new Date();
  try {
    const year = (work.capture.takenAt ?? String(preparedAt.getUTCFullYear())).slice(0, 4);
    try {
      await labFilePipeline(originalPath, plan, {
        format,
        ppi,
        sequential: !image.oriented,
        creator: settings.photographerName,
        rights: `© ${year} ${settings.photographerName}`,
        title: `${work.title}: lab file for order ${order.number}, line ${line.id}, ${print.size.label} ${mode}`,
      }).toFile(path.join(temp, fileName));
    } catch (error) {
      console.error(`lab pack: pipeline failed for ${order.number} line ${line.id}`, error);
      throw new LabPackError(422, 'original_unreadable', `The original of “${work.title}” could not be made into a print file; nothing was changed.`);
    }
    const bytes = (await fsp.stat(path.join(temp, fileName))).size;
    const preview = await sharp(path.join(temp, fileName)).resize(900, 900, { fit: 'inside' }).jpeg({ quality: 85 }).toBuffer();
    const shipTo = order.shippingAddress;
    const pdf = await jobSheetPdf({
      shopName: settings.shopName,
      orderNumber: order.number,
      lineId: line.id,
      workTitle: work.title,
      workSlug: work.slug,
      size: print.size,
      paper: print.paper,
      mode,
      quantity: line.quantity,
      original: image,
      plan,
      cropNote,
      file: { name: fileName, ppi, format, bytes },
      edition: await editionOf(line),
      shipTo,
      preparedAt,
      preparedBy: actor.email,
      preview,
    });
    await fsp.writeFile(path.join(temp, sheetName), pdf);
    await fsp.rename(temp, final);
  } catch (error) {
    await fsp.rm(temp, { recursive: true, force: true });
    throw error;
  }

  const relative = (name: string) => path.posix.join(orderFolder(order.number), folder, name);
  const record: LabPackRecord = {
    file: relative(fileName),
    sheet: relative(sheetName),
    format,
    widthPx: plan.sheet.width,
    heightPx: plan.sheet.height,
    ppi,
    bytes: (await fsp.stat(path.join(final, fileName))).size,
    preparedAt: preparedAt.toISOString(),
    mode,
    crop: plan.crop,
  };
  const audited = (r: LabPackRecord) => ({ file: path.posix.basename(r.file), format: r.format, widthPx: r.widthPx, heightPx: r.heightPx, ppi: r.ppi, mode: r.mode ?? null, crop: r.crop ?? null });
  let previous: LabPackRecord | null = null;
  try {
    previous = await db().transaction(async (transaction) => {
      // The order may have moved while the file was made: check again under the write lock.
      const o = await Order.findByPk(order.id, { transaction });
      const l = await OrderLine.findByPk(line.id, { transaction });
      if (!o || !l) throw notFound('line');
      const again = labRefusal(o.status, l);
      if (again) throw new LabPackError(again.status, again.code, again.message);
      const before = l.labPack ?? null;
      await l.update({ labPack: record }, { transaction });
      await recordAudit(actor, {
        action: 'lab.prepare',
        subjectType: 'order_line',
        subjectId: l.id,
        orderId: o.id,
        userId: o.userId,
        before: before ? audited(before) : null,
        after: audited(record),
      }, transaction);
      return before;
    });
  } catch (error) {
    await fsp.rm(final, { recursive: true, force: true });
    throw error;
  }
  // The new pack is recorded; the old one's folder can go.
  if (previous) {
    const oldFile = insideLab(previous.file);
    const oldFolder = oldFile && path.dirname(oldFile);
    if (oldFolder && oldFolder !== final && path.dirname(oldFolder) === orderDir) {
      await fsp.rm(oldFolder, { recursive: true, force: true }).catch((error) => console.error('lab pack: could not remove the old pack', error));
    }
  }
  return labPackView(order.number, line.id, record)!;
}

// -------------------------------------------------------------------------------------- downloads

export interface LabDownload {
  path: string;
  fileName: string;
  contentType: string;
  bytes: number;
}

/** The stored file or job sheet of a line's pack, for download. */
export async function labPackDownload(number: string, lineIdParam: string | undefined, which: 'file' | 'sheet'): Promise<LabDownload> {
  const { line } = await findLine(number, lineIdParam);
  const pack = line.labPack;
  if (!pack) throw new LabPackError(404, 'no_lab_pack', 'This line has no lab pack yet: prepare it first.');
  const full = insideLab(which === 'file' ? pack.file : pack.sheet);
  const stat = full ? await fsp.stat(full).catch(() => null) : null;
  if (!full || !stat?.isFile()) throw new LabPackError(410, 'lab_file_missing', 'The file is missing from the lab folder; prepare the pack again.');
  return {
    path: full,
    fileName: path.basename(full),
    contentType: which === 'file' ? LAB_FORMAT_MIME[pack.format] : 'application/pdf',
    bytes: stat.size,
  };
}

/** The download as an HTTP answer: streamed from disk, as an attachment, never cached; errors as JSON. */
export async function labPackDownloadResponse(number: string, lineIdParam: string | undefined, which: 'file' | 'sheet'): Promise<Response> {
  let file: LabDownload;
  try {
    file = await labPackDownload(number, lineIdParam, which);
  } catch (error) {
    if (error instanceof LabPackError) return jsonError(error.status, error.code, error.message);
    throw error;
  }
  const stream = fs.createReadStream(file.path, { highWaterMark: 256 * 1024 });
  stream.on('error', (error: NodeJS.ErrnoException) => {
    if (error.name !== 'AbortError' && error.code !== 'ERR_STREAM_PREMATURE_CLOSE') console.error('lab pack download failed', error);
  });
  return new Response(Readable.toWeb(stream) as ReadableStream<Uint8Array>, {
    headers: {
      'Content-Type': file.contentType,
      'Content-Length': String(file.bytes),
      'Content-Disposition': `attachment; filename="${file.fileName.replace(/[^\w.-]/g, '_')}"`,
      'Cache-Control': 'private, no-store',
      'X-Content-Type-Options': 'nosniff',
    },
  });
}
