/**
 * The analysis queue across processes: captures waiting with no job behind them (demo data, a
 * worker killed mid-run) are picked up when a worker starts; a server with WORKER=off only queues.
 */
import { afterAll, describe, expect, it, inject } from 'vitest';
import { createHash } from 'node:crypto';
import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname } from 'node:path';
import { eq, sql } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { signedIn } from '../support/client';
import { makeBenchJob, sample, upload, waitForAnalysis } from '../support/captures';
import { captures, jobs } from '../../server/db/schema/index';
import { storagePath } from '../../server/services/capture-storage';
import type { SignalPath } from '../../shared/signal-path';
import { DEMO_CAPTURES } from '../../server/db/seed-captures';
import { availableParallelism } from 'node:os';
import { activeAnalysisThreads, analysisThreadTasks } from '../../server/worker/channel-threads';

const { db, close } = testDb();
afterAll(close);

async function insertCapture(jobId: number, shopId: number, bytes: Uint8Array, state: 'queued' | 'running', store = true) {
  const sha256 = createHash('sha256').update(bytes).digest('hex');
  if (store) {
    const path = storagePath(inject('filesDir'), sha256);
    mkdirSync(dirname(path), { recursive: true });
    writeFileSync(path, bytes);
  }
  const [row] = await db
    .insert(captures)
    .values({ shopId, jobId, phase: 'before', stimulus: 'tone', originalName: `${state}.wav`, sha256, sizeBytes: bytes.length, sampleRate: 48_000, channels: 2, bitsPerSample: 24, durationS: 3, state })
    .returning({ id: captures.id });
  return row!.id;
}

describe('picking up stranded captures', () => {
  it('a worker that starts measures captures left queued or running with no job, and fails a missing file', async () => {
    const job = await makeBenchJob(db);
    const bytes = sample('demo-before-input-socket.wav');
    const queued = await insertCapture(job.jobId, job.shopId, bytes, 'queued');
    const running = await insertCapture(job.jobId, job.shopId, bytes, 'running');
    const missing = await insertCapture(job.jobId, job.shopId, new TextEncoder().encode(`gone ${Date.now()}`), 'queued', false);
    const server = await startTestServer();
    try {
      const tech = await signedIn(server.url, 'tech@quietpath.test');
      const done = await waitForAnalysis(tech, job.jobId, [queued, running, missing]);
      const byId = new Map(done.map((c) => [c.id, c]));
      expect(byId.get(queued)!.state).toBe('done');
      expect(byId.get(running)!.state).toBe('done');
      expect(byId.get(running)!.figures!.separationDb).toBeCloseTo(80, 0); // README: input socket 80 dB
      expect(byId.get(missing)).toMatchObject({ state: 'failed', error: 'the stored file is missing' });
    } finally {
      await server.close();
    }
  });

  it('a capture whose jobs all failed while running is marked failed instead of looping', async () => {
    const job = await makeBenchJob(db);
    const id = await insertCapture(job.jobId, job.shopId, sample('demo-before-input-socket.wav'), 'running');
    await db.execute(sql`insert into pgboss.job (name, data, state) values ('capture-analysis', ${JSON.stringify({ captureId: id })}::jsonb, 'failed')`);
    const server = await startTestServer();
    try {
      const [row] = await db.select({ state: captures.state, error: captures.error }).from(captures).where(eq(captures.id, id));
      expect(row).toMatchObject({ state: 'failed', error: expect.stringMatching(/stopped without finishing/) });
    } finally {
      await server.close();
    }
  });
});

