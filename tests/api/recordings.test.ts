/**
 * Live-bench recordings streamed in chunks and finished into captures, and GET /api/signals.
 * Expected figures come from the test signal's construction (analysis/generate.ts): a 997 Hz
 * sine at −20 dBFS (AES17: peak amplitude 0.1) with clicks added at known frames.
 */
import { afterAll, beforeAll, describe, expect, it, inject } from 'vitest';
import { createHash } from 'node:crypto';
import { existsSync } from 'node:fs';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { makeBenchJob, waitForAnalysis } from '../support/captures';
import { addClick, analyzeWavBytes, encodeSamples, encodeWav, generateSine } from '../../analysis/index';
import { recordingDir } from '../../server/services/recordings';
import { storagePath } from '../../server/services/capture-storage';
import { sql } from 'drizzle-orm';
import { renderSignalWav, signalRequestSchema } from '../../shared/signals';
import type { ChunkReceipt, RecordingFinished, RecordingOpenInput, RecordingSummary } from '../../shared/recordings';
import type { CaptureSummary } from '../../shared/captures';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let tech: ApiClient;
let owner: ApiClient;
let other: Awaited<ReturnType<typeof makeShop>>;
let otherTech: ApiClient;
const { db, close } = testDb();
const filesDir = inject('filesDir');

beforeAll(async () => {
  server = await startTestServer();
  tech = await signedIn(server.url, 'tech@quietpath.test');
  owner = await signedIn(server.url, 'owner@quietpath.test');
  other = await makeShop(db, 'Recordings');
  otherTech = new ApiClient(server.url);
  expect((await otherTech.login(other.emails.technician, TEST_PASSWORD)).status).toBe(200);
});
afterAll(async () => {
  await server?.close();
  await close();
});

/**
 * The shared ApiClient sends JSON or forms, and chunks are raw bytes: this sends them itself with
 * the client's session cookie (read from its private jar) and CSRF token.
 */
async function putBytes(client: ApiClient, path: string, bytes: Uint8Array, contentType = 'application/octet-stream') {
  const jar = (client as unknown as { cookieHeader(): string }).cookieHeader();
  const res = await fetch(client.baseUrl + path, {
    method: 'PUT',
    headers: { cookie: jar, 'x-csrf-token': client.csrfToken ?? '', 'content-type': contentType },
    body: bytes as Uint8Array<ArrayBuffer>,
  });
  const text = await res.text();
  return { status: res.status, body: (text ? JSON.parse(text) : null) as ChunkReceipt & { error?: string; code?: string; details?: { expected: number } } };
}

const FS = 48_000;
/** 2 s stereo: left 997 Hz at −20 dBFS with 3 bursts of 0.05 at known frames, right silent. */
function soakSamples(): Float64Array[] {
  const ch = generateSine({ sampleRate: FS, seconds: 2, channels: 2, frequencyHz: 997, levelDbfs: -20, drivenChannels: [0] });
  for (const frame of [14_400, 52_800, 81_600]) addClick(ch[0]!, FS, { frame, amplitude: 0.05, shape: 'burst' });
  return ch;
}
/** Frames [from, from+count) as interleaved 24-bit PCM, as the browser sends them. */
const pcm24 = (ch: Float64Array[], from: number, count: number) => encodeSamples(ch, 24, from, count);
const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

async function open(client: ApiClient, body: RecordingOpenInput) {
  return client.post<RecordingSummary & { error?: string }>('/api/recordings', body);
}

