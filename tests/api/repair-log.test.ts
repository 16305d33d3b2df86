import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { ApiClient } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { bookJob, demoClients } from '../support/bench';
import { biasReadings, partsUsed, railChecks } from '../../server/db/schema/index';
import type { Bias, Part, Rail } from '../../shared/repair-log';
import type { JobDetail } from '../../shared/jobs';
import type { RunningServer } from '../../server/main';
import type { Role } from '../../shared/roles';

let server: RunningServer;
let c: Record<Role, ApiClient> & { techId: number };
let other: Awaited<ReturnType<typeof makeShop>>;
const theirs = { part: 0, rail: 0, bias: 0 };
let otherTech: ApiClient;

beforeAll(async () => {
  server = await startTestServer();
  c = await demoClients(server.url);
  const { db, close } = testDb();
  other = await makeShop(db, 'RepairLog');
  const base = { shopId: other.shopId, jobId: other.jobId };
  theirs.part = (await db.insert(partsUsed).values({ ...base, reference: 'Q1' }).returning())[0]!.id;
  theirs.rail = (await db.insert(railChecks).values({ ...base, rail: '+B', nominalV: 40, measuredV: 40, tolerancePct: 5 }).returning())[0]!.id;
  theirs.bias = (await db.insert(biasReadings).values({ ...base, channel: 'L', testPoint: 'TP1', targetMv: 10, toleranceMv: 1 }).returning())[0]!.id;
  await close();
  otherTech = new ApiClient(server.url);
  await otherTech.login(other.emails.technician, TEST_PASSWORD);
});
afterAll(() => server.close());

const part = { reference: 'IC301', partNumber: 'QS-7318X', description: 'Selector IC', quantity: 2, unitCostMinor: 480 };
const rail = { rail: '+B main', nominalV: 35, measuredV: 36.75, tolerancePct: 5 };
const bias = { channel: 'Left', testPoint: 'TP501', targetMv: 10, toleranceMv: 2, coldMv: 6.5, warmUpMinutes: 30, warmMv: 12.5, finalMv: 10.4 };

describe('parts used', () => {
  it('the bench adds, edits and removes; line totals are quantity × unit cost', async () => {
    const job = await bookJob(c.front_desk);
    const added = await c.technician.post<Part>(`/api/jobs/${job.id}/parts`, part);
    expect(added.status).toBe(201);
    expect(added.body).toMatchObject({ ...part, jobId: job.id, lineTotalMinor: 960 });
    const edited = await c.owner.patch<Part>(`/api/parts/${added.body.id}`, { quantity: 3 });
    expect(edited.status).toBe(200);
    // A partial edit leaves the other fields alone.
    expect(edited.body).toMatchObject({ partNumber: 'QS-7318X', description: 'Selector IC', quantity: 3, lineTotalMinor: 1440 });
    const listed = await c.front_desk.get<Part[]>(`/api/jobs/${job.id}/parts`);
    expect(listed.status).toBe(200);
    expect(listed.body.map((p) => p.id)).toEqual([added.body.id]);
    expect((await c.technician.del(`/api/parts/${added.body.id}`)).status).toBe(204);
    expect((await c.technician.get<Part[]>(`/api/jobs/${job.id}/parts`)).body).toEqual([]);
  });

  it('bad input is 400', async () => {
    const job = await bookJob(c.front_desk);
    for (const bad of [{ ...part, reference: '' }, { ...part, quantity: 0 }, { ...part, unitCostMinor: 4.8 }, { ...part, unitCostMinor: -1 }, { ...part, extra: 1 }]) {
      expect((await c.technician.post(`/api/jobs/${job.id}/parts`, bad)).status, JSON.stringify(bad)).toBe(400);
    }
  });
});

