/** The one Sequelize instance over SQLite (sqlite3 driver), with WAL, foreign keys and a busy timeout. */
import fs from 'node:fs';
import path from 'node:path';
import sqlite3 from 'sqlite3';
import { AsyncLocalStorage } from 'node:async_hooks';
import { Sequelize, Transaction } from 'sequelize';
import { config } from './config';
import { initModels } from './models';

/** How long a connection waits for SQLite's single writer lock before failing with SQLITE_BUSY. */
export const BUSY_TIMEOUT_MS = 5000;

/**
 * Sequelize's SQLite dialect opens a fresh connection per transaction and has no connect hook,
 * so the driver it is given tunes every connection as it opens (sqlite3 queues these until then).
 */
class TunedDatabase extends sqlite3.Database {
  constructor(filename: string, mode?: number, callback?: (err: Error | null) => void) {
    super(filename, mode ?? sqlite3.OPEN_READWRITE | sqlite3.OPEN_CREATE, callback);
    this.configure('busyTimeout', BUSY_TIMEOUT_MS);
    for (const pragma of ['journal_mode = WAL', 'synchronous = NORMAL', 'foreign_keys = ON']) {
      this.run(`PRAGMA ${pragma}`, (err) => {
        if (err) console.error(`sqlite: PRAGMA ${pragma} failed`, err);
      });
    }
  }
}
const tunedDriver = { ...sqlite3, Database: TunedDatabase };

export function createSequelize(databasePath: string, logSql = false): Sequelize {
  fs.mkdirSync(path.dirname(databasePath), { recursive: true });
  const sequelize = new Sequelize({
    dialect: 'sqlite',
    dialectModule: tunedDriver,
    storage: databasePath,
    logging: logSql ? (sql) => console.log(sql) : false,
    // Take the write lock when a transaction begins: a deferred one that reads first and writes later
    // fails with SQLITE_BUSY at once when another writer got in between; IMMEDIATE waits its turn.
    transactionType: Transaction.TYPES.IMMEDIATE,
    define: { underscored: true },
  });
  queueWriteTransactions(sequelize);
  initModels(sequelize);
  return sequelize;
}

/**
 * SQLite has one writer at a time. node-sqlite3 waits for a busy lock on libuv's small thread pool, so
 * many transactions waiting at once can starve the one holding the lock of a thread and stall every
 * request until the busy timeout. Managed transactions therefore take turns in-process (the busy timeout
 * still covers other processes); a transaction started inside another one's callback runs at once.
 */
function queueWriteTransactions(sequelize: Sequelize): void {
  const inside = new AsyncLocalStorage<true>();
  let tail: Promise<unknown> = Promise.resolve();
  const original = sequelize.transaction.bind(sequelize) as (...args: unknown[]) => Promise<unknown>;
  (sequelize as unknown as { transaction: (...args: unknown[]) => Promise<unknown> }).transaction = (...args: unknown[]) => {
    const callback = args.find((a) => typeof a === 'function') as ((t: Transaction) => Promise<unknown>) | undefined;
    if (!callback || inside.getStore()) return original(...args);
    const options = args.find((a) => typeof a === 'object' && a !== null);
    const run = () => inside.run(true, () => (options ? original(options, callback) : original(callback)));
    const result = tail.then(run, run);
    tail = result.catch(() => undefined);
    return result;
  };
}

let instance: Sequelize | undefined;

export function db(): Sequelize {
  instance ??= createSequelize(config().databasePath, config().logSql);
  return instance;
}

export async function closeDb(): Promise<void> {
  if (instance) await instance.close();
  instance = undefined;
}
