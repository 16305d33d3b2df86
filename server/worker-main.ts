/**
 * A stand-alone analysis worker: `tsx server/worker-main.ts` with DATABASE_URL and FILES_DIR
 * pointing at the same database and the same stored files as the server (a shared mount when it
 * runs on another machine). Start as many as the bench needs; pg-boss hands each job to one.
 */
import { z } from 'zod';
import { createDb } from './db/client';
import { runMigrations } from './db/migrate';
import { startAnalysisQueue } from './services/analysis-queue';
import { startAnalysisWorker } from './worker/analysis-worker';

const envSchema = z.object({ DATABASE_URL: z.string().url(), FILES_DIR: z.string().min(1) });

async function main() {
  const parsed = envSchema.safeParse(process.env);
  if (!parsed.success) {
    throw new Error(`Set ${parsed.error.issues.map((i) => i.path.join('.')).join(' and ')} for the worker`);
  }
  const env = parsed.data;
  const { db, pool } = createDb(env.DATABASE_URL);
  await runMigrations(db);
  const queue = await startAnalysisQueue(env.DATABASE_URL);
  const worker = await startAnalysisWorker({ queue, db, filesDir: env.FILES_DIR, log: (m) => console.error(m) });
  console.log('Analysis worker running; Ctrl+C to stop.');
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
}

main().catch((err) => {
  console.error(`The analysis worker could not start: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
});
