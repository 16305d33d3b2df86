/**
 * Capture upload, storage, background analysis and the figures that come back. Expected figures
 * are the synthetic samples' construction as written in samples-synthetic/README.md.
 */
import { afterAll, beforeAll, describe, expect, it, inject } from 'vitest';
import { createHash } from 'node:crypto';
import { existsSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { count, eq } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { makeBenchJob, sample, upload, waitForAnalysis, type UploadFile } from '../support/captures';
import { captures } from '../../server/db/schema/index';
import { storagePath, tempDir } from '../../server/services/capture-storage';
import type { RunningServer } from '../../server/main';
import type { CaptureSummary } from '../../shared/captures';

let server: RunningServer;
let tech: ApiClient;
let other: Awaited<ReturnType<typeof makeShop>>;
const { db, close } = testDb();
const filesDir = inject('filesDir');

beforeAll(async () => {
  server = await startTestServer();
  tech = await signedIn(server.url, 'tech@quietpath.test');
  other = await makeShop(db, 'Captures');
});
afterAll(async () => {
  await server?.close();
  await close();
});

const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');
/**
 * The same recording with the least significant byte of its last 24-bit sample changed: a valid
 * WAV, measurably the same, whose content nobody stored yet.
 */
function unique(name: string): Uint8Array {
  const bytes = sample(name).slice();
  const lsb = bytes.length - 3;
  bytes[lsb] = (bytes[lsb]! + 1 + Math.floor(Math.random() * 200)) & 0xff;
  return bytes;
}
const tone = (name: string, bytes: Uint8Array, testPointId: number, phase: 'before' | 'after' = 'before'): UploadFile => ({
  name,
  bytes,
  meta: { testPointId, phase, stimulus: 'tone', drivenChannel: 0 },
});
const captureCount = async (jobId: number) => (await db.select({ n: count() }).from(captures).where(eq(captures.jobId, jobId)))[0]!.n;
const tempFiles = () => (existsSync(tempDir(filesDir)) ? readdirSync(tempDir(filesDir)) : []);

describe('upload', () => {
  it('stores the file content-addressed, queues it and measures it as constructed', async () => {
    const job = await makeBenchJob(db);
    const bytes = sample('demo-before-selector-out.wav');
    const res = await upload(tech, job.jobId, [tone('selector-before.wav', bytes, job.testPointIds[1]!)]);
    expect(res.status).toBe(201);
    const [created] = res.body.captures;
    expect(created).toMatchObject({ originalName: 'selector-before.wav', sha256: sha(bytes), channels: 2, sampleRate: 48_000, bitsPerSample: 24, phase: 'before' });
    expect(['queued', 'running', 'done']).toContain(created!.state);
    expect(existsSync(storagePath(filesDir, sha(bytes)))).toBe(true);

    const [done] = await waitForAnalysis(tech, job.jobId, [created!.id]);
    expect(done!.state).toBe('done');
    const f = done!.figures!;
    // README: 36 clicks in 3 s (720 per minute) in channel 0; separation 30 dB; THD ≈ 0.05 %; hum ≈ −78.6 dBFS.
    expect(f.clickCount).toBe(36);
    expect(f.clicksPerMinute).toBeCloseTo(720, 0);
    expect(f.clicksChannel).toBe(0);
    expect(f.separationDb).toBeCloseTo(30, 0);
    // Built with 0.05 % THD; the crackle's broadband energy also lands in the harmonic bins.
    expect(f.thdPct).toBeGreaterThan(0.045);
    expect(f.thdPct).toBeLessThan(0.075);
    expect(Math.abs(f.humDbfs! - -78.6)).toBeLessThan(1.5);
    expect(Math.abs(f.levelDbfs! - -10)).toBeLessThan(0.3);
    expect(done!.engineVersion).toMatch(/^\d+\.\d+\.\d+$/);

    const result = await tech.get<{ channels: { spectrum: { markers: { kind: string }[] }; clicks: { events: unknown[] } }[] }>(`/api/captures/${created!.id}/result`);
    expect(result.status).toBe(200);
    expect(result.body.channels[0]!.spectrum.markers.some((m) => m.kind === 'fundamental')).toBe(true);
    expect(result.body.channels[0]!.clicks.events).toHaveLength(36);

    const file = await tech.raw('GET', `/api/captures/${created!.id}/file`);
    expect(file.status).toBe(200);
    expect(sha(new Uint8Array(await file.arrayBuffer()))).toBe(sha(bytes));
  });

  it('takes several files at once and stores identical content once', async () => {
    const job = await makeBenchJob(db);
    const bytes = unique('demo-after-selector-out.wav');
    const res = await upload(tech, job.jobId, [
      tone('first.wav', bytes, job.testPointIds[1]!, 'after'),
      tone('same-again.wav', bytes, job.testPointIds[1]!, 'after'),
      tone('input.wav', sample('demo-before-input-socket.wav'), job.testPointIds[0]!),
    ]);
    expect(res.status).toBe(201);
    expect(res.body.captures.map((c) => c.originalName)).toEqual(['first.wav', 'same-again.wav', 'input.wav']);
    const folder = join(filesDir, sha(bytes).slice(0, 2), sha(bytes).slice(2, 4));
    expect(readdirSync(folder).filter((n) => n.startsWith(sha(bytes)))).toEqual([`${sha(bytes)}.wav`]);
    const done = await waitForAnalysis(tech, job.jobId, res.body.captures.map((c) => c.id));
    expect(done.map((c) => c.state)).toEqual(['done', 'done', 'done']);
    // README: after repair 0 clicks and 70 dB separation; input socket 80 dB.
    const byName = Object.fromEntries(done.map((c) => [c.originalName, c.figures!]));
    expect(byName['first.wav']!.clickCount).toBe(0);
    expect(byName['first.wav']!.separationDb).toBeCloseTo(70, 0);
    expect(byName['input.wav']!.separationDb).toBeCloseTo(80, 0);
    expect(tempFiles()).toEqual([]);
  });

  it('refuses the whole batch when one file is not a WAV, naming it, and keeps nothing', async () => {
    const job = await makeBenchJob(db);
    const good = unique('demo-before-input-socket.wav');
    const fake = new TextEncoder().encode('These are my bench notes, not a recording.\n'.repeat(50));
    const res = await upload(tech, job.jobId, [tone('good.wav', good, job.testPointIds[0]!), tone('notes.wav', fake, job.testPointIds[0]!)]);
    expect(res.status).toBe(415);
    expect(res.body.error).toMatch(/"notes\.wav" is not a WAV file.*RIFF/);
    expect(await captureCount(job.jobId)).toBe(0);
    expect(existsSync(storagePath(filesDir, sha(good)))).toBe(false);
    expect(tempFiles()).toEqual([]);
  });

  it('refuses a truncated WAV with the reader’s reason', async () => {
    const job = await makeBenchJob(db);
    const cut = sample('demo-before-input-socket.wav').slice(0, 5000);
    const res = await upload(tech, job.jobId, [tone('cut.wav', cut, job.testPointIds[0]!)]);
    expect(res.status).toBe(415);
    expect(res.body.error).toMatch(/"cut\.wav".*data chunk declares \d+ bytes but the file holds only/);
    expect(await captureCount(job.jobId)).toBe(0);
  });

  it('refuses a file over the size limit with 413 and keeps nothing', async () => {
    const small = await startTestServer({ UPLOAD_MAX_MB: '0.2', WORKER: 'off' });
    try {
      const c = await signedIn(small.url, 'tech@quietpath.test');
      const job = await makeBenchJob(db);
      const big = unique('demo-before-selector-out.wav');
      const res = await upload(c, job.jobId, [tone('big.wav', big, job.testPointIds[1]!)]);
      expect(res.status).toBe(413);
      expect(res.body.error).toBe('"big.wav" is larger than the 200.0 kB limit for one capture');
      expect(await captureCount(job.jobId)).toBe(0);
      expect(existsSync(storagePath(filesDir, sha(big)))).toBe(false);
      expect(tempFiles()).toEqual([]);
    } finally {
      await small.close();
    }
  });

  it('refuses a test point of another job, naming the file', async () => {
    const job = await makeBenchJob(db);
    const elsewhere = await makeBenchJob(db);
    const res = await upload(tech, job.jobId, [tone('wrong-stage.wav', unique('demo-before-input-socket.wav'), elsewhere.testPointIds[0]!)]);
    expect(res.status).toBe(400);
    expect(res.body.error).toBe(`"wrong-stage.wav": test point ${elsewhere.testPointIds[0]} is not on this job`);
    expect(await captureCount(job.jobId)).toBe(0);
  });

  it('checks the details: one entry per file, a driven channel the file has, known values', async () => {
    const job = await makeBenchJob(db);
    const f = tone('mono.wav', sample('tone-997hz-clean.wav'), job.testPointIds[0]!);
    const two = await upload(tech, job.jobId, [f, f], [f.meta]);
    expect(two.status).toBe(400);
    expect(two.body.error).toMatch(/2 files but details for 1/);
    const channel = await upload(tech, job.jobId, [{ ...f, meta: { ...f.meta, drivenChannel: 1 } }]);
    expect(channel.status).toBe(400);
    expect(channel.body.error).toBe('"mono.wav": driven channel 2 does not exist in a 1-channel file');
    const phase = await upload(tech, job.jobId, [f], [{ ...f.meta, phase: 'during' }]);
    expect(phase.status).toBe(400);
    expect(phase.body.error).toMatch(/^"mono\.wav": phase:/);
    const none = await tech.call('POST', `/api/jobs/${job.jobId}/captures`, new FormData());
    expect(none.status).toBe(400);
    expect(await captureCount(job.jobId)).toBe(0);
  });
});

describe('who may upload and read', () => {
  it.each([
    ['desk@quietpath.test', 403],
    ['customer@quietpath.test', 403],
  ])('%s cannot upload (%i)', async (email, status) => {
    const job = await makeBenchJob(db);
    const c = await signedIn(server.url, email);
    const res = await upload(c, job.jobId, [tone('x.wav', sample('tone-997hz-clean.wav'), job.testPointIds[0]!)]);
    expect(res.status).toBe(status);
    expect(await captureCount(job.jobId)).toBe(0);
  });

  it('anonymous gets 401', async () => {
    const job = await makeBenchJob(db);
    const anon = new ApiClient(server.url);
    expect((await upload(anon, job.jobId, [tone('x.wav', sample('tone-997hz-clean.wav'), job.testPointIds[0]!)])).status).toBe(401);
  });

  it("another shop's technician gets 404 for our job, and we get 404 for theirs", async () => {
    const job = await makeBenchJob(db);
    const theirs = new ApiClient(server.url);
    expect((await theirs.login(other.emails.technician, TEST_PASSWORD)).status).toBe(200);
    const res = await upload(theirs, job.jobId, [tone('x.wav', sample('tone-997hz-clean.wav'), job.testPointIds[0]!)]);
    expect(res.status).toBe(404);
    expect(await captureCount(job.jobId)).toBe(0);
    expect((await theirs.get(`/api/jobs/${job.jobId}/captures`)).status).toBe(404);
    expect((await tech.get(`/api/jobs/${other.jobId}/captures`)).status).toBe(404);
  });

  it('the front desk can read the figures', async () => {
    const desk = await signedIn(server.url, 'desk@quietpath.test');
    const jobs = await desk.get<{ id: number }[]>('/api/jobs');
    const res = await desk.get<CaptureSummary[]>(`/api/jobs/${jobs.body.at(-1)!.id}/captures`);
    expect(res.status).toBe(200);
  });
});
