import PgBoss from 'pg-boss';
import pg from 'pg';
import { sql, type SQL } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';

// The capture-analysis queue: pg-boss tables in PostgreSQL (schema "pgboss"), so any number of
// worker processes on any machine that reaches the database can share the work.
//
// Pick-up: every enqueue also sends a NOTIFY on ANALYSIS_CHANNEL in the same transaction, which
// PostgreSQL delivers when the capture commits; each process LISTENs and wakes its workers at
// once, wherever they run. Polling faster instead would cost every worker a query per interval
// while idle (and pg-boss polls no faster than every 0.5 s); the poll stays as the fallback for
// a notification missed while a listener was reconnecting.

export const ANALYSIS_QUEUE = 'capture-analysis';
export const PGBOSS_SCHEMA = 'pgboss';
/** NOTIFY channel announcing new analysis jobs. */
export const ANALYSIS_CHANNEL = 'capture_analysis_queued';

export interface AnalysisJobData {
  captureId: number;
}

/** Attempts after the first; a capture whose analysis throws this many more times is failed. */
export const ANALYSIS_RETRY_LIMIT = 3;
/** A job active for longer is taken as lost (worker killed) and retried by pg-boss maintenance. */
export const ANALYSIS_EXPIRE_SECONDS = 10 * 60;

/**
 * Lets pg-boss run its SQL inside a Drizzle transaction, so a capture row and its analysis job
 * commit or roll back together. pg-boss writes $1…$n placeholders; Drizzle binds each value.
 */
export function pgBossDb(db: DbOrTx): PgBoss.Db {
  return {
    async executeSql(text: string, values: unknown[] = []) {
      const parts = text.split(/\$(\d+)/);
      // Drizzle drops an undefined value from the text altogether; PostgreSQL wants NULL there.
      const chunks: SQL[] = parts.map((part, i) => (i % 2 === 0 ? sql.raw(part) : sql`${values[Number(part) - 1] ?? null}`));
      const result = await db.execute(sql.join(chunks));
      return { rows: result.rows };
    },
  };
}

export interface AnalysisQueue {
  readonly boss: PgBoss;
  /** Adds one job per capture; pass the open transaction the capture rows were written in. */
  enqueue(captureIds: number[], db?: DbOrTx): Promise<void>;
  /** Wakes this process's workers at once (after a commit) rather than at their next poll. */
  wake(): void;
  registerLocalWorker(workerId: string): void;
  stop(): Promise<void>;
}

export interface QueueOptions {
  supervise?: boolean;
  /** Seconds before a running analysis is taken as lost (its worker killed) and retried. */
  expireSeconds?: number;
  maintenanceSeconds?: number;
}

export async function startAnalysisQueue(databaseUrl: string, options: QueueOptions = {}): Promise<AnalysisQueue> {
  const expireInSeconds = options.expireSeconds ?? ANALYSIS_EXPIRE_SECONDS;
  const boss = new PgBoss({
    connectionString: databaseUrl,
    schema: PGBOSS_SCHEMA,
    max: 4,
    application_name: 'quietpath-queue',
    schedule: false,
    supervise: options.supervise ?? true,
    maintenanceIntervalSeconds: options.maintenanceSeconds ?? 30,
  });
  boss.on('error', (err) => console.error('analysis queue:', err.message));
  await boss.start();
  if (!(await boss.getQueue(ANALYSIS_QUEUE))) await createQueueOnce(boss);
  let stopped = false;
  const localWorkers = new Set<string>();
  const wake = () => {
    if (!stopped) for (const id of localWorkers) boss.notifyWorker(id);
  };
  const listener = await listen(databaseUrl, wake, () => stopped);
  return {
    boss,
    wake,
    registerLocalWorker(workerId) {
      localWorkers.add(workerId);
    },
    async enqueue(captureIds, db) {
      for (const captureId of captureIds) {
        const data: AnalysisJobData = { captureId };
        await boss.send(ANALYSIS_QUEUE, data, db ? { db: pgBossDb(db), expireInSeconds } : { expireInSeconds });
      }
      // Inside the caller's transaction PostgreSQL holds the notification until the commit.
      const notify = sql`select pg_notify(${ANALYSIS_CHANNEL}, '')`;
      if (db) await db.execute(notify);
      else await boss.getDb().executeSql(`select pg_notify($1, '')`, [ANALYSIS_CHANNEL]);
    },
    async stop() {
      if (stopped) return;
      stopped = true;
      await listener.stop();
      await boss.stop({ graceful: true, wait: true, timeout: 5000, close: true });
    },
  };
}

/**
 * A connection that LISTENs on ANALYSIS_CHANNEL and calls onNotice for each notification; it
 * reconnects after a second when the connection drops, until isStopped() says otherwise.
 */
async function listen(databaseUrl: string, onNotice: () => void, isStopped: () => boolean): Promise<{ stop(): Promise<void> }> {
  let client: pg.Client | null = null;
  let retry: NodeJS.Timeout | null = null;
  const connect = async (): Promise<void> => {
    const c = new pg.Client({ connectionString: databaseUrl, application_name: 'quietpath-queue-listen' });
    c.on('notification', (msg) => {
      if (msg.channel === ANALYSIS_CHANNEL) onNotice();
    });
    c.on('error', (err) => {
      console.error('analysis queue listener:', err.message);
      if (client === c) client = null;
      c.end().catch(() => {});
      if (!isStopped()) retry = setTimeout(() => void connect().catch(() => {}), 1000);
    });
    await c.connect();
    await c.query(`LISTEN ${ANALYSIS_CHANNEL}`);
    client = c;
    // A job queued while the listener was away would otherwise wait for the next poll.
    onNotice();
  };
  await connect();
  return {
    async stop() {
      if (retry) clearTimeout(retry);
      const c = client;
      client = null;
      await c?.end();
    },
  };
}

async function createQueueOnce(boss: PgBoss): Promise<void> {
  try {
    await boss.createQueue(ANALYSIS_QUEUE, {
      name: ANALYSIS_QUEUE,
      policy: 'standard',
      retryLimit: ANALYSIS_RETRY_LIMIT,
      retryDelay: 2,
      retryBackoff: true,
      expireInSeconds: ANALYSIS_EXPIRE_SECONDS,
      retentionDays: 7,
    });
  } catch (err) {
    // Another process created it between our check and our insert.
    if ((err as { code?: string }).code !== '23505') throw err;
  }
}
