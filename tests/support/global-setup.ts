/**
 * `npm test`: a throwaway PostgreSQL cluster in its own folder and port, migrated and seeded with
 * the demo shop, removed when the run ends.
 */
import { mkdtempSync, rmSync, mkdirSync } from 'node:fs';
import { createServer } from 'node:net';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { TestProject } from 'vitest/node';
import { startCluster, type Cluster } from '../../scripts/lib/pg-cluster';
import { createDb } from '../../server/db/client';
import { runMigrations } from '../../server/db/migrate';
import { seedDemo } from '../../server/db/seed';
import { benchDemo } from '../../server/db/seed-bench';
import { seedCaptures } from '../../server/db/seed-captures';
import { localStore } from '../../server/storage/local-store';

declare module 'vitest' {
  export interface ProvidedContext {
    databaseUrl: string;
    scratchDir: string;
    /** Stored files shared by every test server, so any worker can read any capture. */
    filesDir: string;
  }
}

const root = resolve(fileURLToPath(new URL('../..', import.meta.url)));

function freePort(): Promise<number> {
  return new Promise((res, rej) => {
    const srv = createServer();
    srv.once('error', rej);
    srv.listen(0, '127.0.0.1', () => {
      const addr = srv.address();
      const port = typeof addr === 'object' && addr ? addr.port : 0;
      srv.close(() => res(port));
    });
  });
}

let cluster: Cluster | undefined;
let dir: string | undefined;

export async function setup(project: TestProject) {
  mkdirSync(join(root, '.test-data'), { recursive: true });
  dir = mkdtempSync(join(root, '.test-data', 'run-'));
  cluster = await startCluster({ dataDir: join(dir, 'postgres'), port: await freePort(), database: 'quietpath_test', log: () => {} });
  const { db, pool } = createDb(cluster.url);
  await runMigrations(db);
  const filesDir = join(dir, 'files');
  await seedDemo(db, [benchDemo, seedCaptures(localStore(filesDir))]);
  await pool.end();
  project.provide('databaseUrl', cluster.url);
  project.provide('scratchDir', dir);
  project.provide('filesDir', filesDir);
}

export async function teardown() {
  cluster?.stop();
  if (dir) rmSync(dir, { recursive: true, force: true });
}
