/**
 * `npm start`: a project-local PostgreSQL on 127.0.0.1, migrations, demo data (once), the web
 * build, and the server on http://127.0.0.1:3000.
 */
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { startCluster } from './lib/pg-cluster';
import { persistentSecret } from './lib/secrets';
import { ensureWebBuild } from './lib/web-build';
import { createDb } from '../server/db/client';
import { runMigrations } from '../server/db/migrate';
import { seedDemo, DEMO_USERS, DEMO_PASSWORD } from '../server/db/seed';
import { benchDemo } from '../server/db/seed-bench';
import { seedCaptures } from '../server/db/seed-captures';
import { seedHistory } from '../server/db/seed-history';
import { startServer } from '../server/main';
import { projectStorage } from './lib/project-storage';

const root = resolve(fileURLToPath(new URL('..', import.meta.url)));
const dataDir = join(root, '.data');
/** The project cluster's port; PG_PORT moves it when two checkouts run side by side. */
const PG_PORT = Number(process.env.PG_PORT ?? 54329);

async function main() {
  const cluster = await startCluster({ dataDir: join(dataDir, 'postgres'), port: PG_PORT, database: 'quietpath' });
  const { db, pool } = createDb(cluster.url);
  await runMigrations(db);
  const { env, store, localS3, stop: stopStorage } = await projectStorage(dataDir);
  const seeded = await seedDemo(db, [benchDemo, seedCaptures(store), seedHistory]);
  await pool.end();
  const webDist = ensureWebBuild(root);

  const server = await startServer({
    ...env,
    DATABASE_URL: cluster.url,
    HOST: process.env.HOST ?? '127.0.0.1',
    PORT: process.env.PORT ?? '3000',
    SESSION_SECRET: process.env.SESSION_SECRET ?? persistentSecret(join(dataDir, 'session-secret')),
    WEB_DIST: webDist,
  });

  console.log(`\nQuietpath is running at ${server.url}/`);
  console.log(seeded ? 'Demo data was created.' : 'Using the existing data in .data/.');
  if (localS3) console.log(`Stored files: a local S3-compatible server at ${localS3.endpoint}, bucket "${localS3.bucket}" (objects in .data/s3).`);
  console.log(`Outbox (every e-mail sent, with attachments): ${server.url}/outbox`);
  if (!process.env.SMTP_URL) console.log('  E-mail is delivered to a built-in local mailbox; nothing leaves this machine.');
  if (!process.env.STRIPE_SECRET_KEY) console.log('  Payments use a built-in test payment service; no money moves.');
  console.log(`Demo sign-ins (password for all: ${DEMO_PASSWORD}; demo only):`);
  for (const u of DEMO_USERS) console.log(`  ${u.role.padEnd(11)} ${u.email}`);
  console.log('Press Ctrl+C to stop; PostgreSQL is stopped with it.\n');

  let stopping = false;
  const stop = async () => {
    if (stopping) return;
    stopping = true;
    await server.close().catch(() => undefined);
    await stopStorage();
    cluster.stop();
    process.exit(0);
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}

main().catch((err) => {
  console.error(`\nQuietpath could not start: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
});
