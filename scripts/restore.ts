/**
 * `npm run restore -- <backup folder> [--into <data folder>] [--force]`: checks every file of the backup
 * against its manifest (SHA-256), then brings it back into the data folder (default: STILLMARK_DATA_DIR or
 * the working folder). A folder that already holds shop data is refused unless --force, which moves that
 * data aside into .replaced-<time>/ instead of deleting it. Stop the shop before restoring over its data.
 */
import { parseArgs } from 'node:util';
import { BackupError, restoreBackup } from '../src/lib/server/backup';

let parsed;
try {
  parsed = parseArgs({ allowPositionals: true, options: { into: { type: 'string' }, force: { type: 'boolean', default: false } } });
} catch (error) {
  console.error(`${(error as Error).message}\nusage: npm run restore -- <backup folder> [--into <data folder>] [--force]`);
  process.exit(2);
}
const { positionals, values } = parsed;
if (positionals.length !== 1) {
  console.error('usage: npm run restore -- <backup folder> [--into <data folder>] [--force]');
  process.exit(2);
}
try {
  const { into, manifest, previous } = await restoreBackup(positionals[0]!, { into: values.into, force: values.force });
  const { orders, licences, works } = manifest.database.counts;
  console.log(`restored the backup of ${manifest.createdAt} into ${into}: ${manifest.files.length} files checked; ${works} works, ${orders} orders, ${licences} licences`);
  if (previous) console.log(`the data that was there is in ${previous}; delete it once the restored shop looks right`);
  console.log('run `npm run migrate` if this version of the shop has newer migrations than the backup');
} catch (error) {
  console.error(error instanceof BackupError ? `restore refused: ${error.message}` : error);
  process.exit(1);
}
