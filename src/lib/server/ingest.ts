/**
 * Takes one uploaded original from a byte stream to a draft work: streams it to disk under a limit, checks
 * what it really is (first bytes, then the header, then a full decode), refuses duplicates, stores it under
 * a random name, makes the public derivatives and creates the row. A refusal or a failure at any step
 * leaves nothing behind: no temporary file, no original, no derivative folder, no row.
 * Follows OWASP's file upload guidance and ASVS V5.2 (size limit, content check, pixel-flood limit).
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { pipeline } from 'node:stream/promises';
import sharp from 'sharp';
import { Op, Transaction } from 'sequelize';
import { config } from './config';
import { db } from './db';
import { inspectImage, makeDerivatives, sha256File } from './images';
import { ShopSettings, Work } from './models';
import { orientationOf } from './models/Work';
import {
  ACCEPTED_TYPES_TEXT, SNIFF_BYTES, formatBytes, STORED_EXTENSION, refusedTypeMessage, slugify, sniffImageType, titleFromFileName, uniqueSlug,
  type AcceptedType,
} from '../uploads';

export type UploadErrorCode =
  | 'empty'
  | 'too_large'
  | 'unsupported_type'
  | 'too_many_pixels'
  | 'damaged'
  | 'aborted'
  | 'not_ready';

/** A refusal the uploader can act on; `httpStatus` is what the endpoint answers. */
export class UploadError extends Error {
  override readonly name = 'UploadError';
  constructor(
    readonly code: UploadErrorCode,
    readonly httpStatus: number,
    message: string,
    options?: { cause?: unknown },
  ) {
    super(message, options);
  }
}

export interface IngestOptions {
  /** The name the file had on the uploader's computer; only used for the title. */
  fileName: string;
  /** The request's Content-Length, when it sent one: refused before a byte is read when over the limit. */
  declaredBytes?: number;
  /** Who uploaded it (not stored yet: works have no owner column). */
  userId: string;
  /** Aborted when the client goes away; stops the receiving. */
  signal?: AbortSignal;
}

export interface CreatedWork {
  id: number;
  slug: string;
  title: string;
  width: number;
  height: number;
  status: Work['status'];
}

export type IngestResult =
  | { status: 'created'; work: Work }
  | { status: 'duplicate'; existing: { id: number; slug: string; title: string } };

function megapixels(pixels: number): string {
  const n = Math.round(pixels / 1_000_000);
  return `${n} ${n === 1 ? 'megapixel' : 'megapixels'}`;
}

export function tooLarge(limit: number): UploadError {
  return new UploadError('too_large', 413, `This file is larger than the ${formatBytes(limit)} an upload may be.`);
}

/**
 * Streams `body` into `target`, never holding more than a chunk in memory: counts bytes and stops with 413
 * the moment `limit` is passed, and stops with 415 as soon as the first bytes show it is not an accepted
 * image. The request body is left unread past that point rather than cancelled, so the server can still
 * answer. Returns the sniffed type and the byte count.
 */
async function receive(
  body: ReadableStream<Uint8Array>,
  target: string,
  limit: number,
  signal: AbortSignal | undefined,
): Promise<{ type: AcceptedType; bytes: number }> {
  let bytes = 0;
  let head = new Uint8Array(0);
  let type: AcceptedType | undefined;
  const decide = (): AcceptedType => {
    const sniffed = sniffImageType(head);
    if (!sniffed) throw new UploadError('unsupported_type', 415, refusedTypeMessage(head));
    return sniffed;
  };

  async function* counted(): AsyncGenerator<Uint8Array> {
    const reader = body.getReader();
    const onAbort = () => void reader.cancel().catch(() => {});
    signal?.addEventListener('abort', onAbort, { once: true });
    try {
      for (;;) {
        if (signal?.aborted) throw aborted();
        let chunk: ReadableStreamReadResult<Uint8Array>;
        try {
          chunk = await reader.read();
        } catch (error) {
          throw aborted(error);
        }
        if (signal?.aborted) throw aborted();
        if (chunk.done) break;
        const value = chunk.value;
        bytes += value.byteLength;
        if (bytes > limit) throw tooLarge(limit);
        if (!type) {
          if (head.byteLength < 64) {
            const joined = new Uint8Array(head.byteLength + Math.min(value.byteLength, 64));
            joined.set(head);
            joined.set(value.subarray(0, 64), head.byteLength);
            head = joined;
          }
          if (head.byteLength >= SNIFF_BYTES) type = decide();
        }
        yield value;
      }
    } finally {
      signal?.removeEventListener('abort', onAbort);
      reader.releaseLock();
    }
  }

  const out = fs.createWriteStream(target, { flags: 'wx', mode: 0o600 });
  try {
    await pipeline(counted(), out);
  } finally {
    // The file must be closed before anyone removes it, or a late open could recreate it.
    if (!out.closed) await new Promise<void>((resolve) => out.once('close', () => resolve()));
  }
  if (bytes === 0) throw new UploadError('empty', 400, 'The file is empty.');
  // A file shorter than the sniffing window is decided on what there is.
  return { type: type ?? decide(), bytes };
}

