/**
 * `npm run push` end to end: the command in its own process against a running test server,
 * signing in with an API token, uploading to a job's test point, waiting for the analysis and
 * printing the figures; and every refusal with its documented exit code. Expected figures are the
 * synthetic samples' construction (samples-synthetic/README.md).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { startTestServer, testDb } from '../support/server';
import { signedIn, type ApiClient } from '../support/client';
import { makeBenchJob } from '../support/captures';
import { EXIT } from '../../scripts/lib/push-args';
import type { RunningServer } from '../../server/main';
import type { ApiTokenCreated } from '../../shared/api-tokens';
import type { CaptureFigures } from '../../shared/capture-figures';

const ROOT = resolve(fileURLToPath(new URL('../..', import.meta.url)));
const SAMPLE = (name: string) => join(ROOT, 'samples-synthetic', name);

let server: RunningServer;
let tech: ApiClient;
let bench: Awaited<ReturnType<typeof makeBenchJob>>;
let uploadToken: string;
let readToken: string;
let work: string;
const { db, close } = testDb();

interface Run {
  code: number | null;
  stdout: string;
  stderr: string;
}

/** The command as a technician runs it, in its own process (never blocking the server's loop). */
function push(args: string[], env: Record<string, string | undefined> = {}): Promise<Run> {
  return new Promise((done, fail) => {
    const child = spawn(process.execPath, ['--import', 'tsx', join(ROOT, 'scripts/push.ts'), ...args], {
      cwd: ROOT,
      env: { PATH: process.env.PATH, QUIETPATH_URL: server.url, QUIETPATH_TOKEN: uploadToken, ...env },
    });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (c: Buffer) => (stdout += c.toString()));
    child.stderr.on('data', (c: Buffer) => (stderr += c.toString()));
    child.on('error', fail);
    child.on('close', (code) => done({ code, stdout, stderr }));
  });
}

const ref = () => `J-${String(bench.jobId).padStart(4, '0')}`;

beforeAll(async () => {
  server = await startTestServer();
  tech = await signedIn(server.url, 'tech@quietpath.test');
  bench = await makeBenchJob(db);
  const make = async (scope: string) => (await tech.post<ApiTokenCreated>('/api/account/tokens', { name: `push ${scope}`, scope, expiresInDays: 1 })).body.token;
  uploadToken = await make('upload_captures');
  readToken = await make('read_results');
  work = mkdtempSync(join(tmpdir(), 'qp-push-'));
});
afterAll(async () => {
  await server?.close();
  await close();
  rmSync(work, { recursive: true, force: true });
});

