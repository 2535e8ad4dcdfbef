/**
 * Clears what an upload left behind when its process died half-way (killed, out of memory, power cut):
 * a `.part` file in `uploads/incoming`, an original renamed into `uploads/originals` whose work row was
 * never written, a derivative folder (or its `.tmp` folder) no work points at. Only entries untouched for
 * a while are considered, so an upload in flight in any process (its file is written to continuously,
 * and the row follows the original within seconds) is never touched.
 *
 * Partial files and derivatives are removed (derivatives can always be made again from an original).
 * An original no work names is moved to `uploads/orphaned/` rather than deleted, in case a database was
 * restored or pointed elsewhere by mistake; what lies there longer than 30 days is deleted.
 */
import fsp from 'node:fs/promises';
import path from 'node:path';
import { QueryTypes } from 'sequelize';
import { config } from './config';
import { db } from './db';

/** An entry untouched this long cannot belong to an upload in progress. */
export const STALE_AFTER_MS = 10 * 60_000;
/** How long an orphaned original is kept before it is deleted. */
export const ORPHAN_KEEP_MS = 30 * 24 * 60 * 60_000;

/** ingest.ts names originals `<uuid>.<ext>` and derivative folders by a 24-hex-digit content key. */
const ORIGINAL_NAME = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}\.[a-z0-9]{2,5}$/;
const DERIVATIVE_KEY = /^[a-f0-9]{24}$/;

export interface SweepResult {
  /** Paths removed, relative to the uploads folder. */
  removed: string[];
  /** Originals moved to `orphaned/`, by name. */
  orphaned: string[];
}

async function entries(dir: string): Promise<{ name: string; full: string; mtimeMs: number }[]> {
  let names: string[];
  try {
    names = await fsp.readdir(dir);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return [];
    throw error;
  }
  const out: { name: string; full: string; mtimeMs: number }[] = [];
  for (const name of names) {
    const full = path.join(dir, name);
    try {
      out.push({ name, full, mtimeMs: (await fsp.lstat(full)).mtimeMs });
    } catch {
      // gone meanwhile
    }
  }
  return out;
}

/** One pass over incoming, originals and derivatives. Lists the files before reading the rows, so a work created meanwhile is seen. */
export async function sweepUploads({ olderThanMs = STALE_AFTER_MS, now = Date.now() }: { olderThanMs?: number; now?: number } = {}): Promise<SweepResult> {
  const { uploadsDir, incomingDir, originalsDir, derivativesDir } = config();
  const orphanDir = path.join(uploadsDir, 'orphaned');
  const cutoff = now - olderThanMs;
  const result: SweepResult = { removed: [], orphaned: [] };
  const rel = (full: string) => path.relative(uploadsDir, full);
  const remove = async (full: string) => {
    await fsp.rm(full, { recursive: true, force: true });
    result.removed.push(rel(full));
  };

  const incoming = (await entries(incomingDir)).filter((e) => e.mtimeMs < cutoff);
  const originals = (await entries(originalsDir)).filter((e) => e.mtimeMs < cutoff);
  const derivatives = (await entries(derivativesDir)).filter((e) => e.mtimeMs < cutoff);

  for (const e of incoming) await remove(e.full);

  const rows = await db().query<{ original_key: string; derivative_key: string | null }>(
    "SELECT original_key, json_extract(derivatives, '$.key') AS derivative_key FROM works",
    { type: QueryTypes.SELECT },
  );
  const usedOriginals = new Set(rows.map((r) => path.basename(r.original_key)));
  const usedDerivatives = new Set(rows.map((r) => r.derivative_key).filter((k): k is string => Boolean(k)));

  for (const e of originals) {
    if (e.name.endsWith('.tmp')) await remove(e.full);
    else if (ORIGINAL_NAME.test(e.name) && !usedOriginals.has(e.name)) {
      await fsp.mkdir(orphanDir, { recursive: true });
      const moved = path.join(orphanDir, e.name);
      await fsp.rename(e.full, moved);
      // The 30 days start now, not when the file was written.
      const at = new Date(now);
      await fsp.utimes(moved, at, at);
      result.orphaned.push(e.name);
    }
  }
  for (const e of derivatives) {
    if (e.name.endsWith('.tmp')) await remove(e.full);
    else if (DERIVATIVE_KEY.test(e.name) && !usedDerivatives.has(e.name)) await remove(e.full);
  }
  for (const e of await entries(orphanDir)) {
    if (e.mtimeMs < now - ORPHAN_KEEP_MS) await remove(e.full);
  }
  return result;
}
