/**
 * A job walked from tagging captures with inputs to the input crosstalk matrix, its verdicts and
 * its sentence in the evidence PDF (text taken out with Debian's pdftotext). The captures are
 * built here with leak levels known by construction; the figure is 20·lg(U_driven/U_undriven)
 * (IEC 60268-3 form), so the expected cells are the built-in leaks (analytic).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { encodeWav, generateNoise, generateSine, mixInto } from '../../analysis/index';
import { startTestServer, testDb } from '../support/server';
import { signedIn, type ApiClient } from '../support/client';
import { upload, waitForAnalysis, type UploadFile } from '../support/captures';
import type { CaptureSummary } from '../../shared/captures';
import type { SignalPath } from '../../shared/signal-path';
import type { JobCrosstalk } from '../../server/services/input-crosstalk';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let desk: ApiClient;
let tech: ApiClient;
const { close } = testDb();

beforeAll(async () => {
  server = await startTestServer();
  desk = await signedIn(server.url, 'desk@quietpath.test');
  tech = await signedIn(server.url, 'tech@quietpath.test');
});
afterAll(async () => {
  await server?.close();
  await close();
});

const FS = 48_000;
/** Stereo 997 Hz (AES17) at the given dBFS per channel over −110 dBFS noise, 24-bit dithered. */
function toneFile(left: number, right: number, seed: number): Uint8Array {
  const ch = [left, right].map((dbfs, c) =>
    mixInto(generateSine({ sampleRate: FS, seconds: 1.5, frequencyHz: 997, levelDbfs: dbfs })[0]!, generateNoise({ sampleRate: FS, seconds: 1.5, levelDbfs: -110, seed: seed * 2 + c })[0]!),
  );
  return encodeWav(ch, FS, 24, { dither: 'tpdf', seed });
}

const pdfText = (pdf: Buffer): string => execFileSync('/usr/bin/pdftotext', ['-layout', '-', '-'], { input: pdf }).toString('utf8');

