import { eq, inArray, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { captures } from '../db/schema/index';
import { ANALYSIS_QUEUE, PGBOSS_SCHEMA, type AnalysisJobData, type AnalysisQueue } from '../services/analysis-queue';
import { analyseCapture, checkedResult } from './analyse-capture';
import { endIdleAnalysisThreads, warmAnalysis } from './channel-threads';
import type { FileStore } from '../storage/file-store';

// The queue worker: takes capture-analysis jobs one at a time and, now and then, looks for
// captures that are waiting with no job behind them (demo data, a job lost with a killed worker).

export interface AnalysisWorker {
  /**
   * Settles once the start-up warm-up is over (a failed warm-up is only logged): true when jobs
   * are being taken, false when taking them could not start (logged too).
   */
  warmedUp: Promise<boolean>;
  stop(): Promise<void>;
}

export interface WorkerOptions {
  queue: AnalysisQueue;
  db: Db;
  store: FileStore;
  pollingIntervalSeconds?: number;
  sweepIntervalMs?: number;
  /**
   * Seconds of synthetic capture analysed once at start-up, in the background, so the first real
   * captures find the engine compiled and (local storage) its threads started: 0 for none.
   */
  warmUpSeconds?: number;
  log?: (message: string) => void;
}

export async function startAnalysisWorker(options: WorkerOptions): Promise<AnalysisWorker> {
  const { queue, db, store } = options;
  const log = options.log ?? ((m: string) => console.error(m));
  const warmUpSeconds = options.warmUpSeconds ?? 0;
  // Threads only serve captures on this node's disk; one in a bucket streams through this thread.
  const warming =
    warmUpSeconds > 0
      ? warmAnalysis({ seconds: warmUpSeconds, threads: store.kind === 'local' ? undefined : 0 }).then(
          // The result's check and figures are compiled too: the first capture's took 20–30 ms cold.
          (warm) => void checkedResult(warm.result, null),
          (err: unknown) => log(`analysis warm-up: ${err instanceof Error ? err.message : String(err)}`),
        )
      : Promise.resolve();
  let stopped = false;
  let workerId: string | null = null;
  const take = async () => {
    if (stopped) return;
    const id = await queue.boss.work<AnalysisJobData>(
      ANALYSIS_QUEUE,
      { includeMetadata: true, batchSize: 1, pollingIntervalSeconds: options.pollingIntervalSeconds ?? 1 },
      async (jobs) => {
        for (const job of jobs) {
          await analyseCapture(db, store, job.data.captureId, { retryCount: job.retryCount, retryLimit: job.retryLimit });
        }
        // pg-boss waits out the polling interval even after a job; with a batch of uploads
        // queued behind this one, fetch the next at once instead.
        queue.boss.notifyWorker(id);
      },
    );
    workerId = id;
    queue.registerLocalWorker(id);
    queue.wake();
  };
  // Jobs are taken once the warm-up is over: a job fetched earlier would wait with its expiry
  // clock running, or compete with the warm-up for the cores. Captures queued meanwhile wait.
  const taking = warmUpSeconds > 0 ? warming.then(take) : take();
  if (warmUpSeconds === 0) await taking;
  else taking.catch((err: unknown) => log(`analysis worker could not start taking jobs: ${err instanceof Error ? err.message : String(err)}`));
  const sweep = () =>
    requeueStranded(db, queue).catch((err: unknown) => log(`analysis sweep: ${err instanceof Error ? err.message : String(err)}`));
  await sweep();
  queue.wake();
  const timer = setInterval(sweep, options.sweepIntervalMs ?? 60_000);
  timer.unref();
  return {
    warmedUp: taking.then(
      () => workerId !== null || stopped,
      () => false,
    ),
    async stop() {
      stopped = true;
      clearInterval(timer);
      await taking.catch(() => undefined);
      if (workerId !== null) await queue.boss.offWork(ANALYSIS_QUEUE);
      await endIdleAnalysisThreads();
    },
  };
}

interface StrandedRow extends Record<string, unknown> {
  id: number;
  state: 'queued' | 'running';
  failed_jobs: number;
}

/**
 * Captures waiting or running with no live job: queued ones get a job; running ones whose jobs
 * all failed (the worker died on every attempt) are marked failed instead of looping forever.
 * Returns the ids that were queued again.
 */
export async function requeueStranded(db: Db, queue: AnalysisQueue): Promise<number[]> {
  const job = sql.raw(`${PGBOSS_SCHEMA}.job`);
  const rows = (
    await db.execute<StrandedRow>(sql`
      select c.id, c.state,
        (select count(*)::int from ${job} j
          where j.name = ${ANALYSIS_QUEUE} and j.state = 'failed' and (j.data->>'captureId')::int = c.id) as failed_jobs
      from ${captures} c
      where c.state in ('queued', 'running')
        and not exists (
          select 1 from ${job} j
          where j.name = ${ANALYSIS_QUEUE} and j.state < 'completed' and (j.data->>'captureId')::int = c.id)
      order by c.id`)
  ).rows;
  const gaveUp = rows.filter((r) => r.state === 'running' && r.failed_jobs > 0).map((r) => r.id);
  const again = rows.filter((r) => !gaveUp.includes(r.id)).map((r) => r.id);
  if (gaveUp.length > 0) {
    await db
      .update(captures)
      .set({ state: 'failed', error: 'The analysis stopped without finishing on every attempt; start it again to retry' })
      .where(inArray(captures.id, gaveUp));
  }
  for (const id of again) {
    // Each capture in its own transaction: the state check and the new job commit together.
    await db.transaction(async (tx) => {
      const [still] = await tx.select({ state: captures.state }).from(captures).where(eq(captures.id, id)).for('update');
      if (!still || (still.state !== 'queued' && still.state !== 'running')) return;
      // Another sweeper may have queued it while we waited for the lock.
      const live = await tx.execute(
        sql`select 1 from ${job} j where j.name = ${ANALYSIS_QUEUE} and j.state < 'completed' and (j.data->>'captureId')::int = ${id}`,
      );
      if (live.rows.length === 0) {
        await tx.update(captures).set({ state: 'queued' }).where(eq(captures.id, id));
        await queue.enqueue([id], tx);
      }
    });
  }
  return again;
}
