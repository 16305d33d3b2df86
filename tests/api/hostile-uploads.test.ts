import { afterAll, beforeAll, describe, expect, it, inject } from 'vitest';
import { mkdtempSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { startTestServer } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { hostileCorpus, plainWav } from '../support/hostile-wavs';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let tech: ApiClient;
let filesDir: string;
const JOB = 1;
const LIMIT_MB = 1;

beforeAll(async () => {
  filesDir = mkdtempSync(join(inject('scratchDir'), 'hostile-files-'));
  server = await startTestServer({ FILES_DIR: filesDir, UPLOAD_MAX_MB: String(LIMIT_MB), WORKER: 'off' });
  tech = await signedIn(server.url, 'tech@quietpath.test');
});
afterAll(() => server.close());

/** Every regular file under the storage folder, temp folder included. */
function storedFiles(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    const p = join(dir, name);
    if (statSync(p).isDirectory()) out.push(...storedFiles(p));
    else out.push(p);
  }
  return out;
}

function upload(name: string, bytes: Uint8Array) {
  const form = new FormData();
  form.append('metadata', JSON.stringify([{ phase: 'before', stimulus: 'tone' }]));
  form.append('files', new Blob([bytes], { type: 'audio/wav' }), name);
  return tech.call<{ error?: string }>('POST', `/api/jobs/${JOB}/captures`, form);
}

const corpus = hostileCorpus();

describe(`hostile uploads (${corpus.length} malformed files + an oversize one)`, () => {
  let before: number;
  beforeAll(async () => {
    before = (await tech.get<unknown[]>(`/api/jobs/${JOB}/captures`)).body.length;
  });

  it('has at least 30 cases', () => {
    expect(corpus.length).toBeGreaterThanOrEqual(30);
  });

  it.each(corpus.map((f) => [f.fault, f] as const))('%s → a clear 4xx', async (_fault, file) => {
    const res = await upload(file.name, file.bytes);
    expect(res.status).toBeGreaterThanOrEqual(400);
    expect(res.status).toBeLessThan(500);
    expect(res.body.error).toEqual(expect.stringMatching(/\w{3,}/));
  });

  it(`a file over the ${LIMIT_MB} MB limit → 413 naming the limit`, async () => {
    const res = await upload('long-capture.wav', plainWav(300_000));
    expect(res.status).toBe(413);
    expect(res.body.error).toMatch(/larger than/);
  });

  it('one bad file refuses the whole batch', async () => {
    const form = new FormData();
    form.append('metadata', JSON.stringify([{ phase: 'before', stimulus: 'tone' }, { phase: 'before', stimulus: 'tone' }]));
    form.append('files', new Blob([plainWav(4800)]), 'fine.wav');
    form.append('files', new Blob([corpus.find((f) => f.name === 'zero-channels.wav')!.bytes]), 'zero-channels.wav');
    const res = await tech.call<{ error: string }>('POST', `/api/jobs/${JOB}/captures`, form);
    expect([400, 415]).toContain(res.status);
    expect(res.body.error).toMatch(/zero-channels\.wav/);
  });

  it('afterwards the server is up, and no row or file was left behind', async () => {
    expect((await new ApiClient(server.url).get('/api/health')).status).toBe(200);
    expect((await tech.get<unknown[]>(`/api/jobs/${JOB}/captures`)).body.length).toBe(before);
    expect(storedFiles(filesDir)).toEqual([]);
  });
});
