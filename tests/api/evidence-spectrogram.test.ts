/**
 * The evidence report shows the before and after spectrograms at the stage where the fault first
 * shows, and only there. Read back with poppler's pdftotext and pdfimages (Debian poppler-utils),
 * which know nothing of how the report was drawn.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startTestServer, testDb } from '../support/server';
import { signedIn, type ApiClient } from '../support/client';
import { makeBenchJob, sample, upload, waitForAnalysis } from '../support/captures';
import type { RunningServer } from '../../server/main';
import type { AnalysisResult } from '../../shared/analysis-result';

let server: RunningServer;
let tech: ApiClient;
const { db, close } = testDb();
const dir = mkdtempSync(join(tmpdir(), 'qp-evidence-'));

beforeAll(async () => {
  server = await startTestServer();
  tech = await signedIn(server.url, 'tech@quietpath.test');
});
afterAll(async () => {
  await server?.close();
  await close();
  rmSync(dir, { recursive: true, force: true });
});

describe('evidence report spectrograms', () => {
  it('before and after pictures at the first faulty stage, one image each, none elsewhere', async () => {
    const job = await makeBenchJob(db);
    const [socket, selector] = job.testPointIds;
    // Clean at the input socket, clicks from the selector output on: the fault first shows at the selector.
    const res = await upload(tech, job.jobId, [
      { name: 'socket.wav', bytes: sample('demo-before-input-socket.wav'), meta: { testPointId: socket!, phase: 'before', stimulus: 'tone', drivenChannel: 0 } },
      { name: 'sel-before.wav', bytes: sample('demo-before-selector-out.wav'), meta: { testPointId: selector!, phase: 'before', stimulus: 'tone', drivenChannel: 0 } },
      { name: 'sel-after.wav', bytes: sample('demo-after-selector-out.wav'), meta: { testPointId: selector!, phase: 'after', stimulus: 'tone', drivenChannel: 0 } },
    ]);
    expect(res.status).toBe(201);
    await waitForAnalysis(tech, job.jobId, res.body.captures.map((c) => c.id));
    const pdf = await tech.raw('GET', `/api/jobs/${job.jobId}/evidence.pdf`);
    expect(pdf.status).toBe(200);
    const file = join(dir, 'evidence.pdf');
    writeFileSync(file, Buffer.from(await pdf.arrayBuffer()));

    const text = execFileSync('pdftotext', ['-layout', file, '-'], { encoding: 'utf8' });
    const selectorAt = text.indexOf('Test point 2: Input selector output');
    expect(text.indexOf('Test point 1: Input socket')).toBeGreaterThan(-1);
    expect(selectorAt).toBeGreaterThan(text.indexOf('Test point 1: Input socket'));
    expect(text.match(/Spectrogram before, channel 1/g)).toHaveLength(1);
    expect(text.match(/Spectrogram after, channel 1/g)).toHaveLength(1);
    expect(text.indexOf('Spectrogram before')).toBeGreaterThan(selectorAt);

    // pdfimages -list: page num type width height color comp bpc …: the two stored pictures, one pixel a cell.
    const stored = await tech.get<AnalysisResult>(`/api/captures/${res.body.captures[1]!.id}/result`);
    const { columns, rows } = stored.body.spectrogram!;
    expect([columns, rows]).toEqual([Math.floor((3 * 48_000) / 1024), 96]); // 3 s at 48 kHz, 2048-point frames
    const images = execFileSync('pdfimages', ['-list', file], { encoding: 'utf8' })
      .split('\n')
      .slice(2)
      .filter((l) => l.trim())
      .map((l) => l.trim().split(/\s+/));
    expect(images.map((c) => [c[2], c[3], c[4], c[5], c[7]])).toEqual([
      ['image', String(columns), String(rows), 'rgb', '8'],
      ['image', String(columns), String(rows), 'rgb', '8'],
    ]);
  });
});
