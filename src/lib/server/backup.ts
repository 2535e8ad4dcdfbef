/**
 * Backups of a shop's data and their restore (`npm run backup`, `npm run restore`).
 *
 * The database is copied with SQLite's `VACUUM INTO`, which writes a consistent snapshot (one read
 * transaction) while the app goes on writing: in WAL mode readers and the writer do not block each other.
 * Then the originals, derivatives and lab files are copied, each hashed (SHA-256) as it is copied. Everything
 * goes into a hidden folder beside the target, renamed into place once the manifest is written, so a backup
 * folder that exists is complete. Restore checks every file against the manifest before it touches the
 * target, copies into a hidden folder in the target, checks the copies again and renames them into place.
 *
 * Layout of a backup (and of the data folder it restores into):
 *   manifest.json, db/stillmark.sqlite, db/.auth-secret (when there is one),
 *   uploads/originals/…, uploads/derivatives/…, lab/…
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { Transform } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import sqlite3 from 'sqlite3';
import { z } from 'zod';
import { config } from './config';
import { BUSY_TIMEOUT_MS } from './db';

export const MANIFEST = 'manifest.json';
const FORMAT = 'stillmark-backup';
const DATABASE = 'db/stillmark.sqlite';
const AUTH_SECRET = 'db/.auth-secret';
/** The folders a backup holds, as paths inside the backup (and inside a data folder). */
const TREES = ['uploads/originals', 'uploads/derivatives', 'lab'] as const;

const manifestSchema = z.object({
  format: z.literal(FORMAT),
  version: z.literal(1),
  createdAt: z.iso.datetime(),
  database: z.object({
    path: z.literal(DATABASE),
    migrations: z.array(z.string()),
    counts: z.object({ orders: z.number().int().min(0), licences: z.number().int().min(0), works: z.number().int().min(0) }),
  }),
  files: z.array(z.object({ path: z.string().min(1), bytes: z.number().int().min(0), sha256: z.string().regex(/^[a-f0-9]{64}$/) })),
  warnings: z.array(z.string()),
});
export type BackupManifest = z.infer<typeof manifestSchema>;

/** A backup or restore that cannot go ahead; the message says why and what to do. */
export class BackupError extends Error {
  override readonly name = 'BackupError';
}

// ------------------------------------------------------------------------------------------ helpers

function open(file: string, mode: number): Promise<sqlite3.Database> {
  return new Promise((resolve, reject) => {
    const handle = new sqlite3.Database(file, mode, (error) => (error ? reject(error) : resolve(handle)));
  });
}
function run(handle: sqlite3.Database, sql: string, params: unknown[] = []): Promise<void> {
  return new Promise((resolve, reject) => handle.run(sql, params, (error) => (error ? reject(error) : resolve())));
}
function all<T>(handle: sqlite3.Database, sql: string): Promise<T[]> {
  return new Promise((resolve, reject) => handle.all(sql, (error, rows) => (error ? reject(error) : resolve(rows as T[]))));
}
function close(handle: sqlite3.Database): Promise<void> {
  return new Promise((resolve, reject) => handle.close((error) => (error ? reject(error) : resolve())));
}

async function exists(file: string): Promise<boolean> {
  return fsp.access(file).then(() => true, () => false);
}

async function nonEmpty(dir: string): Promise<boolean> {
  try {
    return (await fsp.readdir(dir)).length > 0;
  } catch {
    return false;
  }
}

/** Every file under `dir`, as paths relative to it with forward slashes; work in progress (`*.tmp`, the lab pack's `.tmp-*`) is left out. */
async function walk(dir: string, prefix = ''): Promise<string[]> {
  let entries: fs.Dirent[];
  try {
    entries = await fsp.readdir(path.join(dir, prefix), { withFileTypes: true });
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return [];
    throw error;
  }
  const out: string[] = [];
  for (const entry of entries.sort((a, b) => a.name.localeCompare(b.name))) {
    if (entry.name.endsWith('.tmp') || entry.name.startsWith('.tmp-')) continue;
    const rel = prefix ? `${prefix}/${entry.name}` : entry.name;
    if (entry.isDirectory()) out.push(...(await walk(dir, rel)));
    else if (entry.isFile()) out.push(rel);
  }
  return out;
}

