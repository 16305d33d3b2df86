/**
 * Source inputs of a unit and the selected/driven input tags on captures and live recordings.
 * Expected lists are the defaults written in shared/inputs.ts and the names the test sends.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, testDb } from '../support/server';
import { signedIn, type ApiClient } from '../support/client';
import { sample, upload } from '../support/captures';
import { DEFAULT_INPUTS } from '../../shared/inputs';
import type { Unit } from '../../shared/customers';
import type { CaptureSummary } from '../../shared/captures';
import type { RecordingSummary } from '../../shared/recordings';
import type { SpecSheet } from '../../shared/specs';
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

async function unitWithJob(body: Record<string, unknown>): Promise<{ unit: Unit; jobId: number }> {
  const cust = await desk.post<{ id: number }>('/api/customers', { name: 'Input Tagger' });
  expect(cust.status).toBe(201);
  const unit = await desk.post<Unit>('/api/units', { customerId: cust.body.id, maker: 'Harrowgate', model: 'Input test', ...body });
  expect(unit.status).toBe(201);
  const job = await desk.post<{ id: number }>('/api/jobs', { unitId: unit.body.id, reportedFault: 'Tuner heard under disc' });
  expect(job.status).toBe(201);
  return { unit: unit.body, jobId: job.body.id };
}

describe('inputs of a unit', () => {
  it('a new unit gets the usual inputs for its kind; an edit can rename them', async () => {
    const { unit } = await unitWithJob({ kind: 'integrated_amplifier' });
    expect(unit.inputs).toEqual(DEFAULT_INPUTS.integrated_amplifier);
    expect(unit.inputs).toEqual(['Phono', 'Disc', 'Tuner', 'Aux', 'Recorder']);

    const edited = await desk.put<Unit>(`/api/units/${unit.id}`, { customerId: unit.customerId, kind: unit.kind, maker: unit.maker, model: unit.model, inputs: [' Phono ', 'CD', 'Tape  1'] });
    expect(edited.status).toBe(200);
    expect(edited.body.inputs).toEqual(['Phono', 'CD', 'Tape  1']);
    // Left out of an edit, the list stays as it was.
    const kept = await desk.put<Unit>(`/api/units/${unit.id}`, { customerId: unit.customerId, kind: 'receiver', maker: unit.maker, model: unit.model });
    expect(kept.body.inputs).toEqual(['Phono', 'CD', 'Tape  1']);
  });

  it('refuses the same input twice, whatever the case', async () => {
    const cust = await desk.post<{ id: number }>('/api/customers', { name: 'Twice' });
    const res = await desk.post<{ error: string }>('/api/units', { customerId: cust.body.id, kind: 'preamplifier', maker: 'M', model: 'N', inputs: ['Disc', 'disc'] });
    expect(res.status).toBe(400);
    expect(res.body.error).toContain('"disc" is listed twice');
  });

  it('a spec sheet keeps its list of inputs', async () => {
    const res = await tech.post<SpecSheet>('/api/spec-sheets', { maker: 'Harrowgate', model: `Sheet ${Date.now()}`, inputs: ['Phono', 'Disc', 'Tuner'], figures: [] });
    expect(res.status).toBe(201);
    expect(res.body.inputs).toEqual(['Phono', 'Disc', 'Tuner']);
    expect((await tech.get<SpecSheet>(`/api/spec-sheets/${res.body.id}`)).body.inputs).toEqual(['Phono', 'Disc', 'Tuner']);
  });
});

describe('input tags on captures', () => {
  const bytes = sample('tone-997hz-clean.wav');

  it('stores the unit spelling of names given in any case, and lists them', async () => {
    const { jobId } = await unitWithJob({ kind: 'integrated_amplifier' });
    const res = await upload(tech, jobId, [
      { name: 'disc-selected-tuner-driven.wav', bytes, meta: { phase: 'before', stimulus: 'tone', selectedInput: 'DISC', drivenInput: 'tuner' } },
      { name: 'untagged.wav', bytes, meta: { phase: 'before', stimulus: 'tone' } },
    ]);
    expect(res.status).toBe(201);
    expect(res.body.captures.map((c) => [c.selectedInput, c.drivenInput])).toEqual([
      ['Disc', 'Tuner'],
      [null, null],
    ]);
    const listed = await tech.get<CaptureSummary[]>(`/api/jobs/${jobId}/captures`);
    const tagged = listed.body.find((c) => c.originalName === 'disc-selected-tuner-driven.wav');
    expect(tagged).toMatchObject({ selectedInput: 'Disc', drivenInput: 'Tuner' });
  });

  it('refuses an input the unit does not have, naming the file and the inputs it has', async () => {
    const { jobId } = await unitWithJob({ kind: 'power_amplifier' });
    const res = await upload(tech, jobId, [{ name: 'typo.wav', bytes, meta: { phase: 'before', stimulus: 'tone', selectedInput: 'Main in', drivenInput: 'Tunr' } }]);
    expect(res.status).toBe(400);
    expect(res.body.error).toBe(`"typo.wav": the driven input "Tunr" is not one of this unit's inputs (${DEFAULT_INPUTS.power_amplifier.join(', ')})`);
    expect((await tech.get<CaptureSummary[]>(`/api/jobs/${jobId}/captures`)).body).toEqual([]);
  });

  it('a live recording carries its tags, checked the same way', async () => {
    const { jobId } = await unitWithJob({ kind: 'receiver' });
    const base = { jobId, phase: 'after', stimulus: 'tone', sampleRate: 48_000, channels: 2 };
    const bad = await tech.post<{ error: string }>('/api/recordings', { ...base, selectedInput: 'Cassette' });
    expect(bad.status).toBe(400);
    expect(bad.body.error).toContain('"Cassette" is not one of this unit\'s inputs');
    const ok = await tech.post<RecordingSummary>('/api/recordings', { ...base, selectedInput: 'phono', drivenInput: 'TUNER' });
    expect(ok.status).toBe(201);
    expect(ok.body).toMatchObject({ selectedInput: 'Phono', drivenInput: 'Tuner' });
  });
});