describe('rail checks', () => {
  it.each([
    // nominal, measured, tol %, deviation %, within — deviation = (measured − nominal) / |nominal| · 100
    [35, 36.75, 5, 5, true],
    [35, 36.8, 5, 5.142857, false],
    [-38, -37.2, 5, 2.105263, true],
    [-38, -40, 5, -5.263158, false],
    [15, 15, 1, 0, true],
  ])('%s V nominal, %s V measured, ±%s %% → %s %%, within %s', async (nominalV, measuredV, tolerancePct, deviationPct, within) => {
    const job = await bookJob(c.front_desk);
    const res = await c.technician.post<Rail>(`/api/jobs/${job.id}/rails`, { rail: 'R', nominalV, measuredV, tolerancePct });
    expect(res.status).toBe(201);
    expect(res.body.within).toBe(within);
    expect(res.body.deviationPct).toBeCloseTo(deviationPct, 5);
  });

  it('an edit recomputes the verdict', async () => {
    const job = await bookJob(c.front_desk);
    const added = await c.technician.post<Rail>(`/api/jobs/${job.id}/rails`, { ...rail, measuredV: 38 });
    expect(added.status).toBe(201);
    expect(added.body.within).toBe(false);
    const edited = await c.technician.patch<Rail>(`/api/rails/${added.body.id}`, { tolerancePct: 10 });
    expect(edited.status).toBe(200);
    expect(edited.body).toMatchObject({ rail: '+B main', measuredV: 38, tolerancePct: 10, within: true });
  });

  it('bad input is 400: zero nominal, no tolerance, text for volts', async () => {
    const job = await bookJob(c.front_desk);
    for (const bad of [{ ...rail, nominalV: 0 }, { ...rail, tolerancePct: 0 }, { ...rail, measuredV: '36' }, { ...rail, rail: '' }]) {
      expect((await c.technician.post(`/api/jobs/${job.id}/rails`, bad)).status, JSON.stringify(bad)).toBe(400);
    }
  });
});

describe('bias log', () => {
  it('each reading is judged against target ± tolerance; missing readings are null', async () => {
    const job = await bookJob(c.front_desk);
    const res = await c.technician.post<Bias>(`/api/jobs/${job.id}/bias`, bias);
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ coldWithin: false, warmWithin: false, finalWithin: true });
    const partial = await c.technician.post<Bias>(`/api/jobs/${job.id}/bias`, { channel: 'Right', testPoint: 'TP601', targetMv: 10, toleranceMv: 2, coldMv: 8 });
    expect(partial.status).toBe(201);
    expect(partial.body).toMatchObject({ coldWithin: true, warmWithin: null, finalWithin: null, warmUpMinutes: null });
    const finished = await c.technician.patch<Bias>(`/api/bias/${partial.body.id}`, { warmUpMinutes: 45, warmMv: 12.1, finalMv: 9.9 });
    expect(finished.status).toBe(200);
    expect(finished.body).toMatchObject({ coldMv: 8, warmWithin: false, finalWithin: true });
    const listed = await c.front_desk.get<Bias[]>(`/api/jobs/${job.id}/bias`);
    expect(listed.status).toBe(200);
    expect(listed.body.map((b) => b.channel)).toEqual(['Left', 'Right']);
  });

  it('bad input is 400', async () => {
    const job = await bookJob(c.front_desk);
    for (const bad of [{ ...bias, targetMv: 0 }, { ...bias, toleranceMv: -1 }, { ...bias, warmUpMinutes: 2.5 }, { ...bias, channel: '' }]) {
      expect((await c.technician.post(`/api/jobs/${job.id}/bias`, bad)).status, JSON.stringify(bad)).toBe(400);
    }
  });
});