/** Copies one file, hashing what it copies; keeps the source's mode and modification time. */
async function copyHashed(from: string, to: string): Promise<{ bytes: number; sha256: string }> {
  await fsp.mkdir(path.dirname(to), { recursive: true });
  const hash = crypto.createHash('sha256');
  let bytes = 0;
  const stat = await fsp.stat(from);
  await pipeline(
    fs.createReadStream(from),
    new Transform({
      transform(chunk: Buffer, _encoding, done) {
        hash.update(chunk);
        bytes += chunk.length;
        done(null, chunk);
      },
    }),
    fs.createWriteStream(to, { flags: 'wx', mode: stat.mode & 0o777 }),
  );
  await fsp.utimes(to, stat.atime, stat.mtime);
  return { bytes, sha256: hash.digest('hex') };
}

async function hashFile(file: string): Promise<{ bytes: number; sha256: string }> {
  const hash = crypto.createHash('sha256');
  let bytes = 0;
  for await (const chunk of fs.createReadStream(file)) {
    hash.update(chunk as Buffer);
    bytes += (chunk as Buffer).length;
  }
  return { bytes, sha256: hash.digest('hex') };
}

function stamp(date: Date): string {
  return date.toISOString().replace(/:/g, '-').replace(/\.\d+Z$/, 'Z');
}

/** A manifest path must stay inside the backup and name one of the parts a backup holds. */
function safePath(rel: string): boolean {
  if (rel.includes('\\') || path.posix.isAbsolute(rel) || path.posix.normalize(rel) !== rel || rel.split('/').includes('..')) return false;
  return rel === DATABASE || rel === AUTH_SECRET || TREES.some((tree) => rel.startsWith(`${tree}/`));
}

// ------------------------------------------------------------------------------------------- backup

export interface BackupResult {
  dir: string;
  manifest: BackupManifest;
}

/**
 * Makes a new backup folder `stillmark-<UTC time>` in `parentDir` (default: the data folder's `backups/`)
 * and returns it with its manifest.
 */
