/**
 * The capture pipeline below the HTTP layer: the store-and-enqueue transaction rolls back whole,
 * and an analysis that throws is retried, then failed, with the reason kept on the capture.
 */
import { afterAll, describe, expect, it, inject } from 'vitest';
import { createHash, randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { eq } from 'drizzle-orm';
import { testDb } from '../support/server';
import { makeBenchJob, sample } from '../support/captures';
import { captures } from '../../server/db/schema/index';
import { storeCaptures, checkUpload, type StagedFile } from '../../server/services/captures';
import { storagePath, tempDir } from '../../server/services/capture-storage';
import type { AnalysisQueue } from '../../server/services/analysis-queue';
import { analyseCapture } from '../../server/worker/analyse-capture';
import { localStore } from '../../server/storage/local-store';

const { db, close } = testDb();
afterAll(close);
const filesDir = inject('filesDir');

function stage(bytes: Uint8Array, name: string): StagedFile {
  mkdirSync(tempDir(filesDir), { recursive: true });
  const tempPath = join(tempDir(filesDir), `test-${randomBytes(6).toString('hex')}.part`);
  writeFileSync(tempPath, bytes);
  return { originalName: name, tempPath, size: bytes.length, sha256: createHash('sha256').update(bytes).digest('hex'), head: bytes.subarray(0, 65536) };
}

/** A queue whose enqueue fails, as when the pgboss schema is unreachable mid-transaction. */
const brokenQueue: AnalysisQueue = {
  boss: undefined as never,
  enqueue: () => Promise.reject(new Error('queue unavailable')),
  wake: () => undefined,
  registerLocalWorker: () => undefined,
  stop: () => Promise.resolve(),
};

describe('store and enqueue in one transaction', () => {
  it('when the enqueue fails, no capture row stays and the newly stored file is removed', async () => {
    const job = await makeBenchJob(db);
    const bytes = sample('tone-997hz-clean.wav').slice();
    bytes[bytes.length - 3] = (bytes[bytes.length - 3]! + 7) & 0xff; // content nobody stored yet
    const file = stage(bytes, 'rollback.wav');
    const checked = await checkUpload(db, job.shopId, job.jobId, [file], [
      { testPointId: job.testPointIds[0]!, phase: 'before', stimulus: 'tone', drivenChannel: null, selectedInput: null, drivenInput: null, calibrationId: null, loadOhms: null, notes: '' },
    ]);
    await expect(storeCaptures(db, brokenQueue, localStore(filesDir), { shopId: job.shopId, jobId: job.jobId, userId: 1 }, checked)).rejects.toThrow('queue unavailable');
    expect(await db.select().from(captures).where(eq(captures.jobId, job.jobId))).toEqual([]);
    expect(existsSync(storagePath(filesDir, file.sha256))).toBe(false);
    expect(existsSync(file.tempPath)).toBe(false);
  });
});

describe('analysis attempts', () => {
  it('an unexpected error is retried (state back to queued), and failed on the last attempt', async () => {
    const job = await makeBenchJob(db);
    const sha256 = createHash('sha256').update(randomBytes(32)).digest('hex');
    // A folder where the file should be: reading it fails with EISDIR, not a "missing file".
    mkdirSync(storagePath(filesDir, sha256), { recursive: true });
    try {
      const [row] = await db
        .insert(captures)
        .values({ shopId: job.shopId, jobId: job.jobId, phase: 'before', stimulus: 'tone', originalName: 'odd.wav', sha256, sizeBytes: 100, sampleRate: 48_000, channels: 1, bitsPerSample: 16, durationS: 1 })
        .returning({ id: captures.id });
      const id = row!.id;
      await expect(analyseCapture(db, localStore(filesDir), id, { retryCount: 0, retryLimit: 3 })).rejects.toThrow();
      const [first] = await db.select().from(captures).where(eq(captures.id, id));
      expect(first).toMatchObject({ state: 'queued', error: expect.stringMatching(/^Attempt 1 failed \(.*EISDIR.*\); trying again$/) });
      await expect(analyseCapture(db, localStore(filesDir), id, { retryCount: 3, retryLimit: 3 })).rejects.toThrow();
      const [last] = await db.select().from(captures).where(eq(captures.id, id));
      expect(last).toMatchObject({ state: 'failed', error: expect.stringMatching(/EISDIR/) });
    } finally {
      rmSync(storagePath(filesDir, sha256), { recursive: true, force: true });
    }
  });

  it('a file the engine cannot read fails at once, with the reader’s reason', async () => {
    const job = await makeBenchJob(db);
    const bytes = new TextEncoder().encode(`not audio ${randomBytes(4).toString('hex')}`);
    const sha256 = createHash('sha256').update(bytes).digest('hex');
    mkdirSync(join(storagePath(filesDir, sha256), '..'), { recursive: true });
    writeFileSync(storagePath(filesDir, sha256), bytes);
    const [row] = await db
      .insert(captures)
      .values({ shopId: job.shopId, jobId: job.jobId, phase: 'before', stimulus: 'tone', originalName: 'text.wav', sha256, sizeBytes: bytes.length, sampleRate: 48_000, channels: 1, bitsPerSample: 16, durationS: 1 })
      .returning({ id: captures.id });
    expect(await analyseCapture(db, localStore(filesDir), row!.id, { retryCount: 0, retryLimit: 3 })).toBe('failed');
    const [after] = await db.select().from(captures).where(eq(captures.id, row!.id));
    expect(after).toMatchObject({ state: 'failed', error: expect.stringMatching(/not a WAV file|RIFF|truncated|file/) });
  });
});
