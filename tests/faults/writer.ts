/**
 * One of two processes writing to the same database at once (fault tests). Each transaction goes through
 * the app's own Sequelize set-up (WAL, 5 s busy timeout, IMMEDIATE transactions): it reads the shared
 * counter, writes it back plus one and records a row. Prints `ready` once connected, starts when a line
 * comes on stdin, prints `waiting` just before its first write, and at the end one JSON line with what it did.
 * Env: STILLMARK_DATA_DIR, WRITER (its name), COUNT (transactions), HOLD_EVERY (hold the lock 20 ms every nth).
 * Run: node --import tsx tests/faults/writer.ts
 */
import { QueryTypes } from 'sequelize';
import { closeDb, db } from '../../src/lib/server/db';

const writer = process.env.WRITER ?? 'w';
const count = Number(process.env.COUNT ?? 100);
const holdEvery = Number(process.env.HOLD_EVERY ?? 10);

const sequelize = db();
// Connected and loaded before the start: then both writers begin on the same signal.
await sequelize.query('SELECT value FROM fault_counter WHERE id = 1', { type: QueryTypes.SELECT });
console.log('ready');
await new Promise((resolve) => process.stdin.once('data', resolve));
let errors = 0;
let maxWaitMs = 0;
const started = Date.now();
console.log('waiting');
for (let seq = 0; seq < count; seq++) {
  const asked = Date.now();
  let waited = 0;
  try {
    await sequelize.transaction(async (transaction) => {
      waited = Date.now() - asked;
      const [row] = await sequelize.query<{ value: number }>('SELECT value FROM fault_counter WHERE id = 1', { type: QueryTypes.SELECT, transaction });
      const next = row!.value + 1;
      if (seq % holdEvery === 0) await new Promise((r) => setTimeout(r, 20)); // hold the write lock a while
      await sequelize.query('UPDATE fault_counter SET value = $1 WHERE id = 1', { bind: [next], transaction });
      await sequelize.query('INSERT INTO fault_rows (writer, seq, seen) VALUES ($1, $2, $3)', { bind: [writer, seq, next], transaction });
    });
  } catch (error) {
    errors++;
    console.error(`${writer} #${seq}:`, (error as Error).message);
  }
  maxWaitMs = Math.max(maxWaitMs, waited);
}
console.log(JSON.stringify({ writer, done: count - errors, errors, maxWaitMs, elapsedMs: Date.now() - started }));
await closeDb();