describe('streaming a recording and saving it as a capture', () => {
  it('chunks in order make the same WAV file as encoding the whole recording, measured as constructed', async () => {
    const job = await makeBenchJob(db);
    const opened = await open(tech, {
      jobId: job.jobId,
      testPointId: job.testPointIds[1]!,
      phase: 'after',
      stimulus: 'tone',
      drivenChannel: 0,
      sampleRate: FS,
      channels: 2,
      format: 'pcm24',
      plannedSeconds: 2,
    });
    expect(opened.status).toBe(201);
    expect(opened.body).toMatchObject({ jobId: job.jobId, testPointName: 'Input selector output', state: 'open', chunkCount: 0, durationS: 0 });
    const id = opened.body.id;

    const ch = soakSamples();
    const half = FS / 2;
    for (let seq = 0; seq < 4; seq++) {
      const res = await putBytes(tech, `/api/recordings/${id}/chunks/${seq}`, pcm24(ch, seq * half, half));
      expect(res.status).toBe(200);
      expect(res.body).toMatchObject({ seq, repeated: false, chunkCount: seq + 1, bytesReceived: (seq + 1) * half * 6 });
    }
    // A retry of a stored chunk (its answer was lost) changes nothing.
    const again = await putBytes(tech, `/api/recordings/${id}/chunks/2`, pcm24(ch, 2 * half, half));
    expect(again.status).toBe(200);
    expect(again.body).toMatchObject({ seq: 2, repeated: true, chunkCount: 4, durationS: 2 });

    const listed = await tech.get<RecordingSummary[]>(`/api/recordings?jobId=${job.jobId}`);
    expect(listed.status).toBe(200);
    expect(listed.body.map((r) => r.id)).toEqual([id]);

    const finished = await tech.post<RecordingFinished>(`/api/recordings/${id}/finish`);
    expect(finished.status).toBe(201);
    const capture = finished.body.capture;
    expect(finished.body.recording).toMatchObject({ state: 'finished', captureId: capture.id });
    // Content-addressed: the stored file is byte for byte what the engine's own writer makes.
    expect(capture.sha256).toBe(sha(encodeWav(ch, FS, 24)));
    expect(capture).toMatchObject({ jobId: job.jobId, testPointId: job.testPointIds[1], phase: 'after', stimulus: 'tone', sampleRate: FS, channels: 2, bitsPerSample: 24, durationS: 2 });
    expect(existsSync(recordingDir(filesDir, id))).toBe(false);

    const [done] = await waitForAnalysis(tech, job.jobId, [capture.id]);
    expect(done!.state).toBe('done');
    expect(done!.figures!.clickCount).toBe(3);
    expect(done!.figures!.levelDbfs!).toBeCloseTo(-20, 1);

    // Finishing again (a retry after a lost answer) gives the same capture, not a second one.
    const twice = await tech.post<RecordingFinished>(`/api/recordings/${id}/finish`);
    expect(twice.status).toBe(200);
    expect(twice.body.capture.id).toBe(capture.id);
    const captures = await tech.get<CaptureSummary[]>(`/api/jobs/${job.jobId}/captures`);
    expect(captures.body.filter((c) => c.originalName === `live-recording-${id}.wav`)).toHaveLength(1);

    expect((await putBytes(tech, `/api/recordings/${id}/chunks/4`, pcm24(ch, 0, 10))).status).toBe(409);
    expect((await tech.del(`/api/recordings/${id}`)).status).toBe(409);
    expect((await tech.get<RecordingSummary[]>(`/api/recordings?jobId=${job.jobId}`)).body).toEqual([]);
  });

  it('a finish that fails part-way leaves no capture and no file; finishing again makes exactly one', async () => {
    const job = await makeBenchJob(db);
    const opened = await open(tech, {
      jobId: job.jobId,
      testPointId: job.testPointIds[0]!,
      phase: 'before',
      stimulus: 'tone',
      drivenChannel: 0,
      sampleRate: FS,
      channels: 2,
      format: 'pcm24',
      plannedSeconds: 1,
    });
    const id = opened.body.id;
    // A sound of its own, so its stored file is not shared with any other capture.
    const ch = generateSine({ sampleRate: FS, seconds: 1, channels: 2, frequencyHz: 613 + (id % 97), levelDbfs: -17, drivenChannels: [0] });
    expect((await putBytes(tech, `/api/recordings/${id}/chunks/0`, pcm24(ch, 0, FS))).status).toBe(200);
    const fileSha = sha(encodeWav(ch, FS, 24));
    // The fault: PostgreSQL refuses the recording's last write, after the capture row, its queued
    // analysis and the stored file have been made in the same transaction.
    await db.execute(sql.raw(`
      create function refuse_finish_${id}() returns trigger language plpgsql as $$
      begin if new.id = ${id} and new.state = 'finished' then raise exception 'injected fault'; end if; return new; end $$;
      create trigger refuse_finish_${id} before update on recordings for each row execute function refuse_finish_${id}();`));
    try {
      const failed = await tech.post(`/api/recordings/${id}/finish`);
      expect(failed.status).toBe(500);
      expect((await tech.get<RecordingSummary>(`/api/recordings/${id}`)).body.state).toBe('open');
      expect((await tech.get<CaptureSummary[]>(`/api/jobs/${job.jobId}/captures`)).body).toEqual([]);
      expect(existsSync(storagePath(filesDir, fileSha))).toBe(false);
    } finally {
      await db.execute(sql.raw(`drop trigger refuse_finish_${id} on recordings; drop function refuse_finish_${id}();`));
    }
    const finished = await tech.post<RecordingFinished>(`/api/recordings/${id}/finish`);
    expect(finished.status).toBe(201);
    expect(finished.body.capture.sha256).toBe(fileSha);
    expect((await tech.get<CaptureSummary[]>(`/api/jobs/${job.jobId}/captures`)).body.map((c) => c.id)).toEqual([finished.body.capture.id]);
    expect(existsSync(storagePath(filesDir, fileSha))).toBe(true);
  });

  it('refuses chunks out of order, with other bytes, of broken frames or of the wrong type', async () => {
    const job = await makeBenchJob(db);
    const { body: rec } = await open(owner, { jobId: job.jobId, phase: 'before', stimulus: 'silence', sampleRate: 44_100, channels: 2, format: 'pcm16' });
    const chunk = new Uint8Array(4 * 441).fill(1);
    expect((await putBytes(owner, `/api/recordings/${rec.id}/chunks/0`, chunk)).status).toBe(200);

    const ahead = await putBytes(owner, `/api/recordings/${rec.id}/chunks/2`, chunk);
    expect(ahead.status).toBe(409);
    expect(ahead.body).toMatchObject({ code: 'chunk_order', details: { expected: 1 } });

    const changed = await putBytes(owner, `/api/recordings/${rec.id}/chunks/0`, chunk.map(() => 2));
    expect(changed.status).toBe(409);
    expect(changed.body.code).toBe('chunk_mismatch');

    const broken = await putBytes(owner, `/api/recordings/${rec.id}/chunks/1`, new Uint8Array(6));
    expect(broken.status).toBe(400);
    expect(broken.body.error).toMatch(/multiple of 4 bytes/);

    expect((await putBytes(owner, `/api/recordings/${rec.id}/chunks/1`, new Uint8Array(0))).status).toBe(400);
    expect((await putBytes(owner, `/api/recordings/${rec.id}/chunks/1`, chunk, 'text/plain')).status).toBe(415);
    expect((await putBytes(owner, `/api/recordings/${rec.id}/chunks/-1`, chunk)).status).toBe(400);

    const huge = await putBytes(owner, `/api/recordings/${rec.id}/chunks/1`, new Uint8Array(8 * 1024 * 1024 + 4));
    expect(huge.status).toBe(413);

    const state = await owner.get<RecordingSummary>(`/api/recordings/${rec.id}`);
    expect(state.status).toBe(200);
    expect(state.body).toMatchObject({ chunkCount: 1, bytesReceived: chunk.length });
  });

  it('refuses float samples that are not numbers', async () => {
    const job = await makeBenchJob(db);
    const { body: rec } = await open(tech, { jobId: job.jobId, phase: 'before', stimulus: 'tone', sampleRate: 48_000, channels: 1, format: 'float32' });
    const samples = new Float32Array([0.1, 0.2, Number.NaN, 0.3]);
    const res = await putBytes(tech, `/api/recordings/${rec.id}/chunks/0`, new Uint8Array(samples.buffer));
    expect(res.status).toBe(400);
    expect(res.body.error).toMatch(/not a finite number/);
  });

  it('an unfinished recording can be discarded with its chunks; an empty one cannot be finished', async () => {
    const job = await makeBenchJob(db);
    const { body: rec } = await open(tech, { jobId: job.jobId, phase: 'before', stimulus: 'programme', sampleRate: 48_000, channels: 1, format: 'pcm24' });
    expect((await tech.post(`/api/recordings/${rec.id}/finish`)).status).toBe(400);
    expect((await putBytes(tech, `/api/recordings/${rec.id}/chunks/0`, new Uint8Array(3 * 480))).status).toBe(200);
    expect(existsSync(recordingDir(filesDir, rec.id))).toBe(true);
    expect((await tech.del(`/api/recordings/${rec.id}`)).status).toBe(204);
    expect((await tech.get(`/api/recordings/${rec.id}`)).status).toBe(404);
    expect(existsSync(recordingDir(filesDir, rec.id))).toBe(false);
  });

  it('validates what a recording is opened with', async () => {
    const job = await makeBenchJob(db);
    const other = await makeBenchJob(db);
    const base = { jobId: job.jobId, phase: 'before', stimulus: 'tone', sampleRate: 48_000, channels: 2 } as const;
    const noChannels = await open(tech, { ...base, channels: 0 });
    expect(noChannels.status).toBe(400);
    expect(noChannels.body.error).toMatch(/^channels/);
    expect((await open(tech, { ...base, sampleRate: 1000 })).status).toBe(400);
    expect((await open(tech, { ...base, drivenChannel: 2 })).status).toBe(400);
    const foreignPoint = await open(tech, { ...base, testPointId: other.testPointIds[0]! });
    expect(foreignPoint.status).toBe(400);
    expect(foreignPoint.body.error).toMatch(/not on this job/);
    expect((await open(tech, { ...base, jobId: 2_000_000_000 })).status).toBe(404);
  });

  it('a recording cannot grow past the capture size limit', async () => {
    const small = await startTestServer({ UPLOAD_MAX_MB: '0.01' }); // 10 000 bytes
    try {
      const t = await signedIn(small.url, 'tech@quietpath.test');
      const job = await makeBenchJob(db);
      const { body: rec } = await open(t, { jobId: job.jobId, phase: 'before', stimulus: 'tone', sampleRate: 48_000, channels: 2, format: 'pcm16' });
      const put = (seq: number, bytes: number) => putBytes(t, `/api/recordings/${rec.id}/chunks/${seq}`, new Uint8Array(bytes));
      expect((await put(0, 8000)).status).toBe(200);
      const over = await put(1, 4000);
      expect(over.status).toBe(413);
      expect(over.body.error).toMatch(/MB limit/);
    } finally {
      await small.close();
    }
  });
});

