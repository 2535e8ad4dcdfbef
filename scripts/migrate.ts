/** Applies pending migrations (`npm run migrate`), or undoes the last one (`npm run migrate -- down`). */
import { db, closeDb } from '../src/lib/server/db';
import { migrator } from '../db/migrator';

const umzug = migrator(db());
const direction = process.argv[2] ?? 'up';
if (direction === 'down') {
  const undone = await umzug.down();
  console.log(undone.length ? `undid ${undone.map((m) => m.name).join(', ')}` : 'nothing to undo');
} else if (direction === 'up') {
  const applied = await umzug.up();
  console.log(applied.length ? `applied ${applied.map((m) => m.name).join(', ')}` : 'schema is up to date');
} else {
  console.error('usage: migrate [up|down]');
  process.exitCode = 2;
}
await closeDb();