describe('workers in other processes', () => {
  it('WORKER=off only queues; a worker started later measures the capture', async () => {
    const job = await makeBenchJob(db);
    const queueOnly = await startTestServer({ WORKER: 'off' });
    let id: number;
    try {
      const tech = await signedIn(queueOnly.url, 'tech@quietpath.test');
      const res = await upload(tech, job.jobId, [
        { name: 'later.wav', bytes: sample('demo-after-selector-out.wav'), meta: { testPointId: job.testPointIds[1]!, phase: 'after', stimulus: 'tone', drivenChannel: 0 } },
      ]);
      expect(res.status).toBe(201);
      id = res.body.captures[0]!.id;
      // Committed together with the row: the job waits in the queue for any worker.
      const jobRows = await db.execute<{ state: string }>(
        sql`select state from pgboss.job where name = 'capture-analysis' and (data->>'captureId')::int = ${id}`,
      );
      expect(jobRows.rows.map((r) => r.state)).toEqual(['created']);
      const [row] = await db.select({ state: captures.state }).from(captures).where(eq(captures.id, id));
      expect(row!.state).toBe('queued');
    } finally {
      await queueOnly.close();
    }
    const worker = await startTestServer();
    try {
      const tech = await signedIn(worker.url, 'tech@quietpath.test');
      const [done] = await waitForAnalysis(tech, job.jobId, [id!]);
      expect(done!.state).toBe('done');
    } finally {
      await worker.close();
    }
  });
});

describe('warm-up at start', () => {
  it('a server starts its analysis threads before taking jobs, measures a short capture with them, and ends them on close', async () => {
    const job = await makeBenchJob(db);
    const server = await startTestServer({ ANALYSIS_WARM_UP_SECONDS: '0.5' });
    // Two threads where the machine has two cores or more; none on one core.
    const warm = availableParallelism() >= 2 ? 2 : 0;
    try {
      expect(await server.analysisWarmedUp).toBe(true);
      expect(activeAnalysisThreads()).toBe(warm);
      const before = analysisThreadTasks();
      const tech = await signedIn(server.url, 'tech@quietpath.test');
      const res = await upload(tech, job.jobId, [
        { name: 'warm.wav', bytes: sample('demo-before-input-socket.wav'), meta: { testPointId: job.testPointIds[0]!, phase: 'before', stimulus: 'tone', drivenChannel: 0 } },
      ]);
      expect(res.status).toBe(201);
      const [done] = await waitForAnalysis(tech, job.jobId, [res.body.captures[0]!.id]);
      expect(done!.state).toBe('done');
      expect(done!.figures!.separationDb).toBeCloseTo(80, 0); // README: input socket 80 dB
      // A few seconds of stereo, far below the break-even for new threads: the warm ones took it.
      expect(analysisThreadTasks() - before).toBe(warm);
      expect(activeAnalysisThreads()).toBe(warm);
    } finally {
      await server.close();
    }
    expect(activeAnalysisThreads()).toBe(0);
  });
});

describe('demo data', () => {
  it('the demo job has its captures measured: the fault first shows at the selector output', async () => {
    const server = await startTestServer();
    try {
      const tech = await signedIn(server.url, 'tech@quietpath.test');
      const [demo] = await db.select({ id: jobs.id }).from(jobs).orderBy(jobs.id).limit(1);
      // Other test files add captures to the demo job too; these are the seeded ones.
      const seeded = new Set(DEMO_CAPTURES.map((d) => d.file));
      const list = await tech.get<{ id: number; originalName: string }[]>(`/api/jobs/${demo!.id}/captures`);
      const ids = list.body.filter((c) => seeded.has(c.originalName)).map((c) => c.id);
      expect(ids.length).toBeGreaterThanOrEqual(3);
      const done = await waitForAnalysis(tech, demo!.id, ids);
      expect(done.map((c) => c.state)).toEqual(done.map(() => 'done'));
      const path = await tech.get<SignalPath>(`/api/jobs/${demo!.id}/signal-path`);
      expect(path.body.firstFault.before?.name).toBe('Input selector output');
      expect(path.body.firstFault.after).toBeNull();
      // The demo crosstalk files are built with the tuner 29 dB (left) below the selected disc
      // input before the repair and 71 dB after (samples-synthetic/README.md).
      const crosstalk = await tech.get<{ sentence: string | null; rows: { driven: string; selected: string }[] }>(`/api/jobs/${demo!.id}/input-crosstalk`);
      expect(crosstalk.body.sentence).toBe('Tuner is now heard 71 dB below the selected disc input; before the repair it was 29 dB below.');
      expect(crosstalk.body.rows.map((r) => `${r.driven}→${r.selected}`)).toEqual(['Tuner→Disc', 'Tuner→Aux']);
    } finally {
      await server.close();
    }
  });
});