describe('who may record', () => {
  it('front desk and customers are refused; another shop sees 404 everywhere', async () => {
    const job = await makeBenchJob(db);
    const desk = await signedIn(server.url, 'desk@quietpath.test');
    const customer = await signedIn(server.url, 'customer@quietpath.test');
    const body = { jobId: job.jobId, phase: 'before', stimulus: 'tone', sampleRate: 48_000, channels: 2 } as const;
    expect((await open(desk, body)).status).toBe(403);
    expect((await open(customer, body)).status).toBe(403);
    expect((await new ApiClient(server.url).get('/api/recordings')).status).toBe(401);

    const { body: rec } = await open(tech, body);
    expect((await putBytes(tech, `/api/recordings/${rec.id}/chunks/0`, new Uint8Array(6 * 48))).status).toBe(200);
    expect((await open(otherTech, body)).status).toBe(404);
    expect((await otherTech.get(`/api/recordings/${rec.id}`)).status).toBe(404);
    expect((await putBytes(otherTech, `/api/recordings/${rec.id}/chunks/1`, new Uint8Array(6 * 48))).status).toBe(404);
    expect((await otherTech.post(`/api/recordings/${rec.id}/finish`)).status).toBe(404);
    expect((await otherTech.del(`/api/recordings/${rec.id}`)).status).toBe(404);
    expect((await otherTech.get<RecordingSummary[]>('/api/recordings')).body.some((r) => r.id === rec.id)).toBe(false);
    expect((await tech.get<RecordingSummary>(`/api/recordings/${rec.id}`)).body.chunkCount).toBe(1);
  });
});

