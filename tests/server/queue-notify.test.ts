/**
 * New analysis jobs are announced by NOTIFY in the transaction that queues them, so workers in any
 * process wake when the capture commits instead of at their next poll (server/services/analysis-queue.ts).
 * PostgreSQL delivers a notification sent inside a transaction only at its commit, and never when
 * it rolls back (PostgreSQL documentation, NOTIFY): both are checked with a separate listener.
 */
import { afterAll, beforeAll, describe, expect, it, inject } from 'vitest';
import pg from 'pg';
import { testDb } from '../support/server';
import { ANALYSIS_CHANNEL, startAnalysisQueue, type AnalysisQueue } from '../../server/services/analysis-queue';

const { db, close } = testDb();
const heard: string[] = [];
let listener: pg.Client;
let queue: AnalysisQueue;

beforeAll(async () => {
  listener = new pg.Client({ connectionString: inject('databaseUrl') });
  await listener.connect();
  await listener.query(`LISTEN ${ANALYSIS_CHANNEL}`);
  listener.on('notification', (m) => heard.push(m.channel));
  queue = await startAnalysisQueue(inject('databaseUrl'), { supervise: false });
});

afterAll(async () => {
  await queue.stop();
  await listener.end();
  await close();
});

/**
 * A round trip on the listening connection: notifications already sent to it arrive on the same
 * socket before the query's reply, so they have been heard when this returns.
 */
async function settle(): Promise<void> {
  await listener.query('select 1');
}

describe('analysis jobs announced at commit', () => {
  it('nothing is heard while the transaction is open, one notification after it commits', async () => {
    heard.length = 0;
    await db.transaction(async (tx) => {
      // A capture id no row has: a worker that takes the job skips it.
      await queue.enqueue([2_000_000_001], tx);
      await settle();
      expect(heard).toEqual([]);
    });
    await settle();
    expect(heard).toEqual([ANALYSIS_CHANNEL]);
  });

  it('a rolled-back transaction announces nothing', async () => {
    heard.length = 0;
    await db
      .transaction(async (tx) => {
        await queue.enqueue([2_000_000_002], tx);
        throw new Error('roll back');
      })
      .catch(() => undefined);
    await settle();
    expect(heard).toEqual([]);
  });
});
