/**
 * `npm run restore [-- FOLDER]`: put back a backup made by `npm run backup` (the newest one when no
 * folder is given). Stop `npm start` first: the database and the stored files are replaced.
 */
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { startCluster } from './lib/pg-cluster';
import { filesOf, projectStorage } from './lib/project-storage';
import { newestBackup, restore } from './lib/backup';

const root = resolve(fileURLToPath(new URL('..', import.meta.url)));
const from = process.argv[2] ? resolve(process.argv[2]) : newestBackup(join(root, 'backups'));

try {
  if (!from) throw new Error('no backup found in backups/; name a folder: npm run restore -- FOLDER');
  const cluster = await startCluster({ dataDir: join(root, '.data', 'postgres'), port: 54329, database: 'quietpath', log: () => {} });
  const storage = await projectStorage(join(root, '.data'));
  try {
    await restore({ databaseUrl: cluster.url, ...filesOf(storage) }, from);
  } finally {
    await storage.stop();
  }
  console.log(`Restored ${from}`);
} catch (err) {
  console.error(`Restore failed: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
}