describe('npm run push', () => {
  it('uploads to the named test point, waits for the analysis and prints the figures as JSON', async () => {
    const run = await push([SAMPLE('tone-997hz-harmonics.wav'), '--job', ref(), '--point', 'input SELECTOR  output', '--phase', 'before', '--json']);
    expect(run.stderr).toBe('');
    expect(run.code).toBe(EXIT.ok);
    const out = JSON.parse(run.stdout) as { job: string; testPoint: string; captures: { state: string; figures: CaptureFigures }[] };
    expect(out.job).toBe(ref());
    expect(out.testPoint).toBe('Input selector output');
    expect(out.captures).toHaveLength(1);
    expect(out.captures[0]!.state).toBe('done');
    // Built with 1 % 2nd and 0.5 % 3rd harmonic: THD = √(1² + 0.5²) % = 1.118 % (samples README).
    expect(out.captures[0]!.figures.thdPct).toBeCloseTo(1.118, 2);
    const listed = await tech.get<{ testPointId: number; phase: string; originalName: string }[]>(`/api/jobs/${bench.jobId}/captures`);
    expect(listed.body.find((c) => c.originalName === 'tone-997hz-harmonics.wav')).toMatchObject({ testPointId: bench.testPointIds[1], phase: 'before' });
  });

  it('prints the headline figures as text, and shows progress for a large file', async () => {
    // 48 kHz 24-bit stereo is 288 000 bytes/s: 20 s makes 5.76 MB, above the 5 MB progress line.
    const big = join(work, 'long-tone.wav');
    execFileSync('sox', ['-n', '-r', '48000', '-b', '24', '-c', '2', big, 'synth', '20', 'sine', '997', 'vol', '0.316']);
    const run = await push([big, '--job', ref(), '--point', 'Speaker terminals', '--phase', 'after', '--stimulus', 'tone']);
    expect(run.code).toBe(EXIT.ok);
    const steps = run.stderr.trim().split('\n');
    expect(steps.length).toBeGreaterThan(3);
    expect(steps.every((l) => /^Uploading: \d+ % of 5\.8 MB$/.test(l))).toBe(true);
    expect(steps.at(-1)).toBe('Uploading: 100 % of 5.8 MB');
    expect(run.stdout).toMatch(/Uploaded 1 capture to J-\d{4,}, "Speaker terminals", after the repair/);
    // sox's sine at vol 0.316 peaks at 0.316 of full scale: −10.0 dBFS per AES17.
    expect(run.stdout).toMatch(/long-tone\.wav: level -10\.0 dBFS · THD /);
  });

  it('--selected and --driven tag the captures with the inputs, in the unit\'s spelling; an unknown input is refused', async () => {
    const run = await push([SAMPLE('crosstalk-left-driven.wav'), '--job', ref(), '--point', 'Input socket', '--phase', 'before', '--selected', 'disc', '--driven', 'TUNER', '--json']);
    expect(run.stderr).toBe('');
    expect(run.code).toBe(EXIT.ok);
    const id = (JSON.parse(run.stdout) as { captures: { id: number }[] }).captures[0]!.id;
    const capture = await tech.get<{ selectedInput: string | null; drivenInput: string | null }>(`/api/captures/${id}`);
    expect(capture.body).toMatchObject({ selectedInput: 'Disc', drivenInput: 'Tuner' });
    const unknown = await push([SAMPLE('crosstalk-left-driven.wav'), '--job', ref(), '--point', 'Input socket', '--phase', 'before', '--selected', 'cassette deck']);
    expect(unknown.code).toBe(EXIT.refused);
    expect(unknown.stderr).toMatch(/The server refused the upload: .*cassette deck/i);
  });

  it('a wrong job or test point: exit 4 with a clear message', async () => {
    const job = await push([SAMPLE('tone-997hz-clean.wav'), '--job', 'J-999999999', '--point', 'Input socket', '--phase', 'before']);
    expect(job.code).toBe(EXIT.notFound);
    expect(job.stderr).toMatch(/Job J-999999999 was not found in your shop/);
    const point = await push([SAMPLE('tone-997hz-clean.wav'), '--job', ref(), '--point', 'Tone control output', '--phase', 'before']);
    expect(point.code).toBe(EXIT.notFound);
    expect(point.stderr).toMatch(/has no test point "Tone control output"; its test points are "Input socket", "Input selector output", "Speaker terminals"/);
  });

  it('a missing, unknown or read-only token: exit 3', async () => {
    const args = [SAMPLE('tone-997hz-clean.wav'), '--job', ref(), '--point', 'Input socket', '--phase', 'before'];
    const none = await push(args, { QUIETPATH_TOKEN: '' });
    expect(none.code).toBe(EXIT.token);
    expect(none.stderr).toMatch(/Set QUIETPATH_TOKEN/);
    const unknown = await push(args, { QUIETPATH_TOKEN: 'qpt_wrong' });
    expect(unknown.code).toBe(EXIT.token);
    expect(unknown.stderr).toMatch(/not known/);
    const readOnly = await push(args, { QUIETPATH_TOKEN: readToken });
    expect(readOnly.code).toBe(EXIT.token);
    expect(readOnly.stderr).toMatch(/only read results/);
  });

  it('a file that is not a WAV: exit 5 with the server\'s reason; bad flags: exit 2', async () => {
    const notWav = join(work, 'notes.wav');
    writeFileSync(notWav, 'these are bench notes, not audio');
    const refused = await push([notWav, '--job', ref(), '--point', 'Input socket', '--phase', 'before']);
    expect(refused.code).toBe(EXIT.refused);
    expect(refused.stderr).toMatch(/The server refused the upload: .*notes\.wav/);
    const badPhase = await push([SAMPLE('tone-997hz-clean.wav'), '--job', ref(), '--point', 'Input socket', '--phase', 'during']);
    expect(badPhase.code).toBe(EXIT.usage);
    expect(badPhase.stderr).toMatch(/--phase "during"/);
    const missing = await push([join(work, 'nowhere.wav'), '--job', ref(), '--point', 'Input socket', '--phase', 'before']);
    expect(missing.code).toBe(EXIT.usage);
  });

  it('a server that is not there: exit 6', async () => {
    const run = await push([SAMPLE('tone-997hz-clean.wav'), '--job', ref(), '--point', 'Input socket', '--phase', 'before'], { QUIETPATH_URL: 'http://127.0.0.1:9' });
    expect(run.code).toBe(EXIT.server);
    expect(run.stderr).toMatch(/Cannot reach http:\/\/127\.0\.0\.1:9/);
  });
});
