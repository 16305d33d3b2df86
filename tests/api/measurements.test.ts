/**
 * The signal-path table, before/after comparison with the spec check, and calibration profiles.
 * Expected figures come from samples-synthetic/README.md (construction) and the demo spec sheet
 * for the Vellmark Solace 70 (separation 60 dB at 1 kHz, THD 0.05 %, invented figures).
 */
import { afterAll, beforeAll, describe, expect, it, inject } from 'vitest';
import { existsSync } from 'node:fs';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { makeBenchJob, sample, upload, waitForAnalysis } from '../support/captures';
import type { RunningServer } from '../../server/main';
import { storagePath } from '../../server/services/capture-storage';
import type { Calibration } from '../../shared/calibrations';
import type { CaptureSummary } from '../../shared/captures';
import type { Comparison } from '../../shared/compare';
import type { SignalPath } from '../../shared/signal-path';

let server: RunningServer;
let tech: ApiClient;
const { db, close } = testDb();

beforeAll(async () => {
  server = await startTestServer();
  tech = await signedIn(server.url, 'tech@quietpath.test');
});
afterAll(async () => {
  await server?.close();
  await close();
});

/** A job with the demo story: clean input, faulty selector before, clean selector after. */
async function repairedJob() {
  const job = await makeBenchJob(db);
  const [input, selector] = job.testPointIds as [number, number];
  const meta = (testPointId: number, phase: 'before' | 'after') => ({ testPointId, phase, stimulus: 'tone' as const, drivenChannel: 0 });
  const res = await upload(tech, job.jobId, [
    { name: 'input-before.wav', bytes: sample('demo-before-input-socket.wav'), meta: meta(input, 'before') },
    { name: 'selector-before.wav', bytes: sample('demo-before-selector-out.wav'), meta: meta(selector, 'before') },
    { name: 'selector-after.wav', bytes: sample('demo-after-selector-out.wav'), meta: meta(selector, 'after') },
  ]);
  expect(res.status).toBe(201);
  const ids = res.body.captures.map((c) => c.id) as [number, number, number];
  await waitForAnalysis(tech, job.jobId, ids);
  return { ...job, input, selector, ids };
}

describe('signal path', () => {
  it('puts the fault at the selector output before the repair and nowhere after', async () => {
    const job = await repairedJob();
    const res = await tech.get<SignalPath>(`/api/jobs/${job.jobId}/signal-path`);
    expect(res.status).toBe(200);
    expect(res.body.rows.map((r) => r.name)).toEqual(['Input socket', 'Input selector output', 'Speaker terminals']);
    // The unit has a spec sheet with 60 dB separation, so that is the threshold, not the 50 dB rule of thumb.
    expect(res.body.criteria).toMatchObject({ separationThresholdDb: 60, separationSource: 'spec_sheet' });
    expect(res.body.firstFault.before).toMatchObject({ testPointId: job.selector, cleanStagesBefore: 1 });
    expect(res.body.firstFault.before!.faults.map((f) => f.kind)).toEqual(['clicks', 'separation']);
    expect(res.body.firstFault.after).toBeNull();
    const [input, selector, speaker] = res.body.rows;
    expect(input!.before).toMatchObject({ clickCount: 0, faults: [] });
    expect(input!.after).toBeNull();
    expect(selector!.before!.clickCount).toBe(36);
    expect(selector!.after!.clickCount).toBe(0);
    expect(speaker!.before).toBeNull();
  });

  it('uses the latest capture per stage: a newer clean one clears the fault', async () => {
    const job = await repairedJob();
    const again = await upload(tech, job.jobId, [
      { name: 'selector-retake.wav', bytes: sample('demo-after-selector-out.wav'), meta: { testPointId: job.selector, phase: 'before', stimulus: 'tone', drivenChannel: 0 } },
    ]);
    await waitForAnalysis(tech, job.jobId, [again.body.captures[0]!.id]);
    const res = await tech.get<SignalPath>(`/api/jobs/${job.jobId}/signal-path`);
    expect(res.body.firstFault.before).toBeNull();
    expect(res.body.rows[1]!.before!.originalName).toBe('selector-retake.wav');
  });

  it("another shop's job is a 404", async () => {
    const job = await makeBenchJob(db);
    const desk = await signedIn(server.url, 'desk@quietpath.test');
    expect((await desk.get(`/api/jobs/${job.jobId}/signal-path`)).status).toBe(200);
    expect((await tech.get('/api/jobs/2000000000/signal-path')).status).toBe(404);
  });
});