describe('input crosstalk, from tagged captures to the evidence report', () => {
  it('tags, matrix, verdicts against the published figure, and the sentence in the PDF', async () => {
    const model = `Crosstalk ${Date.now()}`;
    const cust = await desk.post<{ id: number }>('/api/customers', { name: 'Crosstalk Walker' });
    const unit = await desk.post<{ id: number; inputs: string[] }>('/api/units', { customerId: cust.body.id, kind: 'integrated_amplifier', maker: 'Harrowgate', model });
    expect(unit.body.inputs).toEqual(['Phono', 'Disc', 'Tuner', 'Aux', 'Recorder']);
    const job = await desk.post<{ id: number }>('/api/jobs', { unitId: unit.body.id, reportedFault: 'Tuner heard behind records' });
    const sheet = await tech.post('/api/spec-sheets', {
      maker: 'Harrowgate',
      model,
      inputs: ['Phono', 'Disc', 'Tuner', 'Aux', 'Recorder'],
      figures: [{ metric: 'input_crosstalk_1k_db', value: 60, condition: 'line inputs, 1 kHz', source: 'owner\'s manual p. 9 (invented)' }],
    });
    expect(sheet.status).toBe(201);
    const tps = await tech.get<{ id: number; name: string }[]>(`/api/jobs/${job.body.id}/test-points`);
    const selectorOut = tps.body.find((t) => t.name === 'Input selector output')!.id;

    // Tuner driven at −10 dBFS; disc selected: 29 / 32 dB below before, 71 / 75 dB after (left / right).
    const file = (name: string, bytes: Uint8Array, phase: 'before' | 'after', selectedInput: string): UploadFile => ({
      name,
      bytes,
      meta: { testPointId: selectorOut, phase, stimulus: 'tone', selectedInput, drivenInput: 'TUNER' },
    });
    const up = await upload(tech, job.body.id, [
      file('before-tuner.wav', toneFile(-10, -10, 1), 'before', 'tuner'),
      file('before-disc.wav', toneFile(-39, -42, 2), 'before', 'disc'),
      file('after-tuner.wav', toneFile(-10, -10, 3), 'after', 'Tuner'),
      file('after-disc.wav', toneFile(-81, -85, 4), 'after', 'DISC'),
      { name: 'ordinary-after.wav', bytes: toneFile(-10, -80, 5), meta: { testPointId: selectorOut, phase: 'after', stimulus: 'tone', drivenChannel: 0, selectedInput: 'disc', drivenInput: 'disc' } },
    ]);
    expect(up.status).toBe(201);
    expect(up.body.captures.map((c) => `${c.selectedInput}/${c.drivenInput}`)).toEqual(['Tuner/Tuner', 'Disc/Tuner', 'Tuner/Tuner', 'Disc/Tuner', 'Disc/Disc']);
    const done = await waitForAnalysis(tech, job.body.id, up.body.captures.map((c) => c.id));
    expect(done.every((c: CaptureSummary) => c.state === 'done')).toBe(true);

    const res = await tech.get<JobCrosstalk>(`/api/jobs/${job.body.id}/input-crosstalk`);
    expect(res.status).toBe(200);
    const x = res.body;
    expect(x.limitDb).toBe(60);
    expect(x.limitSource).toBe('spec_sheet');
    expect(x.before.driven).toEqual(['Tuner']);
    expect(x.before.selected).toEqual(['Disc']);
    const cell = (phase: 'before' | 'after', channel: number) => x[phase].cells.find((c) => c.channel === channel)!;
    for (const [phase, channel, truth] of [['before', 0, 29], ['before', 1, 32], ['after', 0, 71], ['after', 1, 75]] as const) {
      expect(Math.abs(cell(phase, channel).db! - truth), `${phase} ${channel}`).toBeLessThan(0.5);
      expect(cell(phase, channel).noiseLimited).toBe(false);
    }
    expect(x.rows).toHaveLength(1);
    expect(x.rows[0]).toMatchObject({ driven: 'Tuner', selected: 'Disc', beforeVerdict: 'short', afterVerdict: 'meets' });
    expect(x.sentence).toBe('Tuner is now heard 71 dB below the selected disc input; before the repair it was 29 dB below.');

    // Another input heard through the selected one is not the stage's own before/after; a
    // capture with the same input selected and driven is (here the newest of each phase).
    const path = await tech.get<SignalPath>(`/api/jobs/${job.body.id}/signal-path`);
    const row = path.body.rows.find((r) => r.testPointId === selectorOut)!;
    expect(row.after?.originalName).toBe('ordinary-after.wav');
    expect(row.before?.originalName).toBe('before-tuner.wav');

    const pdf = await tech.raw('GET', `/api/jobs/${job.body.id}/evidence.pdf`);
    expect(pdf.status).toBe(200);
    const text = pdfText(Buffer.from(await pdf.arrayBuffer())).replace(/\s+/g, ' ');
    expect(text).toContain('Other inputs heard through the selected one');
    expect(text).toContain('Tuner is now heard 71 dB below the selected disc input; before the repair it was 29 dB below.');
    expect(text).toMatch(/Tuner, heard with Disc selected 29\.\d dB 71\.\d dB Fixed/);
    expect(text).toContain('The limit is the published figure of 60 dB');
    // The published figure is answered by the after-repair matrix's worst pair (71 dB, built in).
    expect(text).toMatch(/Input crosstalk at 1 kHz 60 dB 71(\.\d+)? dB Meets \+11\.\d\d dB; Tuner heard/);
  });

  it('a typed-in reference level stands in for a missing reference capture and is kept on the job', async () => {
    const cust = await desk.post<{ id: number }>('/api/customers', { name: 'Level Typer' });
    const unit = await desk.post<{ id: number }>('/api/units', { customerId: cust.body.id, kind: 'receiver', maker: 'Harrowgate', model: `Typed ${Date.now()}` });
    const job = await desk.post<{ id: number }>('/api/jobs', { unitId: unit.body.id, reportedFault: 'Phono heard on aux' });
    // Phono fed; only the aux step was recorded, 55 dB below a phono level of −12 dBFS.
    const up = await upload(tech, job.body.id, [{ name: 'aux.wav', bytes: toneFile(-67, -67, 7), meta: { phase: 'before', stimulus: 'tone', selectedInput: 'Aux', drivenInput: 'Phono' } }]);
    expect(up.status).toBe(201);
    await waitForAnalysis(tech, job.body.id, [up.body.captures[0]!.id]);

    const without = await tech.get<JobCrosstalk>(`/api/jobs/${job.body.id}/input-crosstalk`);
    expect(without.body.before.missingReference).toEqual(['Phono']);
    expect(without.body.rows[0]!.before).toBeNull();

    const bad = await tech.put<{ error: string }>(`/api/jobs/${job.body.id}/input-crosstalk/references`, { before: { Cassette: -12 } });
    expect(bad.status).toBe(400);
    expect(bad.body.error).toContain('"Cassette" is not one of this unit\'s inputs');
    expect((await desk.put(`/api/jobs/${job.body.id}/input-crosstalk/references`, { before: { phono: -12 } })).status).toBe(403);

    const set = await tech.put<JobCrosstalk>(`/api/jobs/${job.body.id}/input-crosstalk/references`, { before: { phono: -12 } });
    expect(set.status).toBe(200);
    expect(set.body.entered).toEqual({ before: { Phono: -12 }, after: {} });
    const again = await tech.get<JobCrosstalk>(`/api/jobs/${job.body.id}/input-crosstalk`);
    expect(again.body.before.missingReference).toEqual([]);
    expect(Math.abs(again.body.rows[0]!.before!.db! - 55)).toBeLessThan(0.5);
    expect(again.body.before.references[0]).toMatchObject({ driven: 'Phono', captureId: null, levelDbfs: -12 });
  });
});
