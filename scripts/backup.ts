/** `npm run backup [-- FOLDER]`: dump the project cluster and copy the stored files into backups/. */
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { startCluster } from './lib/pg-cluster';
import { filesOf, projectStorage } from './lib/project-storage';
import { backup } from './lib/backup';

const root = resolve(fileURLToPath(new URL('..', import.meta.url)));
const stamp = new Date().toISOString().replace(/[-:]/g, '').replace('T', '-').slice(0, 15);
const out = process.argv[2] ? resolve(process.argv[2]) : join(root, 'backups', `quietpath-${stamp}`);

try {
  const cluster = await startCluster({ dataDir: join(root, '.data', 'postgres'), port: 54329, database: 'quietpath', log: () => {} });
  const storage = await projectStorage(join(root, '.data'));
  try {
    await backup({ databaseUrl: cluster.url, ...filesOf(storage) }, out);
  } finally {
    await storage.stop();
  }
  console.log(`Backup written to ${out}`);
} catch (err) {
  console.error(`Backup failed: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
}