export async function createBackup({ parentDir, now = new Date() }: { parentDir?: string; now?: Date } = {}): Promise<BackupResult> {
  const cfg = config();
  const parent = path.resolve(parentDir ?? path.join(cfg.dataDir, 'backups'));
  if (!(await exists(cfg.databasePath))) throw new BackupError(`There is no database at ${cfg.databasePath}: nothing to back up.`);
  await fsp.mkdir(parent, { recursive: true });
  let name = `stillmark-${stamp(now)}`;
  for (let n = 2; await exists(path.join(parent, name)); n++) name = `stillmark-${stamp(now)}-${n}`;
  const staging = path.join(parent, `.${name}.${crypto.randomBytes(4).toString('hex')}.partial`);
  await fsp.mkdir(path.join(staging, 'db'), { recursive: true });

  try {
    // 1. The database: one consistent snapshot, taken while the app may be writing.
    const snapshot = path.join(staging, DATABASE);
    const source = await open(cfg.databasePath, sqlite3.OPEN_READWRITE);
    try {
      source.configure('busyTimeout', BUSY_TIMEOUT_MS);
      await run(source, 'VACUUM INTO ?', [snapshot]);
    } finally {
      await close(source);
    }
    const copy = await open(snapshot, sqlite3.OPEN_READONLY);
    let migrations: string[];
    let counts: BackupManifest['database']['counts'];
    let originalKeys: string[];
    let derivativeKeys: string[];
    try {
      const [check] = await all<{ quick_check: string }>(copy, 'PRAGMA quick_check');
      if (check?.quick_check !== 'ok') throw new BackupError(`The database copy failed SQLite's check: ${check?.quick_check ?? 'no answer'}.`);
      migrations = (await all<{ name: string }>(copy, 'SELECT name FROM schema_migrations ORDER BY name')).map((r) => r.name);
      const [row] = await all<{ orders: number; licences: number; works: number }>(
        copy,
        'SELECT (SELECT COUNT(*) FROM orders) AS orders, (SELECT COUNT(*) FROM licences) AS licences, (SELECT COUNT(*) FROM works) AS works',
      );
      counts = { orders: row!.orders, licences: row!.licences, works: row!.works };
      const works = await all<{ original_key: string; derivative_key: string | null }>(copy, "SELECT original_key, json_extract(derivatives, '$.key') AS derivative_key FROM works");
      originalKeys = works.map((w) => path.basename(w.original_key));
      derivativeKeys = works.map((w) => w.derivative_key).filter((k): k is string => Boolean(k));
    } finally {
      await close(copy);
    }

    // 2. The files, after the snapshot: originals never change once stored, so every one the snapshot names is there.
    const files: BackupManifest['files'] = [{ path: DATABASE, ...(await hashFile(snapshot)) }];
    const secret = path.join(cfg.dataDir, AUTH_SECRET);
    if (await exists(secret)) files.push({ path: AUTH_SECRET, ...(await copyHashed(secret, path.join(staging, AUTH_SECRET))) });
    const roots: Record<(typeof TREES)[number], string> = { 'uploads/originals': cfg.originalsDir, 'uploads/derivatives': cfg.derivativesDir, lab: cfg.labDir };
    for (const tree of TREES) {
      for (const rel of await walk(roots[tree])) {
        try {
          files.push({ path: `${tree}/${rel}`, ...(await copyHashed(path.join(roots[tree], rel), path.join(staging, tree, rel))) });
        } catch (error) {
          // Removed while we were copying (a replaced preview set): what the snapshot needs is checked below.
          if ((error as NodeJS.ErrnoException).code !== 'ENOENT') throw error;
        }
      }
    }

    // 3. Whatever the snapshot names but the copy lacks is said plainly.
    const copied = new Set(files.map((f) => f.path));
    const warnings: string[] = [];
    for (const key of originalKeys) {
      if (!copied.has(`uploads/originals/${key}`)) warnings.push(`The original ${key} named by a work is missing.`);
    }
    const derivativeFolders = new Set(files.filter((f) => f.path.startsWith('uploads/derivatives/')).map((f) => f.path.split('/')[2]));
    for (const key of new Set(derivativeKeys)) {
      if (!derivativeFolders.has(key)) warnings.push(`The preview folder ${key} named by a work is missing (previews can be made again in Studio → Settings).`);
    }

    const manifest: BackupManifest = { format: FORMAT, version: 1, createdAt: now.toISOString(), database: { path: DATABASE, migrations, counts }, files, warnings };
    const manifestFile = path.join(staging, MANIFEST);
    await fsp.writeFile(manifestFile, `${JSON.stringify(manifest, null, 2)}\n`, { mode: 0o600 });
    const final = path.join(parent, name);
    await fsp.rename(staging, final);
    return { dir: final, manifest };
  } catch (error) {
    await fsp.rm(staging, { recursive: true, force: true }).catch(() => {});
    throw error;
  }
}

// ------------------------------------------------------------------------------------------ restore

/** Reads the manifest and checks every file it lists (size and SHA-256). Throws a BackupError naming the first problem. */
export async function verifyBackup(backupDir: string): Promise<BackupManifest> {
  const dir = path.resolve(backupDir);
  let raw: string;
  try {
    raw = await fsp.readFile(path.join(dir, MANIFEST), 'utf8');
  } catch {
    throw new BackupError(`${dir} is not a backup: it has no ${MANIFEST}.`);
  }
  let json: unknown;
  try {
    json = JSON.parse(raw);
  } catch {
    throw new BackupError(`The backup's ${MANIFEST} is not valid JSON: the backup is damaged.`);
  }
  const parsed = manifestSchema.safeParse(json);
  if (!parsed.success) {
    throw new BackupError(`The backup's ${MANIFEST} is not one this version reads (${parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}).`);
  }
  const manifest = parsed.data;
  const seen = new Set<string>();
  for (const file of manifest.files) {
    if (!safePath(file.path) || seen.has(file.path)) throw new BackupError(`The backup's ${MANIFEST} lists a path a backup cannot hold: ${JSON.stringify(file.path)}.`);
    seen.add(file.path);
  }
  if (!seen.has(DATABASE)) throw new BackupError(`The backup's ${MANIFEST} lists no database (${DATABASE}).`);
  for (const file of manifest.files) {
    let found: { bytes: number; sha256: string };
    try {
      found = await hashFile(path.join(dir, file.path));
    } catch {
      throw new BackupError(`The backup is damaged: ${file.path} is missing. Nothing was restored.`);
    }
    if (found.bytes !== file.bytes || found.sha256 !== file.sha256) {
      throw new BackupError(
        `The backup is damaged: ${file.path} does not match its SHA-256 in ${MANIFEST} (expected ${file.sha256.slice(0, 16)}… for ${file.bytes} bytes, found ${found.sha256.slice(0, 16)}… for ${found.bytes} bytes). Nothing was restored.`,
      );
    }
  }
  return manifest;
}

