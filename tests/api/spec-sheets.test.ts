import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { randomUUID } from 'node:crypto';
import { startTestServer, testDb } from '../support/server';
import { ApiClient } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { demoClients } from '../support/bench';
import { specSheets } from '../../server/db/schema/index';
import type { SpecSheet, SpecSheetInput, SpecSheetSummary } from '../../shared/specs';
import type { Unit } from '../../shared/customers';
import type { RunningServer } from '../../server/main';
import type { Role } from '../../shared/roles';

let server: RunningServer;
let c: Record<Role, ApiClient> & { techId: number };
let other: Awaited<ReturnType<typeof makeShop>>;
let otherSheetId: number;
let otherOwner: ApiClient;

beforeAll(async () => {
  server = await startTestServer();
  c = await demoClients(server.url);
  const { db, close } = testDb();
  other = await makeShop(db, 'Specs');
  otherSheetId = (await db.insert(specSheets).values({ shopId: other.shopId, maker: 'Brindlecote', model: 'Theirs' }).returning())[0]!.id;
  await close();
  otherOwner = new ApiClient(server.url);
  await otherOwner.login(other.emails.owner, TEST_PASSWORD);
});
afterAll(() => server.close());

function sheet(overrides: Partial<SpecSheetInput> = {}): SpecSheetInput {
  return {
    maker: 'Lanthorn',
    model: `LX-${randomUUID().slice(0, 8)}`,
    notes: '',
    inputs: [],
    figures: [
      { metric: 'power_8ohm_w', value: 45, condition: 'both channels driven', source: 'service manual p. 3' },
      { metric: 'thd_pct', value: 0.1, condition: '1 kHz', source: 'service manual p. 3' },
    ],
    ...overrides,
  };
}

describe('spec sheets', () => {
  it('the bench creates, reads, replaces and deletes a sheet', async () => {
    const input = sheet();
    const made = await c.technician.post<SpecSheet>('/api/spec-sheets', input);
    expect(made.status).toBe(201);
    expect(made.body.figures.map((f) => [f.metric, f.value, f.source])).toEqual([
      ['power_8ohm_w', 45, 'service manual p. 3'],
      ['thd_pct', 0.1, 'service manual p. 3'],
    ]);
    const read = await c.front_desk.get<SpecSheet>(`/api/spec-sheets/${made.body.id}`);
    expect(read.status).toBe(200);
    expect(read.body).toEqual(made.body);

    const replaced = await c.owner.put<SpecSheet>(`/api/spec-sheets/${made.body.id}`, {
      ...input,
      notes: 'Checked against the second print',
      figures: [{ metric: 'snr_line_db', value: 95, condition: 'A-weighted', source: "owner's manual" }],
    });
    expect(replaced.status).toBe(200);
    expect(replaced.body.notes).toBe('Checked against the second print');
    expect(replaced.body.figures.map((f) => f.metric)).toEqual(['snr_line_db']);

    const listed = await c.technician.get<SpecSheetSummary[]>(`/api/spec-sheets?q=${input.model}`);
    expect(listed.status).toBe(200);
    expect(listed.body).toMatchObject([{ id: made.body.id, figureCount: 1 }]);
    // The demo sheet has several figures: the list's count must match the sheet itself.
    const all = await c.technician.get<SpecSheetSummary[]>('/api/spec-sheets');
    const demo = all.body.find((x) => x.model === 'Solace 70')!;
    const demoSheet = await c.technician.get<SpecSheet>(`/api/spec-sheets/${demo.id}`);
    expect(demoSheet.body.figures.length).toBeGreaterThan(1);
    expect(demo.figureCount).toBe(demoSheet.body.figures.length);

    expect((await c.technician.del(`/api/spec-sheets/${made.body.id}`)).status).toBe(204);
    expect((await c.technician.get(`/api/spec-sheets/${made.body.id}`)).status).toBe(404);
  });

  it('one sheet per maker and model, whatever the case and spacing (409), and a refused PUT keeps the old figures', async () => {
    const a = await c.technician.post<SpecSheet>('/api/spec-sheets', sheet());
    expect(a.status).toBe(201);
    const clash = await c.owner.post<{ error: string }>('/api/spec-sheets', sheet({ maker: 'LANTHORN', model: a.body.model.toLowerCase() }));
    expect(clash.status).toBe(409);
    expect(clash.body.error).toMatch(/already a spec sheet/);

    const b = await c.technician.post<SpecSheet>('/api/spec-sheets', sheet());
    const rename = await c.technician.put(`/api/spec-sheets/${b.body.id}`, sheet({ model: `  ${a.body.model.toUpperCase()} `, figures: [] }));
    expect(rename.status).toBe(409);
    const kept = await c.technician.get<SpecSheet>(`/api/spec-sheets/${b.body.id}`);
    expect(kept.body.figures.length).toBe(2);
  });

  it('bad input is 400: unknown metric, a metric twice, no source, a figure of zero', async () => {
    const base = sheet();
    const bad: unknown[] = [
      { ...base, figures: [{ metric: 'warmth', value: 1, source: 'x' }] },
      { ...base, figures: [base.figures[0], base.figures[0]] },
      { ...base, figures: [{ metric: 'thd_pct', value: 0.1, source: '' }] },
      { ...base, figures: [{ metric: 'thd_pct', value: 0, source: 'x' }] },
      { ...base, maker: '' },
    ];
    for (const body of bad) expect((await c.technician.post('/api/spec-sheets', body)).status, JSON.stringify(body)).toBe(400);
  });

  it('all staff read, the desk and customers do not write, a customer does not read', async () => {
    const made = await c.owner.post<SpecSheet>('/api/spec-sheets', sheet());
    expect(made.status).toBe(201);
    expect((await c.front_desk.get('/api/spec-sheets')).status).toBe(200);
    expect((await c.front_desk.post('/api/spec-sheets', sheet())).status).toBe(403);
    expect((await c.front_desk.put(`/api/spec-sheets/${made.body.id}`, sheet())).status).toBe(403);
    expect((await c.front_desk.del(`/api/spec-sheets/${made.body.id}`)).status).toBe(403);
    expect((await c.customer.get('/api/spec-sheets')).status).toBe(403);
    expect((await c.customer.get(`/api/spec-sheets/${made.body.id}`)).status).toBe(403);
  });

  it("another shop's sheet is 404 and stays", async () => {
    expect((await c.owner.get(`/api/spec-sheets/${otherSheetId}`)).status).toBe(404);
    expect((await c.owner.put(`/api/spec-sheets/${otherSheetId}`, sheet())).status).toBe(404);
    expect((await c.technician.del(`/api/spec-sheets/${otherSheetId}`)).status).toBe(404);
    const list = await c.owner.get<SpecSheetSummary[]>('/api/spec-sheets?q=Brindlecote');
    expect(list.body.map((s) => s.id)).not.toContain(otherSheetId);
    expect((await otherOwner.get(`/api/spec-sheets/${otherSheetId}`)).status).toBe(200);
  });
});

