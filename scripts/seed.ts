/** Brings the database up to date and seeds the demo shop if it has not been seeded (`npm run seed`). */
import { db, closeDb } from '../src/lib/server/db';
import { migrator, seeder } from '../db/migrator';

const sequelize = db();
const applied = await migrator(sequelize).up();
if (applied.length) console.log(`migrations applied: ${applied.map((m) => m.name).join(', ')}`);
const pending = await seeder(sequelize).pending();
if (pending.length) {
  console.log('seeding the demo shop (first start renders the demo pictures; this takes a minute)…');
  await seeder(sequelize).up();
  console.log('demo shop seeded');
} else {
  console.log('demo shop already seeded');
}
await closeDb();
