/**
 * Faults: a server killed in the middle of an upload, and PostgreSQL restarted under a running
 * server. Afterwards nothing is half-written and the server answers again.
 */
import { afterAll, describe, expect, inject, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, readdirSync, existsSync } from 'node:fs';
import { request } from 'node:http';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { startTestServer } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { plainWav } from '../support/hostile-wavs';
import { startCluster } from '../../scripts/lib/pg-cluster';
import { testDb } from '../support/server';
import { eq } from 'drizzle-orm';
import { analyses, captures } from '../../server/db/schema/index';

const root = resolve(fileURLToPath(new URL('../..', import.meta.url)));
const JOB = 1;
const children: ChildProcess[] = [];
afterAll(() => children.forEach((c) => c.kill('SIGKILL')));

/** A child server's settings: the test database, its own files folder, and what the test adds. */
function childEnv(filesDir: string, extra: Record<string, string>): Record<string, string> {
  return {
    DATABASE_URL: inject('databaseUrl'),
    HOST: '127.0.0.1',
    PORT: '0',
    SESSION_SECRET: 'fault-test-secret-of-sufficient-length',
    FILES_DIR: filesDir,
    ANALYSIS_WARM_UP_SECONDS: '1',
    ...extra,
  };
}

function startChild(env: Record<string, string>): Promise<{ url: string; proc: ChildProcess }> {
  const proc = spawn(process.execPath, ['--import', 'tsx', join(root, 'tests/support/child-server.ts')], {
    cwd: root,
    env: { ...process.env, ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.push(proc);
  return new Promise((res, rej) => {
    let out = '';
    proc.stdout!.on('data', (d: Buffer) => {
      out += d.toString();
      const line = out.split('\n').find((l) => l.startsWith('{'));
      if (line) res({ url: (JSON.parse(line) as { url: string }).url, proc });
    });
    proc.once('exit', (code) => rej(new Error(`child server exited with ${code}`)));
  });
}

const until = async (check: () => boolean, ms = 15_000) => {
  const end = Date.now() + ms;
  while (!check()) {
    if (Date.now() > end) throw new Error('timed out waiting');
    await new Promise((r) => setTimeout(r, 50));
  }
};

describe('killed in the middle of an upload', () => {
  it('leaves no capture row, and the restarted server removes the partial file', async () => {
    const filesDir = mkdtempSync(join(inject('scratchDir'), 'fault-files-'));
    const env = childEnv(filesDir, { WORKER: 'off' });
    const first = await startChild(env);
    const tech = await signedIn(first.url, 'tech@quietpath.test');
    const before = (await tech.get<unknown[]>(`/api/jobs/${JOB}/captures`)).body.length;

    // A multipart upload that sends its head and part of the file, then stalls.
    const boundary = 'quietpath-fault-boundary';
    const head =
      `--${boundary}\r\nContent-Disposition: form-data; name="metadata"\r\n\r\n` +
      `${JSON.stringify([{ phase: 'before', stimulus: 'tone' }])}\r\n` +
      `--${boundary}\r\nContent-Disposition: form-data; name="files"; filename="cut-off.wav"\r\nContent-Type: audio/wav\r\n\r\n`;
    const wav = plainWav(480_000);
    const url = new URL(`${first.url}/api/jobs/${JOB}/captures`);
    const cookie = (tech as unknown as { cookies: Map<string, string> }).cookies;
    const req = request({
      host: url.hostname,
      port: url.port,
      path: url.pathname,
      method: 'POST',
      headers: {
        'content-type': `multipart/form-data; boundary=${boundary}`,
        'content-length': String(head.length + wav.length + boundary.length + 8),
        'x-csrf-token': tech.csrfToken!,
        cookie: [...cookie].map(([k, v]) => `${k}=${v}`).join('; '),
      },
    });
    req.on('error', () => {});
    req.write(head);
    req.write(wav.subarray(0, 600_000));
    const tmp = join(filesDir, 'tmp');
    await until(() => existsSync(tmp) && readdirSync(tmp).some((n) => n.endsWith('.part')));
    first.proc.kill('SIGKILL');
    await new Promise((r) => first.proc.once('exit', r));
    expect(readdirSync(tmp).filter((n) => n.endsWith('.part'))).toHaveLength(1);

    const second = await startChild(env);
    expect(readdirSync(tmp)).toEqual([]);
    const again = await signedIn(second.url, 'tech@quietpath.test');
    expect((await again.get<unknown[]>(`/api/jobs/${JOB}/captures`)).body.length).toBe(before);
    second.proc.kill('SIGKILL');
  });
});

describe('PostgreSQL restarted under a running server', () => {
  it('requests fail cleanly while it is down and succeed again without restarting the server', async () => {
    const server = await startTestServer({ WORKER: 'off' });
    try {
      const desk = await signedIn(server.url, 'desk@quietpath.test');
      expect((await desk.get('/api/jobs')).status).toBe(200);
      const db = new URL(inject('databaseUrl'));
      const opts = { dataDir: join(inject('scratchDir'), 'postgres'), port: Number(db.port), database: db.pathname.slice(1), log: () => {} };
      (await startCluster(opts)).stop();

      const down = await desk.get<{ error: string }>('/api/jobs');
      expect(down.status).toBe(503);
      expect(down.body.error).toMatch(/database/i);
      const health = await new ApiClient(server.url).get<{ ok: boolean }>('/api/health');
      expect(health.status).toBe(503);

      await startCluster(opts);
      let status = 0;
      for (let i = 0; i < 50 && status !== 200; i++) {
        status = (await desk.get('/api/jobs')).status;
        if (status !== 200) await new Promise((r) => setTimeout(r, 100));
      }
      expect(status).toBe(200);
      expect((await desk.get<{ user: { email: string } }>('/api/auth/me')).body.user.email).toBe('desk@quietpath.test');
    } finally {
      await server.close();
    }
  });
});

describe('killed in the middle of an analysis', () => {
  it('the capture is measured after a restart, once the lost attempt expires', async () => {
    const filesDir = mkdtempSync(join(inject('scratchDir'), 'fault-analysis-'));
    // Short expiry and maintenance so the lost attempt is noticed within seconds, not the default 10 minutes.
    const env = childEnv(filesDir, { WORKER: 'on', ANALYSIS_EXPIRE_SECONDS: '2', QUEUE_MAINTENANCE_SECONDS: '1' });
    const { db, close } = testDb();
    try {
      // Ten minutes of 48 kHz stereo: long enough that the analysis can be caught running. Made
      // first: building it blocks this process for seconds, long enough on a loaded machine for
      // the server to close the sign-in's idle keep-alive connection under the upload.
      const form = new FormData();
      form.append('metadata', JSON.stringify([{ phase: 'before', stimulus: 'tone' }]));
      form.append('files', new Blob([plainWav(48_000 * 600)]), 'long-run.wav');
      const first = await startChild(env);
      const tech = await signedIn(first.url, 'tech@quietpath.test');
      const up = await tech.call<{ captures: { id: number }[] }>('POST', '/api/jobs/2/captures', form);
      expect(up.status).toBe(201);
      const id = up.body.captures[0]!.id;
      const state = async () => (await db.select({ state: captures.state }).from(captures).where(eq(captures.id, id)))[0]!.state;
      const end = Date.now() + 30_000;
      while ((await state()) !== 'running') {
        if (Date.now() > end) throw new Error('the analysis never started');
      }
      first.proc.kill('SIGKILL');
      await new Promise((r) => first.proc.once('exit', r));
      expect(await state()).toBe('running');
      expect(await db.select().from(analyses).where(eq(analyses.captureId, id))).toEqual([]);

      const second = await startChild(env);
      const done = Date.now() + 60_000;
      while ((await state()) !== 'done') {
        if (Date.now() > done) throw new Error(`still ${await state()} a minute after the restart`);
        await new Promise((r) => setTimeout(r, 200));
      }
      const [row] = await db.select().from(analyses).where(eq(analyses.captureId, id));
      expect(row?.rmsDbfs).toBeCloseTo(20 * Math.log10(3000 / 32768), 1);
      const again = await signedIn(second.url, 'tech@quietpath.test');
      expect((await again.del(`/api/captures/${id}`)).status).toBe(204);
      second.proc.kill('SIGKILL');
    } finally {
      await close();
    }
  });
});