describe('before / after', () => {
  it('clicks 36 → 0 and separation 30 → 70 dB are better; the after capture meets the spec sheet', async () => {
    const job = await repairedJob();
    const res = await tech.get<Comparison>(`/api/jobs/${job.jobId}/compare?before=${job.ids[1]}&after=${job.ids[2]}`);
    expect(res.status).toBe(200);
    const row = (figure: string) => res.body.rows.find((r) => r.figure === figure)!;
    expect(row('clickCount')).toMatchObject({ before: 36, after: 0, change: -36, verdict: 'better' });
    expect(row('separationDb').verdict).toBe('better');
    expect(row('separationDb').change).toBeCloseTo(40, 0);
    expect(row('humDbfs').verdict).toBe('better');
    expect(row('levelDbfs').verdict).toBe('same');
    expect(res.body.overall).toBe('better');
    expect(res.body.spec.sheet).toMatchObject({ maker: 'Vellmark', model: 'Solace 70' });
    const spec = (side: 'before' | 'after', metric: string) => res.body.spec[side].find((r) => r.metric === metric)!;
    expect(spec('before', 'separation_1k_db')).toMatchObject({ published: 60, within: false });
    expect(spec('after', 'separation_1k_db')).toMatchObject({ published: 60, within: true });
    expect(spec('after', 'thd_pct').within).toBe(true);
    // Power needs a dummy load on the capture: reported as not measured, not as a failure.
    expect(spec('after', 'power_8ohm_w')).toMatchObject({ within: null, measured: null });
  });

  it('by test point: the latest before and after there', async () => {
    const job = await repairedJob();
    const res = await tech.get<Comparison>(`/api/jobs/${job.jobId}/compare?testPointId=${job.selector}`);
    expect(res.status).toBe(200);
    expect(res.body.before!.id).toBe(job.ids[1]);
    expect(res.body.after!.id).toBe(job.ids[2]);
  });

  it('refuses captures of another job and an empty query', async () => {
    const job = await repairedJob();
    const otherJob = await repairedJob();
    const wrong = await tech.get<{ error: string }>(`/api/jobs/${job.jobId}/compare?before=${otherJob.ids[1]}&after=${job.ids[2]}`);
    expect(wrong.status).toBe(400);
    expect(wrong.body.error).toBe(`Capture ${otherJob.ids[1]} is not on this job`);
    expect((await tech.get(`/api/jobs/${job.jobId}/compare`)).status).toBe(400);
  });
});

