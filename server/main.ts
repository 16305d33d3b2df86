import type { Server } from 'node:http';
import type pg from 'pg';
import type { Express } from 'express';
import { loadConfig, type Config } from './config';
import { createDb } from './db/client';
import { runMigrations } from './db/migrate';
import { createApp } from './app';
import { startBilling } from './billing-runtime';
import { startAnalysisQueue } from './services/analysis-queue';
import { sweepOrphanedUploads } from './services/capture-storage';
import { startAnalysisWorker } from './worker/analysis-worker';
import { openFileStore, storageSettings } from './storage/storage-config';
import { SignedInCache } from './services/signed-in-cache';
import { shareSignedInChanges } from './services/signed-in-sharing';

export interface RunningServer {
  url: string;
  app: Express;
  /** The local payment stand-in's address, or null when a real provider is configured. */
  paymentApiUrl: string | null;
  /** Settles once this server's analysis worker has warmed up (at once without a worker); see AnalysisWorker. */
  analysisWarmedUp: Promise<boolean>;
  close(): Promise<void>;
}

/**
 * Waits until no query has run for 100 ms (10 s at most): requests already under way when the
 * server stops — their clients may have gone — finish before the pool closes under them.
 */
async function poolQuiet(pool: pg.Pool): Promise<void> {
  let quietSince = Date.now();
  for (const until = Date.now() + 10_000; Date.now() < until; ) {
    if (pool.totalCount - pool.idleCount + pool.waitingCount > 0) quietSince = Date.now();
    else if (Date.now() - quietSince >= 100) return;
    await new Promise((r) => setTimeout(r, 20));
  }
}

/** Migrates, then serves the API (and the built web app, when configured). */
export async function startServer(env: Record<string, string | undefined> = process.env): Promise<RunningServer> {
  const config: Config = loadConfig(env);
  const { pool, db } = createDb(config.DATABASE_URL);
  await runMigrations(db);
  const store = await openFileStore(storageSettings(config));
  await sweepOrphanedUploads(store.scratchDir);
  const queue = await startAnalysisQueue(config.DATABASE_URL, {
    expireSeconds: config.ANALYSIS_EXPIRE_SECONDS,
    maintenanceSeconds: config.QUEUE_MAINTENANCE_SECONDS,
  });
  const worker = config.WORKER === 'on' ? await startAnalysisWorker({ queue, db, store, warmUpSeconds: config.ANALYSIS_WARM_UP_SECONDS }) : null;
  const billing = await startBilling(config, db);
  const signedIn = new SignedInCache(config.SIGNED_IN_CACHE_MS);
  const sharing = config.SIGNED_IN_CACHE_MS > 0 ? await shareSignedInChanges(config.DATABASE_URL, pool, signedIn) : null;
  const app = createApp({ config, db, pool, queue, billing, store, signedIn });
  const server: Server = await new Promise((resolve) => {
    const s = app.listen(config.PORT, config.HOST, () => resolve(s));
  });
  const address = server.address();
  const port = typeof address === 'object' && address ? address.port : config.PORT;
  billing.attach(`http://${config.HOST}:${port}`);
  return {
    url: `http://${config.HOST}:${port}`,
    app,
    paymentApiUrl: billing.local.paymentApiUrl,
    analysisWarmedUp: worker?.warmedUp ?? Promise.resolve(true),
    close: async () => {
      await new Promise<void>((resolve) => server.close(() => resolve()));
      server.closeAllConnections();
      await poolQuiet(pool);
      await worker?.stop();
      await queue.stop();
      await billing.close();
      await sharing?.close();
      await pool.end();
    },
  };
}
