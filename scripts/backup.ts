/**
 * `npm run backup [-- <folder>]`: a consistent copy of the database (SQLite's VACUUM INTO, safe while the
 * shop is running), the originals, previews and lab files, with a manifest of SHA-256 hashes, in a new
 * folder `stillmark-<UTC time>` inside <folder> (default: backups/ in the data folder).
 */
import { parseArgs } from 'node:util';
import { BackupError, createBackup } from '../src/lib/server/backup';

const { positionals } = parseArgs({ allowPositionals: true, options: {} });
if (positionals.length > 1) {
  console.error('usage: npm run backup [-- <folder for backups>]');
  process.exit(2);
}
try {
  const started = Date.now();
  const { dir, manifest } = await createBackup({ parentDir: positionals[0] });
  const bytes = manifest.files.reduce((sum, f) => sum + f.bytes, 0);
  const { orders, licences, works } = manifest.database.counts;
  console.log(`backup written to ${dir}`);
  console.log(`  ${manifest.files.length} files, ${(bytes / 1024 / 1024).toFixed(1)} MB; ${works} works, ${orders} orders, ${licences} licences; ${manifest.database.migrations.length} migrations; ${Date.now() - started} ms`);
  for (const warning of manifest.warnings) console.warn(`  warning: ${warning}`);
} catch (error) {
  console.error(error instanceof BackupError ? `backup failed: ${error.message}` : error);
  process.exit(1);
}
