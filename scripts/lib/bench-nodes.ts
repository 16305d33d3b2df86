/**
 * The several-machines part of `npm run bench:api`: an API node and stand-alone analysis workers,
 * each in its own process, sharing one database and either a local folder or an S3-compatible
 * server (s3rver, in its own process).
 *  - upload → result: one 60 s 96 kHz/24-bit stereo capture, from the start of its upload until
 *    its figures are stored, on each driver (median of three);
 *  - analysis throughput on S3 storage with 1 and with 2 workers: captures analysed per minute;
 *  - with `big`: a 700 MB capture through S3 storage, and the peak memory of the API node and
 *    the worker that measured it (neither may hold the capture in memory).
 */
import { spawn, type ChildProcess, execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, openAsBlob, readFileSync, rmSync, statSync } from 'node:fs';
import { join } from 'node:path';
import pg from 'pg';
import { startLocalS3 } from './local-s3';
import { createDb } from '../../server/db/client';
import { runMigrations } from '../../server/db/migrate';
import { seedDemo } from '../../server/db/seed';

interface Auth {
  cookie: string;
  csrf: string;
}

const THROUGHPUT_CAPTURES = 16;
/** Alternating rounds: on a shared machine one round can land in a busy spell, so each is shown. */
const WORKER_ROUNDS = [1, 2, 1, 2];

function spawnNode(root: string, script: string, env: Record<string, string>, ready: RegExp): Promise<{ proc: ChildProcess; line: string }> {
  const proc = spawn(process.execPath, ['--import', 'tsx', join(root, script)], {
    cwd: root,
    env: { ...process.env, AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED: 'true', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  return new Promise((res, rej) => {
    let out = '';
    let err = '';
    proc.stdout!.on('data', (d: Buffer) => {
      out += d.toString();
      const line = out.split('\n').find((l) => ready.test(l));
      if (line) res({ proc, line });
    });
    proc.stderr!.on('data', (d: Buffer) => (err = (err + d.toString()).slice(-4000)));
    proc.once('exit', (code) => rej(new Error(`${script} exited with ${code}: ${err.trim()}`)));
  });
}

async function stopProc(proc: ChildProcess): Promise<void> {
  if (proc.exitCode !== null || proc.signalCode !== null) return;
  const gone = new Promise((r) => proc.once('exit', r));
  proc.kill('SIGTERM');
  await gone;
}

/** Peak resident memory of a process so far, in MB (Linux /proc, proc(5): VmHWM). */
function peakRssMb(proc: ChildProcess): number | null {
  try {
    const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync(`/proc/${proc.pid}/status`, 'utf8'));
    return m ? Math.round(Number(m[1]) / 1024) : null;
  } catch {
    return null;
  }
}

async function freshDatabase(clusterUrl: string, name: string): Promise<string> {
  const admin = new pg.Client({ connectionString: clusterUrl });
  await admin.connect();
  try {
    await admin.query(`drop database if exists ${name} with (force)`);
    await admin.query(`create database ${name}`);
  } finally {
    await admin.end();
  }
  const url = new URL(clusterUrl);
  url.pathname = `/${name}`;
  const { db, pool } = createDb(url.toString());
  await runMigrations(db);
  await seedDemo(db);
  await pool.end();
  return url.toString();
}

async function signIn(base: string): Promise<Auth> {
  const first = await fetch(`${base}/api/auth/csrf`);
  const jar = new Map<string, string>();
  const keep = (res: Response) => {
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';');
      const at = pair!.indexOf('=');
      jar.set(pair!.slice(0, at), pair!.slice(at + 1));
    }
  };
  keep(first);
  const { csrfToken } = (await first.json()) as { csrfToken: string };
  const cookie = () => [...jar].map(([k, v]) => `${k}=${v}`).join('; ');
  const res = await fetch(`${base}/api/auth/login`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken, cookie: cookie() },
    body: JSON.stringify({ email: 'tech@quietpath.test', password: 'bench-demo-2026' }),
  });
  if (!res.ok) throw new Error(`sign-in failed: ${res.status}`);
  keep(res);
  return { cookie: cookie(), csrf: ((await res.json()) as { csrfToken: string }).csrfToken };
}

