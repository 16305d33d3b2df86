/**
 * A stand-alone analysis worker: `tsx server/worker-main.ts` with DATABASE_URL and the same
 * storage settings as the servers (STORAGE=s3 with the S3_* settings, or FILES_DIR on a shared
 * mount). Start as many as the work needs, on any machine; pg-boss hands each job to one.
 */
import { z } from 'zod';
import { createDb } from './db/client';
import { runMigrations } from './db/migrate';
import { startAnalysisQueue } from './services/analysis-queue';
import { checkStorageEnv, openFileStore, storageEnvShape, storageSettings } from './storage/storage-config';
import { startAnalysisWorker } from './worker/analysis-worker';
import { DEFAULT_WARM_UP_SECONDS } from './worker/warm-up-length';

const envSchema = z
  .object({
    DATABASE_URL: z.string().url(),
    ...storageEnvShape,
    /** As for the server: an analysis running longer is taken as lost and run again. */
    ANALYSIS_EXPIRE_SECONDS: z.coerce.number().int().min(1).max(86_400).optional(),
    QUEUE_MAINTENANCE_SECONDS: z.coerce.number().int().min(1).max(3600).optional(),
    /** As for the server: seconds of synthetic capture analysed at start-up to warm the engine (0: none). */
    ANALYSIS_WARM_UP_SECONDS: z.coerce.number().min(0).max(60).default(DEFAULT_WARM_UP_SECONDS),
  })
  .superRefine(checkStorageEnv);

async function main() {
  const parsed = envSchema.safeParse(process.env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`).join('\n');
    throw new Error(`Invalid worker settings:\n${lines}`);
  }
  const env = parsed.data;
  const store = await openFileStore(storageSettings(env));
  const { db, pool } = createDb(env.DATABASE_URL);
  await runMigrations(db);
  const queue = await startAnalysisQueue(env.DATABASE_URL, {
    expireSeconds: env.ANALYSIS_EXPIRE_SECONDS,
    maintenanceSeconds: env.QUEUE_MAINTENANCE_SECONDS,
  });
  const worker = await startAnalysisWorker({ queue, db, store, warmUpSeconds: env.ANALYSIS_WARM_UP_SECONDS, log: (m) => console.error(m) });
  let stopping = false;
  const stop = async () => {
    if (stopping) return;
    stopping = true;
    await worker.stop();
    await queue.stop();
    await pool.end();
    process.exit(0);
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
  // "Running" once jobs are being taken, after the engine's warm-up: whoever waits for this line
  // (a supervisor, a benchmark) sees the worker at full speed.
  if (!(await worker.warmedUp)) throw new Error('it could not start taking jobs from the queue');
  if (!stopping) console.log('Analysis worker running; Ctrl+C to stop.');
}

main().catch((err) => {
  console.error(`The analysis worker could not start: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
});