function aborted(cause?: unknown): UploadError {
  return new UploadError('aborted', 400, 'The upload was interrupted before the whole file arrived.', { cause });
}

/** Header check, before any decoding: a readable image of the sniffed type, within the pixel limit (pixel-flood defence). */
async function checkHeader(file: string, type: AcceptedType, pixelLimit: number): Promise<void> {
  let meta: sharp.Metadata;
  try {
    meta = await sharp(file, { limitInputPixels: pixelLimit }).metadata();
  } catch (error) {
    if (/pixel limit/i.test((error as Error).message)) throw tooManyPixels(pixelLimit, error);
    throw damaged(error);
  }
  if (!meta.width || !meta.height) throw damaged();
  if (meta.format !== type) {
    throw new UploadError('unsupported_type', 415, `The file's contents could not be read as ${type.toUpperCase()}. Upload ${ACCEPTED_TYPES_TEXT} files.`);
  }
  if (meta.width * meta.height > pixelLimit) throw tooManyPixels(pixelLimit);
}

function tooManyPixels(limit: number, cause?: unknown): UploadError {
  return new UploadError('too_many_pixels', 422, `This image has too many pixels: the limit is ${megapixels(limit)}.`, { cause });
}

function damaged(cause?: unknown): UploadError {
  return new UploadError('damaged', 422, 'This image is damaged or incomplete and cannot be read. Export it again and retry.', { cause });
}

/** A full decode at a tiny size, with sharp's default `failOn` ('warning'): fails on truncated or corrupt data. */
async function decodes(file: string, pixelLimit: number): Promise<boolean> {
  try {
    await sharp(file, { limitInputPixels: pixelLimit }).resize(32, 32, { fit: 'inside' }).raw().toBuffer();
    return true;
  } catch {
    return false;
  }
}

const inFlight = new Map<string, Promise<unknown>>();

/** Runs `task` once no other task for `key` is running in this process. */
async function oneAtATime<T>(key: string, task: () => Promise<T>): Promise<T> {
  while (inFlight.has(key)) await inFlight.get(key)!.catch(() => {});
  const running = task();
  inFlight.set(key, running);
  try {
    return await running;
  } finally {
    inFlight.delete(key);
  }
}

function duplicateOf(work: Work): IngestResult {
  return { status: 'duplicate', existing: { id: work.id, slug: work.slug, title: work.title } };
}

/** The public fields of a newly created work, as the upload endpoint answers them. */
export function createdWorkBody(work: Work): CreatedWork {
  return { id: work.id, slug: work.slug, title: work.title, width: work.width, height: work.height, status: work.status };
}