describe('GET /api/signals', () => {
  it('serves the generator\'s file: a −20 dBFS 997 Hz left-only sine reads −20.00 dBFS (AES17) in the engine', async () => {
    const res = await tech.raw('GET', '/api/signals?kind=sine&frequencyHz=997&levelDbfs=-20&channels=left&sampleRate=48000&format=24&seconds=2');
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toMatch(/^audio\/wav/);
    expect(res.headers.get('content-disposition')).toContain('sine-997Hz-minus20dBFS-left-48k-24bit-2s.wav');
    const bytes = new Uint8Array(await res.arrayBuffer());
    const request = signalRequestSchema.parse({ channels: 'left', seconds: 2 });
    expect(sha(bytes)).toBe(sha(renderSignalWav(request)));
    const result = analyzeWavBytes(bytes);
    expect(result.file).toMatchObject({ sampleRate: 48_000, channels: 2, bitsPerSample: 24, frames: 96_000 });
    expect(Math.abs(result.channels[0]!.rmsDbfs! - -20)).toBeLessThan(0.01);
    expect(Math.abs(result.channels[0]!.fundamentalHz! - 997)).toBeLessThan(0.05);
    // Right is silent apart from the ±1 LSB TPDF dither (24-bit LSB ≈ −138 dBFS).
    expect(result.channels[1]!.rmsDbfs ?? -Infinity).toBeLessThan(-130);
  });

  it('refuses impossible requests and other roles', async () => {
    const above = await tech.get<{ error: string }>('/api/signals?frequencyHz=30000&sampleRate=48000');
    expect(above.status).toBe(400);
    expect(above.body.error).toMatch(/half the sample rate/);
    expect((await tech.get('/api/signals?seconds=1000')).status).toBe(400);
    expect((await tech.get('/api/signals?sampleRate=12345')).status).toBe(400);
    expect((await tech.get('/api/signals?volume=11')).status).toBe(400);
    expect((await (await signedIn(server.url, 'desk@quietpath.test')).get('/api/signals')).status).toBe(403);
    expect((await new ApiClient(server.url).get('/api/signals')).status).toBe(401);
  });
});