describe('calibration profiles', () => {
  it('CRUD for the bench; the front desk is refused', async () => {
    const created = await tech.post<Calibration>('/api/calibrations', { name: 'Interface line in', voltsAtFullScale: 2, probeAttenuation: 10 });
    expect(created.status).toBe(201);
    // 20·lg(2 V × 10) = 26.02 dBV at the probe tip for 0 dBFS.
    expect(created.body.dbvAtFullScale).toBeCloseTo(26.02, 2);
    const list = await tech.get<Calibration[]>('/api/calibrations');
    expect(list.body.map((c) => c.id)).toContain(created.body.id);
    const edited = await tech.put<Calibration>(`/api/calibrations/${created.body.id}`, { name: 'Interface line in (checked)', voltsAtFullScale: 2.5, probeAttenuation: 10 });
    expect(edited.status).toBe(200);
    expect(edited.body.voltsAtFullScale).toBe(2.5);
    const bad = await tech.post<{ error: string }>('/api/calibrations', { name: 'x', voltsAtFullScale: 0 });
    expect(bad.status).toBe(400);
    expect(bad.body.error).toMatch(/voltsAtFullScale/);
    const desk = await signedIn(server.url, 'desk@quietpath.test');
    expect((await desk.get('/api/calibrations')).status).toBe(403);
    expect((await tech.del(`/api/calibrations/${created.body.id}`)).status).toBe(204);
  });

  it('a calibrated capture across a dummy load reads dBV, dBu and output power (P = V²/R)', async () => {
    // 7.0711 V RMS at 0 dBFS: the −10 dBFS tone is then 2.2361 V RMS, 0.625 W into 8 Ω.
    const cal = await tech.post<Calibration>('/api/calibrations', { name: 'Speaker terminal divider', voltsAtFullScale: 7.0711, probeAttenuation: 1 });
    const job = await makeBenchJob(db);
    const res = await upload(tech, job.jobId, [
      {
        name: 'speaker-8ohm.wav',
        bytes: sample('demo-after-selector-out.wav'),
        meta: { testPointId: job.testPointIds[2]!, phase: 'after', stimulus: 'tone', drivenChannel: 0, calibrationId: cal.body.id, loadOhms: 8 },
      },
    ]);
    expect(res.status).toBe(201);
    const [done] = await waitForAnalysis(tech, job.jobId, [res.body.captures[0]!.id]);
    const f = done!.figures!;
    expect(done!.calibrationName).toBe('Speaker terminal divider');
    expect(f.levelDbv! - f.levelDbfs!).toBeCloseTo(20 * Math.log10(7.0711), 2);
    expect(f.levelDbu! - f.levelDbv!).toBeCloseTo(2.2185, 3); // REFERENCES.md: dBu = dBV + 2.2185 dB
    expect(f.powerW!).toBeCloseTo(0.625, 2);
    // A profile in use keeps its figures: editing the volts is refused, deleting too.
    const edit = await tech.put(`/api/calibrations/${cal.body.id}`, { name: 'changed', voltsAtFullScale: 1 });
    expect(edit.status).toBe(409);
    expect((await tech.del(`/api/calibrations/${cal.body.id}`)).status).toBe(409);
  });

  it("another shop's calibration cannot be used", async () => {
    const job = await makeBenchJob(db);
    const res = await upload(tech, job.jobId, [
      { name: 'x.wav', bytes: sample('tone-997hz-clean.wav'), meta: { testPointId: job.testPointIds[0]!, phase: 'before', stimulus: 'tone', calibrationId: 2_000_000_000 } },
    ]);
    expect(res.status).toBe(400);
    expect(res.body.error).toBe('"x.wav": calibration profile 2000000000 does not exist in this shop');
  });
});

describe('re-measure and delete', () => {
  it('measures a capture again, then deletes it and its file', async () => {
    const job = await makeBenchJob(db);
    // Stored files are shared by identical content, and other tests upload this sample too: one
    // LSB of the last 24-bit sample (−138 dBFS, inside the 2 ms edge guard) makes this copy its own.
    const bytes = sample('tone-997hz-harmonics.wav');
    const lsb = bytes.length - 3;
    bytes[lsb] = bytes[lsb]! ^ 1;
    const res = await upload(tech, job.jobId, [{ name: 'h.wav', bytes, meta: { testPointId: job.testPointIds[0]!, phase: 'before', stimulus: 'tone' } }]);
    const id = res.body.captures[0]!.id;
    const [first] = await waitForAnalysis(tech, job.jobId, [id]);
    // README: 1 % 2nd + 0.5 % 3rd harmonic = 1.118 % THD (REFERENCES.md analytic truth).
    expect(first!.figures!.thdPct).toBeCloseTo(1.118, 2);
    const again = await tech.post<CaptureSummary>(`/api/captures/${id}/analyse`);
    expect(again.status).toBe(202);
    const [second] = await waitForAnalysis(tech, job.jobId, [id]);
    expect(second!.figures!.thdPct).toBeCloseTo(1.118, 2);
    expect((await tech.del(`/api/captures/${id}`)).status).toBe(204);
    expect((await tech.get(`/api/captures/${id}`)).status).toBe(404);
    expect(existsSync(storagePath(inject('filesDir'), first!.sha256))).toBe(false);
  });
});