export interface RestoreResult {
  into: string;
  manifest: BackupManifest;
  /** Where the data that was there before went (only with `force`), or null. */
  previous: string | null;
}

/**
 * Restores a verified backup into the data folder `into` (default: the configured data folder). A folder that
 * already holds a database, uploads or lab files is refused unless `force`; then its data is moved aside into
 * `.replaced-<time>/` in that folder, not deleted. Stop the app using that folder first.
 */
export async function restoreBackup(backupDir: string, { into, force = false, now = new Date() }: { into?: string; force?: boolean; now?: Date } = {}): Promise<RestoreResult> {
  const source = path.resolve(backupDir);
  const manifest = await verifyBackup(source);
  const target = path.resolve(into ?? config().dataDir);
  const parts = [DATABASE, ...(manifest.files.some((f) => f.path === AUTH_SECRET) ? [AUTH_SECRET] : []), ...TREES];
  const occupied = [];
  if (await exists(path.join(target, DATABASE))) occupied.push(DATABASE);
  for (const tree of ['uploads', 'lab']) if (await nonEmpty(path.join(target, tree))) occupied.push(`${tree}/`);
  if (occupied.length && !force) {
    throw new BackupError(`${target} already holds shop data (${occupied.join(', ')}). Restore into an empty folder, or add --force to move that data aside and replace it.`);
  }

  await fsp.mkdir(target, { recursive: true });
  const staging = path.join(target, `.restore-${crypto.randomBytes(4).toString('hex')}`);
  try {
    for (const file of manifest.files) {
      const copied = await copyHashed(path.join(source, file.path), path.join(staging, file.path));
      if (copied.sha256 !== file.sha256) throw new BackupError(`${file.path} changed while it was being restored. Nothing was restored.`);
    }
    for (const tree of TREES) await fsp.mkdir(path.join(staging, tree), { recursive: true });
  } catch (error) {
    await fsp.rm(staging, { recursive: true, force: true }).catch(() => {});
    throw error;
  }

  // Move the old parts aside (with the database's -wal and -shm, which must never meet the restored file), then the new ones in.
  const aside = path.join(target, `.replaced-${stamp(now)}-${crypto.randomBytes(2).toString('hex')}`);
  const moves: { from: string; to: string }[] = [];
  const move = async (from: string, to: string) => {
    await fsp.mkdir(path.dirname(to), { recursive: true });
    await fsp.rename(from, to);
    moves.push({ from, to });
  };
  try {
    for (const rel of [...parts, `${DATABASE}-wal`, `${DATABASE}-shm`]) {
      if (await exists(path.join(target, rel))) await move(path.join(target, rel), path.join(aside, rel));
    }
    for (const rel of parts) await move(path.join(staging, rel), path.join(target, rel));
  } catch (error) {
    // Put back what was moved, newest first, so the folder is as it was.
    for (const { from, to } of moves.reverse()) await fsp.rename(to, from).catch(() => {});
    await fsp.rm(staging, { recursive: true, force: true }).catch(() => {});
    throw error;
  }
  await fsp.rm(staging, { recursive: true, force: true });
  const previous = moves.some((m) => m.to.startsWith(aside + path.sep)) ? aside : null;
  return { into: target, manifest, previous };
}