describe('the job trail', () => {
  it('each repair-log change is written to the trail, by whom; the customer does not see it', async () => {
    const me = async (client: ApiClient) => (await client.get<{ user: { name: string; customerId: number | null } }>('/api/auth/me')).body.user;
    const [tech, owner, customer] = [await me(c.technician), await me(c.owner), await me(c.customer)];
    const job = await bookJob(c.front_desk, { customerId: customer.customerId! });
    const p = await c.technician.post<Part>(`/api/jobs/${job.id}/parts`, part);
    expect((await c.technician.patch(`/api/parts/${p.body.id}`, { quantity: 1 })).status).toBe(200);
    const r = await c.technician.post<Rail>(`/api/jobs/${job.id}/rails`, rail);
    const b = await c.owner.post<Bias>(`/api/jobs/${job.id}/bias`, bias);
    expect((await c.technician.del(`/api/rails/${r.body.id}`)).status).toBe(204);
    const detail = await c.technician.get<JobDetail>(`/api/jobs/${job.id}`);
    const lines = detail.body.events.filter((e) => e.kind === 'repair_log').map((e) => [e.userName, e.note]);
    expect(lines).toEqual([
      [tech.name, 'Part added — IC301: Selector IC (QS-7318X) × 2'],
      [tech.name, 'Part changed — IC301: Selector IC (QS-7318X) × 1'],
      // 36.75 V against 35 V is +5.0 %: on the edge of ±5 %, within.
      [tech.name, 'Rail check added — +B main measured 36.75 V against 35 V ± 5 % — within'],
      [owner.name, 'Bias reading added — channel Left at TP501: final 10.4 mV against 10 ± 2 mV — within'],
      [tech.name, 'Rail check removed — +B main measured 36.75 V against 35 V ± 5 % — within'],
    ]);
    expect(b.status).toBe(201);
    // A failed change writes nothing to the trail either.
    expect((await c.technician.patch(`/api/parts/${p.body.id}`, { quantity: -1 })).status).toBe(400);
    expect((await c.technician.get<JobDetail>(`/api/jobs/${job.id}`)).body.events.filter((e) => e.kind === 'repair_log')).toHaveLength(5);
    const seen = await c.customer.get<JobDetail>(`/api/jobs/${job.id}`);
    expect(seen.status).toBe(200);
    expect(seen.body.events.map((e) => e.kind)).not.toContain('repair_log');
  });
});

describe('who may', () => {
  const bodies = { parts: part, rails: rail, bias } as const;

  it.each(['parts', 'rails', 'bias'] as const)('%s: the desk reads only, a customer nothing', async (kind) => {
    const job = await bookJob(c.front_desk);
    const made = await c.technician.post<{ id: number }>(`/api/jobs/${job.id}/${kind}`, bodies[kind]);
    expect(made.status).toBe(201);
    expect((await c.front_desk.get(`/api/jobs/${job.id}/${kind}`)).status).toBe(200);
    expect((await c.front_desk.post(`/api/jobs/${job.id}/${kind}`, bodies[kind])).status).toBe(403);
    expect((await c.front_desk.patch(`/api/${kind}/${made.body.id}`, { note: 'x' })).status).toBe(403);
    expect((await c.front_desk.del(`/api/${kind}/${made.body.id}`)).status).toBe(403);
    expect((await c.customer.get(`/api/jobs/${job.id}/${kind}`)).status).toBe(403);
  });

  it.each(['parts', 'rails', 'bias'] as const)("%s: another shop's rows are 404 and stay", async (kind) => {
    const id = { parts: theirs.part, rails: theirs.rail, bias: theirs.bias }[kind];
    expect((await c.owner.get(`/api/jobs/${other.jobId}/${kind}`)).status).toBe(404);
    expect((await c.technician.post(`/api/jobs/${other.jobId}/${kind}`, bodies[kind])).status).toBe(404);
    const patchBody = kind === 'parts' ? { quantity: 9 } : { note: 'taken over' };
    expect((await c.technician.patch(`/api/${kind}/${id}`, patchBody)).status).toBe(404);
    expect((await c.owner.del(`/api/${kind}/${id}`)).status).toBe(404);
    const still = await otherTech.get<{ id: number }[]>(`/api/jobs/${other.jobId}/${kind}`);
    expect(still.status).toBe(200);
    expect(still.body.map((r) => r.id)).toEqual([id]);
  });

  it('rows are stamped with who wrote them', async () => {
    const job = await bookJob(c.front_desk);
    const made = await c.technician.post<Part>(`/api/jobs/${job.id}/parts`, part);
    const { db, close } = testDb();
    const [row] = await db.select().from(partsUsed).where(eq(partsUsed.id, made.body.id));
    await close();
    expect(row?.createdBy).toBe(c.techId);
  });
});