describe("a unit's sheet", () => {
  it('matches maker and model without regard to case or spacing', async () => {
    const tag = randomUUID().slice(0, 8);
    const made = await c.technician.post<SpecSheet>('/api/spec-sheets', sheet({ model: `Deep Gap ${tag}` }));
    expect(made.status).toBe(201);
    const cust = await c.front_desk.post<{ id: number }>('/api/customers', { name: 'Sheet Seeker' });
    const unit = await c.front_desk.post<Unit>('/api/units', {
      customerId: cust.body.id,
      kind: 'integrated_amplifier',
      maker: 'lanthorn',
      model: `DEEP  gap ${tag.toUpperCase()}`,
    });
    const res = await c.front_desk.get<SpecSheet>(`/api/units/${unit.body.id}/spec-sheet`);
    expect(res.status).toBe(200);
    expect(res.body.id).toBe(made.body.id);
  });

  it('no sheet for the model is 404; another shop’s unit is 404', async () => {
    const cust = await c.front_desk.post<{ id: number }>('/api/customers', { name: 'No Sheet' });
    const unit = await c.front_desk.post<Unit>('/api/units', { customerId: cust.body.id, kind: 'other', maker: 'Nobody', model: randomUUID() });
    const none = await c.technician.get<{ error: string }>(`/api/units/${unit.body.id}/spec-sheet`);
    expect(none.status).toBe(404);
    expect(none.body.error).toMatch(/Spec sheet for Nobody/);
    expect((await c.technician.get(`/api/units/${other.unitId}/spec-sheet`)).status).toBe(404);
  });

  it('the demo amplifier has its (invented) published figures', async () => {
    const units = await c.owner.get<Unit[]>('/api/units?q=Solace');
    const solace = units.body.find((u) => u.maker === 'Vellmark' && u.model === 'Solace 70')!;
    const res = await c.owner.get<SpecSheet>(`/api/units/${solace.id}/spec-sheet`);
    expect(res.status).toBe(200);
    expect(Object.fromEntries(res.body.figures.map((f) => [f.metric, f.value]))).toEqual({
      power_8ohm_w: 70,
      snr_line_db: 98,
      separation_1k_db: 60,
      input_crosstalk_1k_db: 65,
      thd_pct: 0.05,
      response_low_hz: 10,
      response_high_hz: 50_000,
      response_tolerance_db: 1,
    });
    expect(new Set(res.body.figures.map((f) => f.source))).toEqual(new Set(["owner's manual (invented demo figures)"]));
    expect(res.body.inputs).toEqual(['Phono', 'Disc', 'Tuner', 'Aux', 'Recorder']);
  });
});