/** Streams an uploaded original into the shop and creates a draft work from it (or reports the work it duplicates). */
export async function ingestUpload(body: ReadableStream<Uint8Array>, opts: IngestOptions): Promise<IngestResult> {
  const { incomingDir, originalsDir, derivativesDir, uploadMaxBytes, uploadMaxPixels } = config();
  if (opts.declaredBytes !== undefined && opts.declaredBytes > uploadMaxBytes) throw tooLarge(uploadMaxBytes);

  await fsp.mkdir(incomingDir, { recursive: true });
  const temp = path.join(incomingDir, `${crypto.randomUUID()}.part`);
  let original: string | null = null;
  let derivativeDir: string | null = null;
  let contentHash: string | null = null;

  try {
    const { type } = await receive(body, temp, uploadMaxBytes, opts.signal);
    await checkHeader(temp, type, uploadMaxPixels);

    const hash = (contentHash = await sha256File(temp));
    // The same file sent twice at once: the second waits for the first, then finds it as a duplicate.
    return await oneAtATime(hash, async () => {
      const known = await Work.findOne({ where: { originalSha256: hash } });
      if (known) {
        await fsp.rm(temp, { force: true });
        return duplicateOf(known);
      }

      const settings = await ShopSettings.findByPk(1);
      if (!settings) throw new UploadError('not_ready', 503, 'The shop has no settings yet, so previews cannot be watermarked.');
      const facts = await inspectImage(temp, uploadMaxPixels);

      await fsp.mkdir(originalsDir, { recursive: true });
      const originalKey = `${crypto.randomUUID()}.${STORED_EXTENSION[type]}`;
      original = path.join(originalsDir, originalKey);
      await fsp.rename(temp, original);

      let made: Awaited<ReturnType<typeof makeDerivatives>>;
      try {
        made = await makeDerivatives(original, { derivativesDir, watermarkText: settings.watermarkText, contentHash: hash, pixelLimit: uploadMaxPixels });
      } catch (error) {
        // Only the input's fault when it cannot be decoded on its own; anything else is ours (500).
        if (!(await decodes(original, uploadMaxPixels))) throw damaged(error);
        throw error;
      }
      derivativeDir = path.join(derivativesDir, made.derivatives.key);

      const title = titleFromFileName(opts.fileName);
      const base = slugify(title);
      // IMMEDIATE takes SQLite's write lock first, so the duplicate check and the slug choice cannot race another upload.
      const outcome = await db().transaction({ type: Transaction.TYPES.IMMEDIATE }, async (transaction): Promise<IngestResult> => {
        const raced = await Work.findOne({ where: { originalSha256: hash }, transaction });
        if (raced) return duplicateOf(raced);
        const taken = await Work.findAll({
          attributes: ['slug'],
          where: { [Op.or]: [{ slug: base }, { slug: { [Op.like]: `${base}-%` } }] },
          transaction,
        });
        const work = await Work.create(
          {
            slug: uniqueSlug(base, taken.map((w) => w.slug)),
            title,
            caption: '',
            altText: '', // required before publishing, asked for in the Studio
            keywords: [],
            seriesId: null,
            width: facts.width,
            height: facts.height,
            orientation: orientationOf(facts.width, facts.height),
            capture: facts.capture,
            status: 'draft',
            publishedAt: null,
            originalKey,
            originalSha256: hash,
            colourProfile: facts.colourProfile,
            derivatives: made.derivatives,
            placeholder: made.placeholder,
            dominantColor: made.dominantColor,
          },
          { transaction },
        );
        return { status: 'created', work };
      });
      if (outcome.status === 'duplicate') await removeLeftovers(original, derivativeDir, hash);
      return outcome;
    });
  } catch (error) {
    await fsp.rm(temp, { force: true }).catch(() => {});
    await removeLeftovers(original, derivativeDir, contentHash);
    throw error;
  }
}

/**
 * Removes what a refused or failed upload stored. The derivative folder is named from the content, so it is
 * kept when a work that exists uses it (the same file, uploaded at the same moment, won the race).
 */
async function removeLeftovers(original: string | null, derivativeDir: string | null, contentHash: string | null): Promise<void> {
  if (original) await fsp.rm(original, { force: true }).catch(() => {});
  if (!derivativeDir) return;
  const key = path.basename(derivativeDir);
  const users = contentHash ? await Work.findAll({ attributes: ['derivatives'], where: { originalSha256: contentHash } }).catch(() => []) : [];
  if (users.some((w) => w.derivatives?.key === key)) return;
  await fsp.rm(derivativeDir, { recursive: true, force: true }).catch(() => {});
}
