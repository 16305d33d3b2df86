/**
 * Several machines: one PostgreSQL, one S3-compatible server (s3rver), two API processes on
 * different ports and two stand-alone analysis workers, each in its own process with its own
 * scratch folder, sharing nothing but the database and the bucket.
 *
 * Expected figures come from the signals' construction, with levels in dBFS as AES17 defines
 * them (a full-scale sine reads 0 dBFS): a sine of peak 3000/32768 reads 20·log10(3000/32768),
 * and the −20 dBFS sine of analysis/generate.ts has peak 0.1; the WAV file a recording makes is the engine's own encoder
 * output for the same samples, byte for byte.
 */
import { afterAll, beforeAll, describe, expect, it, inject } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { createHash, randomBytes } from 'node:crypto';
import { mkdtempSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { eq } from 'drizzle-orm';
import { startLocalS3, type LocalS3 } from '../../scripts/lib/local-s3';
import { encodeSamples, encodeWav, generateSine } from '../../analysis/index';
import { createDb, type Db } from '../../server/db/client';
import { runMigrations } from '../../server/db/migrate';
import { captures } from '../../server/db/schema/index';
import { seedDemo } from '../../server/db/seed';
import { benchDemo } from '../../server/db/seed-bench';
import type { CaptureSummary } from '../../shared/captures';
import type { ChunkReceipt, RecordingFinished, RecordingSummary } from '../../shared/recordings';
import { ApiClient, signedIn } from '../support/client';
import { makeBenchJob, waitForAnalysis } from '../support/captures';
import { plainWav } from '../support/hostile-wavs';

const root = resolve(fileURLToPath(new URL('../..', import.meta.url)));
const children: ChildProcess[] = [];
const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

let s3: LocalS3;
let databaseUrl: string;
let db: Db;
let pool: pg.Pool;
let scratch: string;
let nodeA: string;
let nodeB: string;
let worker1: ChildProcess;
let worker2: ChildProcess;

/** What every node of the installation is given: the same database, bucket and secret. */
function sharedEnv(name: string): Record<string, string> {
  return {
    DATABASE_URL: databaseUrl,
    SESSION_SECRET: 'several-nodes-secret-of-sufficient-length',
    ...s3.env,
    // This node's own folder for uploads in progress.
    FILES_DIR: join(scratch, name),
    // A lost analysis is retried after 2 s instead of the default 10 minutes.
    ANALYSIS_EXPIRE_SECONDS: '2',
    QUEUE_MAINTENANCE_SECONDS: '1',
    ANALYSIS_WARM_UP_SECONDS: '1',
  };
}

function spawnNode(script: string, env: Record<string, string>, ready: RegExp): Promise<{ proc: ChildProcess; line: string }> {
  const proc = spawn(process.execPath, ['--import', 'tsx', join(root, script)], {
    cwd: root,
    env: { ...process.env, AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: 'true', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.push(proc);
  return new Promise((res, rej) => {
    let out = '';
    let err = '';
    proc.stdout!.on('data', (d: Buffer) => {
      out += d.toString();
      const line = out.split('\n').find((l) => ready.test(l));
      if (line) res({ proc, line });
    });
    proc.stderr!.on('data', (d: Buffer) => (err += d.toString()));
    proc.once('exit', (code) => rej(new Error(`${script} exited with ${code}: ${err.trim()}`)));
  });
}

async function startApiNode(name: string): Promise<string> {
  // Workers are separate processes here: the API nodes only receive and queue.
  const env = { ...sharedEnv(name), HOST: '127.0.0.1', PORT: '0', WORKER: 'off', SIGNED_IN_CACHE_MS: '60000' };
  const { line } = await spawnNode('tests/support/child-server.ts', env, /^\{/);
  return (JSON.parse(line) as { url: string }).url;
}

const startWorker = async (name: string) => (await spawnNode('server/worker-main.ts', sharedEnv(name), /Analysis worker running/)).proc;

beforeAll(async () => {
  // A database of its own: the workers here read only the bucket, so they must not meet the
  // captures other test files stored in a local folder.
  const base = new URL(inject('databaseUrl'));
  const name = `several_nodes_${randomBytes(4).toString('hex')}`;
  const admin = new pg.Client({ connectionString: base.toString() });
  await admin.connect();
  await admin.query(`create database ${name}`);
  await admin.end();
  base.pathname = `/${name}`;
  databaseUrl = base.toString();
  ({ db, pool } = createDb(databaseUrl));
  await runMigrations(db);
  await seedDemo(db, [benchDemo]);

  scratch = mkdtempSync(join(inject('scratchDir'), 'several-nodes-'));
  s3 = await startLocalS3({ dir: join(scratch, 's3') });
  [nodeA, nodeB] = await Promise.all([startApiNode('node-a'), startApiNode('node-b')]);
  [worker1, worker2] = await Promise.all([startWorker('worker-1'), startWorker('worker-2')]);
});

afterAll(async () => {
  for (const c of children) c.kill('SIGKILL');
  await s3?.stop();
  await pool?.end();
});

/** Raw PCM chunk bodies, with the client's session cookie and CSRF token. */
async function putChunk(client: ApiClient, path: string, bytes: Uint8Array) {
  const jar = (client as unknown as { cookieHeader(): string }).cookieHeader();
  const res = await fetch(client.baseUrl + path, {
    method: 'PUT',
    headers: { cookie: jar, 'x-csrf-token': client.csrfToken ?? '', 'content-type': 'application/octet-stream' },
    body: bytes as Uint8Array<ArrayBuffer>,
  });
  return { status: res.status, body: (await res.json()) as ChunkReceipt };
}

function wavForm(bytes: Uint8Array, name: string): FormData {
  const form = new FormData();
  form.append('metadata', JSON.stringify([{ phase: 'before', stimulus: 'tone' }]));
  form.append('files', new Blob([bytes as Uint8Array<ArrayBuffer>], { type: 'audio/wav' }), name);
  return form;
}

/** Processor time a child process has used so far, in clock ticks (Linux /proc, proc(5)). */
function cpuTicks(proc: ChildProcess): number {
  const fields = readFileSync(`/proc/${proc.pid}/stat`, 'utf8').split(') ')[1]!.split(' ');
  return Number(fields[11]) + Number(fields[12]); // utime and stime
}

/** plainWav: both channels 3000·sin(2π·997·n/48000) in 16-bit PCM; AES17 level of that sine. */
const PLAIN_RMS_DBFS = 20 * Math.log10(3000 / 32768);

describe('two API nodes and two workers sharing one database and one bucket', () => {
  it('a session opened on node A works on node B, and a sign-out on A ends it on B at once', async () => {
    const onA = await signedIn(nodeA, 'tech@quietpath.test');
    const onB = onA.at(nodeB);
    const me = await onB.get<{ user: { email: string } }>('/api/auth/me');
    expect(me.status).toBe(200);
    expect(me.body.user.email).toBe('tech@quietpath.test');

    // Node B now remembers the session for up to a minute (SIGNED_IN_CACHE_MS); the sign-out on A
    // must reach it through the database well before that. The old cookie is replayed on B, as a
    // second tab (or a copied cookie) would after the sign-out cleared it in this one.
    const cookie = (onA as unknown as { cookieHeader(): string }).cookieHeader();
    const meOnB = () => fetch(`${nodeB}/api/auth/me`, { headers: { cookie } }).then((r) => r.status);
    expect(await meOnB()).toBe(200);
    expect((await onA.post('/api/auth/logout')).status).toBeLessThan(300);
    const until = Date.now() + 5000;
    let status = 200;
    while (status === 200 && Date.now() < until) {
      status = await meOnB();
      if (status === 200) await new Promise((r) => setTimeout(r, 50));
    }
    expect(status).toBe(401);
  });

  it('a capture uploaded on node A is measured by a worker and read back whole on node B', async () => {
    const tech = await signedIn(nodeA, 'tech@quietpath.test');
    const job = await makeBenchJob(db);
    const bytes = plainWav(48_000 * 2);
    // Unique content, so the upload stores a new object rather than finding an earlier one.
    bytes[bytes.length - 2] = randomBytes(1)[0]!;
    const up = await tech.call<{ captures: CaptureSummary[] }>('POST', `/api/jobs/${job.jobId}/captures`, wavForm(bytes, 'node-a.wav'));
    expect(up.status).toBe(201);
    const id = up.body.captures[0]!.id;
    expect(up.body.captures[0]!.sha256).toBe(sha(bytes));

    const onB = tech.at(nodeB);
    const [done] = await waitForAnalysis(onB, job.jobId, [id]);
    expect(done!.state).toBe('done');
    expect(done!.figures!.levelDbfs).toBeCloseTo(PLAIN_RMS_DBFS, 1);
    const file = await onB.raw('GET', `/api/captures/${id}/file`);
    expect(file.status).toBe(200);
    expect(sha(new Uint8Array(await file.arrayBuffer()))).toBe(sha(bytes));
  });

  it('a worker killed in the middle of an analysis: the other worker finishes the capture', async () => {
    // Four minutes of 48 kHz stereo: long enough to catch its analysis running. Made before
    // signing in, so the sign-in's keep-alive connection is not left idle while it is built.
    const bytes = plainWav(48_000 * 240);
    bytes[bytes.length - 2] = randomBytes(1)[0]!;
    const tech = await signedIn(nodeA, 'tech@quietpath.test');
    const job = await makeBenchJob(db);
    const up = await tech.call<{ captures: CaptureSummary[] }>('POST', `/api/jobs/${job.jobId}/captures`, wavForm(bytes, 'long.wav'));
    expect(up.status).toBe(201);
    const id = up.body.captures[0]!.id;
    const state = async () => (await db.select({ state: captures.state }).from(captures).where(eq(captures.id, id)))[0]!.state;
    const end = Date.now() + 30_000;
    while ((await state()) !== 'running') {
      if (Date.now() > end) throw new Error('the analysis never started');
    }
    // The worker measuring it is the one using the processor; the other waits idle.
    const before = [worker1, worker2].map(cpuTicks);
    await new Promise((r) => setTimeout(r, 300));
    const used = [worker1, worker2].map((w, i) => cpuTicks(w) - before[i]!);
    const busy = used[0]! >= used[1]! ? 0 : 1;
    const killed = busy === 0 ? worker1 : worker2;
    killed.kill('SIGKILL');
    await new Promise((r) => killed.once('exit', r));
    expect(await state()).toBe('running');

    const [done] = await waitForAnalysis(tech.at(nodeB), job.jobId, [id], 60_000);
    expect(done!.state).toBe('done');
    expect(done!.figures!.levelDbfs).toBeCloseTo(PLAIN_RMS_DBFS, 1);
    if (busy === 0) worker1 = await startWorker('worker-1');
    else worker2 = await startWorker('worker-2');
  });

  it('a live recording whose chunks arrive at both nodes finishes into one correct capture', async () => {
    const tech = await signedIn(nodeA, 'tech@quietpath.test');
    const nodes = [tech, tech.at(nodeB)];
    const job = await makeBenchJob(db);
    const FS = 48_000;
    const opened = await tech.post<RecordingSummary>('/api/recordings', {
      jobId: job.jobId,
      testPointId: job.testPointIds[0]!,
      phase: 'before',
      stimulus: 'tone',
      drivenChannel: 0,
      sampleRate: FS,
      channels: 2,
      format: 'pcm24',
      plannedSeconds: 2,
    });
    expect(opened.status).toBe(201);
    const id = opened.body.id;
    const ch = generateSine({ sampleRate: FS, seconds: 2, channels: 2, frequencyHz: 997, levelDbfs: -20, drivenChannels: [0] });
    const quarter = FS / 4;
    for (let seq = 0; seq < 8; seq++) {
      const body = encodeSamples(ch, 24, seq * quarter, quarter);
      if (seq === 3) {
        // The same chunk sent to both nodes at once (a retry that went to the other node): the
        // recording's row lock in PostgreSQL takes one, and the other is answered as a repeat.
        const both = await Promise.all(nodes.map((n) => putChunk(n, `/api/recordings/${id}/chunks/${seq}`, body)));
        expect(both.map((r) => r.status)).toEqual([200, 200]);
        expect(both.map((r) => r.body.repeated).sort()).toEqual([false, true]);
      } else {
        const res = await putChunk(nodes[seq % 2]!, `/api/recordings/${id}/chunks/${seq}`, body);
        expect(res.status).toBe(200);
        expect(res.body).toMatchObject({ seq, repeated: false, chunkCount: seq + 1 });
      }
    }
    const finished = await nodes[1]!.post<RecordingFinished>(`/api/recordings/${id}/finish`);
    expect(finished.status).toBe(201);
    const wav = encodeWav(ch, FS, 24);
    expect(finished.body.capture.sha256).toBe(sha(wav));
    const [done] = await waitForAnalysis(tech, job.jobId, [finished.body.capture.id]);
    expect(done!.state).toBe('done');
    expect(done!.figures!.levelDbfs).toBeCloseTo(-20, 1);
    const file = await tech.raw('GET', `/api/captures/${finished.body.capture.id}/file`);
    expect(sha(new Uint8Array(await file.arrayBuffer()))).toBe(sha(wav));
    // Finishing again on the other node answers with the same capture.
    const again = await tech.post<RecordingFinished>(`/api/recordings/${id}/finish`);
    expect(again.status).toBe(200);
    expect(again.body.capture.id).toBe(finished.body.capture.id);
  });
});
