/**
 * The two storage drivers keep the same promises: whole files or nothing under a key, ranges as
 * HTTP counts them (both ends inclusive, RFC 9110 §14.1.2), a missing key named as such, and a
 * failed upload leaves neither an object nor a capture row. The S3 driver runs against a local
 * S3-compatible server (s3rver) in its own process.
 */
import { afterAll, beforeAll, describe, expect, it, inject } from 'vitest';
import { createHash, randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { text } from 'node:stream/consumers';
import { eq } from 'drizzle-orm';
import { startLocalS3, type LocalS3 } from '../../scripts/lib/local-s3';
import { loadConfig } from '../../server/config';
import { captures } from '../../server/db/schema/index';
import type { AnalysisQueue } from '../../server/services/analysis-queue';
import { captureKey, readCapture } from '../../server/services/capture-storage';
import { checkUpload, storeCaptures, type StagedFile } from '../../server/services/captures';
import { StoredFileMissing, type FileStore } from '../../server/storage/file-store';
import { localStore } from '../../server/storage/local-store';
import { loadStorageSettings, openFileStore } from '../../server/storage/storage-config';
import { makeBenchJob, sample } from '../support/captures';
import { testDb } from '../support/server';

let s3: LocalS3;
const stores: Record<'local' | 's3', FileStore> = {} as Record<'local' | 's3', FileStore>;
const { db, close } = testDb();

beforeAll(async () => {
  const dir = mkdtempSync(join(inject('scratchDir'), 'store-'));
  s3 = await startLocalS3({ dir: join(dir, 's3') });
  stores.local = localStore(join(dir, 'local'));
  stores.s3 = await openFileStore(loadStorageSettings({ ...s3.env, FILES_DIR: join(dir, 's3-scratch') }));
});
afterAll(async () => {
  await s3?.stop();
  await close();
});

function scratchFile(store: FileStore, bytes: Uint8Array): string {
  mkdirSync(store.scratchDir, { recursive: true });
  const path = join(store.scratchDir, `t-${randomBytes(6).toString('hex')}.part`);
  writeFileSync(path, bytes);
  return path;
}

async function keys(store: FileStore): Promise<string[]> {
  const out: string[] = [];
  for await (const k of store.list()) out.push(k);
  return out.sort();
}

/** A queue whose enqueue fails, as when the pgboss schema is unreachable mid-transaction. */
const brokenQueue: AnalysisQueue = {
  boss: undefined as never,
  enqueue: () => Promise.reject(new Error('queue unavailable')),
  wake: () => undefined,
  registerLocalWorker: () => undefined,
  stop: () => Promise.resolve(),
};

describe.each(['local', 's3'] as const)('the %s driver', (kind) => {
  const store = () => stores[kind];

  it('stores bytes whole, replaces them, reads ranges with both ends inclusive, lists and removes', async () => {
    const prefix = `recordings/${randomBytes(4).toString('hex')}`;
    await store().putBytes(`${prefix}/0.pcm`, new TextEncoder().encode('0123456789'));
    await store().putBytes(`${prefix}/1.pcm`, new TextEncoder().encode('first'));
    await store().putBytes(`${prefix}/1.pcm`, new TextEncoder().encode('second'));
    expect((await store().readBytes(`${prefix}/1.pcm`))!.toString()).toBe('second');
    expect(await store().size(`${prefix}/0.pcm`)).toBe(10);
    expect(await text(await store().openRead(`${prefix}/0.pcm`, { start: 2, end: 5 }))).toBe('2345');
    expect(await text(await store().openRead(`${prefix}/0.pcm`, { start: 7 }))).toBe('789');
    expect((await keys(store())).filter((k) => k.startsWith(prefix))).toEqual([`${prefix}/0.pcm`, `${prefix}/1.pcm`]);
    await store().removeFolder(prefix);
    expect((await keys(store())).filter((k) => k.startsWith(prefix))).toEqual([]);
    expect(await store().readBytes(`${prefix}/0.pcm`)).toBeNull();
    expect(await store().size(`${prefix}/0.pcm`)).toBeNull();
    await expect(store().openRead(`${prefix}/0.pcm`)).rejects.toBeInstanceOf(StoredFileMissing);
    await store().remove(`${prefix}/0.pcm`); // removing what is not there is no error
  });

  it('stores content once under its hash; a second copy of the same content is dropped', async () => {
    const bytes = randomBytes(20_000);
    const sha = createHash('sha256').update(bytes).digest('hex');
    const first = scratchFile(store(), bytes);
    expect(await store().putFileOnce(captureKey(sha), first)).toEqual({ created: true });
    const second = scratchFile(store(), bytes);
    expect(await store().putFileOnce(captureKey(sha), second)).toEqual({ created: false });
    expect(existsSync(first) || existsSync(second)).toBe(false);
    const back = Buffer.concat(await (await readCapture(store(), sha)).toArray());
    expect(createHash('sha256').update(back).digest('hex')).toBe(sha);
    await store().remove(captureKey(sha));
  });

  it('when the enqueue fails, no capture row stays and the newly stored file is removed', async () => {
    const job = await makeBenchJob(db);
    const bytes = sample('tone-997hz-clean.wav').slice();
    bytes[bytes.length - 5] = randomBytes(1)[0]!; // content nobody stored yet (almost surely)
    bytes[bytes.length - 7] = randomBytes(1)[0]!;
    const sha256 = createHash('sha256').update(bytes).digest('hex');
    const file: StagedFile = { originalName: 'rollback.wav', tempPath: scratchFile(store(), bytes), size: bytes.length, sha256, head: bytes.subarray(0, 65536) };
    const checked = await checkUpload(db, job.shopId, job.jobId, [file], [
      { testPointId: null, phase: 'before', stimulus: 'tone', drivenChannel: null, selectedInput: null, drivenInput: null, calibrationId: null, loadOhms: null, notes: '' },
    ]);
    await expect(storeCaptures(db, brokenQueue, store(), { shopId: job.shopId, jobId: job.jobId, userId: 1 }, checked)).rejects.toThrow('queue unavailable');
    expect(await db.select().from(captures).where(eq(captures.jobId, job.jobId))).toEqual([]);
    expect(await store().size(captureKey(sha256))).toBeNull();
  });
});

describe('the S3 driver', () => {
  it('uploads a file larger than one part in parts and reads back the same bytes', async () => {
    const bytes = randomBytes(8 * 1024 * 1024 + 12_345); // just over one 8 MiB part
    const sha = createHash('sha256').update(bytes).digest('hex');
    expect(await stores.s3.putFileOnce(captureKey(sha), scratchFile(stores.s3, bytes))).toEqual({ created: true });
    expect(await stores.s3.size(captureKey(sha))).toBe(bytes.length);
    const hash = createHash('sha256');
    for await (const chunk of await readCapture(stores.s3, sha)) hash.update(chunk as Buffer);
    expect(hash.digest('hex')).toBe(sha);
    const tail = Buffer.concat(await (await readCapture(stores.s3, sha, { start: bytes.length - 10 })).toArray());
    expect(tail.equals(bytes.subarray(bytes.length - 10))).toBe(true);
    await stores.s3.remove(captureKey(sha));
  });

  it('an upload cut off by the storage server going away leaves no object', async () => {
    const dir = mkdtempSync(join(inject('scratchDir'), 'store-cut-'));
    const own = await startLocalS3({ dir: join(dir, 's3') });
    const store = await openFileStore(loadStorageSettings({ ...own.env, FILES_DIR: join(dir, 'scratch') }));
    const bytes = randomBytes(40 * 1024 * 1024); // five parts: the server stops while they go up
    const sha = createHash('sha256').update(bytes).digest('hex');
    const upload = store.putFileOnce(captureKey(sha), scratchFile(store, bytes));
    await new Promise((r) => setTimeout(r, 150));
    await own.stop();
    await expect(upload).rejects.toThrow();
    const again = await startLocalS3({ dir: join(dir, 's3'), port: Number(new URL(own.endpoint).port) });
    try {
      expect(await keys(store)).toEqual([]);
    } finally {
      await again.stop();
    }
  });
});

describe('storage settings', () => {
  const base = { DATABASE_URL: 'postgres://u:p@127.0.0.1:5432/db', SESSION_SECRET: 'x'.repeat(32) };

  it('names what is missing or wrong', () => {
    expect(() => loadConfig({ ...base })).toThrow(/FILES_DIR: FILES_DIR is needed with STORAGE=local/);
    expect(() => loadConfig({ ...base, STORAGE: 's3' })).toThrow(/S3_BUCKET: S3_BUCKET is needed with STORAGE=s3/);
    expect(() => loadConfig({ ...base, STORAGE: 's3', S3_BUCKET: 'Bad_Name' })).toThrow(/S3_BUCKET must be a bucket name/);
    expect(() => loadConfig({ ...base, STORAGE: 's3', S3_BUCKET: 'shop-files', S3_ACCESS_KEY_ID: 'key' })).toThrow(/Give both S3_ACCESS_KEY_ID and S3_SECRET_ACCESS_KEY/);
    expect(() => loadConfig({ ...base, STORAGE: 'ftp', FILES_DIR: '/tmp/x' })).toThrow(/STORAGE/);
    expect(loadConfig({ ...base, STORAGE: 's3', S3_BUCKET: 'shop-files', S3_ENDPOINT: 'http://127.0.0.1:9' }).STORAGE).toBe('s3');
  });

  it('a bucket that does not exist stops the start with its name', async () => {
    await expect(openFileStore(loadStorageSettings({ ...s3.env, S3_BUCKET: 'no-such-bucket' }))).rejects.toThrow(
      /The S3 bucket "no-such-bucket" at http:\/\/127\.0\.0\.1:\d+ cannot be used/,
    );
  });
});