async function upload(base: string, auth: Auth, file: string, name: string): Promise<number> {
  const form = new FormData();
  form.append('metadata', JSON.stringify([{ phase: 'before', stimulus: 'tone' }]));
  form.append('files', await openAsBlob(file), name);
  const res = await fetch(`${base}/api/jobs/1/captures`, { method: 'POST', headers: { cookie: auth.cookie, 'x-csrf-token': auth.csrf }, body: form });
  if (!res.ok) throw new Error(`upload failed: ${res.status} ${await res.text()}`);
  return ((await res.json()) as { captures: { id: number }[] }).captures[0]!.id;
}

async function allDone(base: string, auth: Auth, ids: number[], pollMs: number): Promise<void> {
  const until = Date.now() + 15 * 60_000;
  for (;;) {
    const res = await fetch(`${base}/api/jobs/1/captures`, { headers: { cookie: auth.cookie } });
    const mine = ((await res.json()) as { id: number; state: string; error: string | null }[]).filter((c) => ids.includes(c.id));
    const failed = mine.find((c) => c.state === 'failed');
    if (failed) throw new Error(`capture ${failed.id} failed: ${failed.error}`);
    if (mine.length === ids.length && mine.every((c) => c.state === 'done')) return;
    if (Date.now() > until) throw new Error('analyses did not finish within 15 minutes');
    await new Promise((r) => setTimeout(r, pollMs));
  }
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;

export interface NodesBenchOptions {
  root: string;
  work: string;
  clusterUrl: string;
  big?: boolean;
}

/** 96 kHz, 24-bit stereo is 576 000 bytes/s: 1216 s makes a 700 MB capture. */
function bigWav(work: string): string {
  const file = join(work, 'capture-700mb-96k-24bit.wav');
  if (!existsSync(file)) execFileSync('sox', ['-n', '-r', '96000', '-b', '24', '-c', '2', file, 'synth', '1216', 'sine', '997', 'vol', '0.3']);
  return file;
}

export async function benchNodes({ root, work, clusterUrl, big = false }: NodesBenchOptions) {
  // Three different tones: every timed upload stores new content rather than finding it stored.
  const files = [991, 997, 1009].map((hz) => {
    const file = join(work, `capture-60s-96k-24bit-${hz}hz.wav`);
    if (!existsSync(file)) execFileSync('sox', ['-n', '-r', '96000', '-b', '24', '-c', '2', file, 'synth', '60', 'sine', String(hz), 'vol', '0.3']);
    return file;
  });
  const file = files[0]!;
  const dir = join(work, 'nodes');
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(dir, { recursive: true });
  const s3 = await startLocalS3({ dir: join(dir, 's3') });
  const procs: ChildProcess[] = [];
  try {
    const uploadToResult: Record<string, string | number | null>[] = [];
    let s3Node: { base: string; env: Record<string, string>; auth: Auth } | null = null;
    let s3Api: ChildProcess | null = null;
    for (const driver of ['local', 's3'] as const) {
      const databaseUrl = await freshDatabase(clusterUrl, `quietpath_bench_${driver}`);
      const storage: Record<string, string> = driver === 's3' ? { ...s3.env, FILES_DIR: join(dir, 'api-scratch') } : { STORAGE: 'local', FILES_DIR: join(dir, 'files') };
      const env = { DATABASE_URL: databaseUrl, SESSION_SECRET: 'bench-secret-bench-secret-bench-secret', ...storage };
      const api = await spawnNode(root, 'tests/support/child-server.ts', { ...env, HOST: '127.0.0.1', PORT: '0', WORKER: 'off', UPLOAD_MAX_MB: '800' }, /^\{/);
      procs.push(api.proc);
      const base = (JSON.parse(api.line) as { url: string }).url;
      const auth = await signIn(base);
      const worker = (await spawnNode(root, 'server/worker-main.ts', env, /Analysis worker running/)).proc;
      procs.push(worker);
      const times: number[] = [];
      const uploads: number[] = [];
      for (let i = 0; i < 3; i++) {
        const started = performance.now();
        const id = await upload(base, auth, files[i]!, `timed-${i}.wav`);
        uploads.push((performance.now() - started) / 1000);
        await allDone(base, auth, [id], 50);
        times.push((performance.now() - started) / 1000);
      }
      uploadToResult.push({
        driver,
        'upload s (median)': Number(median(uploads).toFixed(2)),
        'upload → result s (median)': Number(median(times).toFixed(2)),
        'rounds s': times.map((t) => t.toFixed(2)).join(' / '),
        'API node peak RSS MB': peakRssMb(api.proc),
        'worker peak RSS MB': peakRssMb(worker),
      });
      await stopProc(worker);
      if (driver === 's3') {
        s3Node = { base, env, auth };
        s3Api = api.proc;
      }
      else await stopProc(api.proc);
    }

    // Throughput: the same captures measured again with 1, then 2 workers on S3 storage.
    const { base, env, auth } = s3Node!;
    const ids: number[] = [];
    for (let i = 0; i < THROUGHPUT_CAPTURES; i++) ids.push(await upload(base, auth, file, `throughput-${i}.wav`));
    const throughput: Record<string, string | number>[] = [];
    for (const [round, workers] of WORKER_ROUNDS.entries()) {
      const running = await Promise.all(
        Array.from({ length: workers }, async (_, i) => (await spawnNode(root, 'server/worker-main.ts', { ...env, FILES_DIR: join(dir, `worker-${i}`) }, /Analysis worker running/)).proc),
      );
      procs.push(...running);
      if (round === 0) await allDone(base, auth, ids, 200); // the first worker measures the uploads; not timed
      const started = performance.now();
      for (const id of ids) {
        const res = await fetch(`${base}/api/captures/${id}/analyse`, { method: 'POST', headers: { cookie: auth.cookie, 'x-csrf-token': auth.csrf } });
        if (!res.ok) throw new Error(`re-analysis of ${id} refused: ${res.status}`);
      }
      await allDone(base, auth, ids, 200);
      const seconds = (performance.now() - started) / 1000;
      throughput.push({
        round: round + 1,
        storage: 's3',
        workers,
        captures: ids.length,
        seconds: Number(seconds.toFixed(1)),
        'captures analysed per minute': Number(((ids.length / seconds) * 60).toFixed(1)),
      });
      await Promise.all(running.map(stopProc));
    }

    let bigCapture: Record<string, string | number | null>[] = [];
    if (big) {
      const file = bigWav(work);
      const worker = (await spawnNode(root, 'server/worker-main.ts', { ...env, FILES_DIR: join(dir, 'worker-big') }, /Analysis worker running/)).proc;
      procs.push(worker);
      const started = performance.now();
      const id = await upload(base, auth, file, 'big.wav');
      const uploadedS = (performance.now() - started) / 1000;
      await allDone(base, auth, [id], 500);
      bigCapture = [
        {
          storage: 's3',
          'capture MB': Math.round(statSync(file).size / 1e6),
          'upload s': Number(uploadedS.toFixed(1)),
          'upload → result s': Number(((performance.now() - started) / 1000).toFixed(1)),
          'API node peak RSS MB': peakRssMb(s3Api!),
          'worker peak RSS MB': peakRssMb(worker),
        },
      ];
      await stopProc(worker);
    }
    return { uploadToResult, throughput, bigCapture };
  } finally {
    for (const p of procs) p.kill('SIGKILL');
    await s3.stop();
    rmSync(dir, { recursive: true, force: true });
  }
}
