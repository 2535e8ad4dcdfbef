/**
 * The catalogue's version (a counter raised by triggers on every change to the catalogue tables, see
 * migration 2026.12.02T09.30.00.catalogue-version) and values kept for as long as it stands still.
 * One indexed single-row read per use replaces the several queries, and the model building, that
 * the kept value would cost.
 */
import { QueryTypes, type Sequelize } from 'sequelize';
import { db } from './db';

async function readVersion(sequelize: Sequelize): Promise<number | null> {
  try {
    const rows = await sequelize.query<{ version: number }>('SELECT version FROM catalogue_version WHERE id = 1', { type: QueryTypes.SELECT, raw: true });
    return rows[0]?.version ?? null;
  } catch {
    return null;
  }
}

interface Batch {
  promise: Promise<number | null>;
  resolve(version: number | null): void;
}
const reads = new WeakMap<Sequelize, { running: boolean; waiting: Batch | null }>();

/**
 * The current version, or null when the database has no counter yet (then nothing is kept).
 * Callers that arrive while a read is running share the next read, which starts after they arrived:
 * every caller sees a version read after its call, yet under load one read serves many requests.
 */
export function catalogueVersion(sequelize: Sequelize = db()): Promise<number | null> {
  let state = reads.get(sequelize);
  if (!state) reads.set(sequelize, (state = { running: false, waiting: null }));
  const s = state;
  if (!s.waiting) {
    let resolve!: (version: number | null) => void;
    const promise = new Promise<number | null>((r) => (resolve = r));
    s.waiting = { promise, resolve };
  }
  const mine = s.waiting.promise;
  const start = () => {
    const batch = s.waiting!;
    s.waiting = null;
    s.running = true;
    void readVersion(sequelize).then((version) => {
      s.running = false;
      batch.resolve(version);
      if (s.waiting) start();
    });
  };
  if (!s.running) start();
  return mine;
}

/**
 * `load()` run once per catalogue version (and per database, as tests swap databases) and shared by
 * every caller until the version moves. A value loaded while the catalogue changed is tagged with the
 * version read before loading, so the next call loads again.
 */
export function perCatalogueVersion<T>(load: () => Promise<T>): () => Promise<T> {
  let kept: { sequelize: Sequelize; version: number; value: Promise<T> } | null = null;
  return async () => {
    const sequelize = db();
    const version = await catalogueVersion(sequelize);
    if (version === null) return load();
    if (kept && kept.sequelize === sequelize && kept.version === version) return kept.value;
    const value = load();
    kept = { sequelize, version, value };
    // A failed load is not kept.
    value.catch(() => {
      if (kept?.value === value) kept = null;
    });
    return value;
  };
}

/**
 * The same per argument list: `load(...args)` once per catalogue version and key, at most `max` keys
 * kept per version (past that, loads are simply not kept).
 */
export function perCatalogueVersionKeyed<A extends unknown[], T>(load: (...args: A) => Promise<T>, keyOf: (...args: A) => string, max = 500): (...args: A) => Promise<T> {
  let kept: { sequelize: Sequelize; version: number; values: Map<string, Promise<T>> } | null = null;
  return async (...args: A) => {
    const sequelize = db();
    const version = await catalogueVersion(sequelize);
    if (version === null) return load(...args);
    if (!kept || kept.sequelize !== sequelize || kept.version !== version) kept = { sequelize, version, values: new Map() };
    const values = kept.values;
    const key = keyOf(...args);
    const found = values.get(key);
    if (found) return found;
    const value = load(...args);
    if (values.size < max) {
      values.set(key, value);
      value.catch(() => values.delete(key));
    }
    return value;
  };
}
