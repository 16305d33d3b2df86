/**
 * Model history: earlier jobs on the same maker and model, matched regardless of case, spacing
 * and punctuation, with what was found, replaced and measured on each, staff only.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { signedIn, type ApiClient } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { biasReadings, jobs, partsUsed, railChecks, units } from '../../server/db/schema/index';
import { modelKey, summariseHistory, type ModelHistory } from '../../shared/model-history';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let shop: Awaited<ReturnType<typeof makeShop>>;
let other: Awaited<ReturnType<typeof makeShop>>;
let owner: ApiClient;
const { db, close } = testDb();

/** Spellings of the same model as they get typed at a counter; all must meet. */
const SAME = [
  ['Harrowgate', 'HX-120'],
  ['HARROWGATE', 'hx 120'],
  ['harrowgate ', 'H.X.120'],
  ['Harrow-gate', 'hx_120'],
  ['  Harrowgate', 'Hx120 '],
] as const;
/** Near misses that are other models (or makers) and must not meet. */
const DIFFERENT = [
  ['Harrowgate', 'HX-1200'],
  ['Harrowgate', 'HX-120 II'],
  ['Harrowgate', 'HX-12'],
  ['Harrowgates', 'HX-120'],
  ['Harrowgate', 'HX-210'],
] as const;

async function addJob(shopId: number, customerId: number, maker: string, model: string, extra: Partial<typeof jobs.$inferInsert> = {}) {
  const [unit] = await db.insert(units).values({ shopId, customerId, kind: 'integrated_amplifier', maker, model }).returning({ id: units.id, key: units.modelKey });
  const [job] = await db.insert(jobs).values({ shopId, unitId: unit!.id, customerId, reportedFault: `fault on ${model}`, ...extra }).returning({ id: jobs.id });
  return { jobId: job!.id, key: unit!.key };
}

beforeAll(async () => {
  server = await startTestServer();
  shop = await makeShop(db, 'History');
  other = await makeShop(db, 'HistoryOther');
  owner = await signedIn(server.url, shop.emails.owner, TEST_PASSWORD);
});
afterAll(async () => {
  await server?.close();
  await close();
});

describe('model matching', () => {
  it('the stored key and the shared function agree on every spelling', async () => {
    for (const [maker, model] of [...SAME, ...DIFFERENT]) {
      const { key } = await addJob(other.shopId, other.customerId, maker, model);
      expect(key).toBe(modelKey(maker, model));
    }
    expect(new Set(SAME.map(([a, b]) => modelKey(a, b))).size).toBe(1);
    expect(DIFFERENT.map(([a, b]) => modelKey(a, b))).not.toContain(modelKey(...SAME[0]));
  });

  it('finds every spelling of the model and none of the near misses', async () => {
    const same: number[] = [];
    for (const [maker, model] of SAME) same.push((await addJob(shop.shopId, shop.customerId, maker, model)).jobId);
    const different: number[] = [];
    for (const [maker, model] of DIFFERENT) different.push((await addJob(shop.shopId, shop.customerId, maker, model)).jobId);
    const res = await owner.get<ModelHistory>('/api/model-history?maker=harrowgate&model=hx120');
    expect(res.status).toBe(200);
    const found = res.body.jobs.map((j) => j.jobId).sort((a, b) => a - b);
    expect(found).toEqual(same.sort((a, b) => a - b));
    // From a job: its own job is left out, the others are listed.
    const fromJob = await owner.get<ModelHistory>(`/api/jobs/${same[0]}/model-history`);
    expect(fromJob.body.jobs.map((j) => j.jobId).sort((a, b) => a - b)).toEqual(same.slice(1).sort((a, b) => a - b));
    expect(fromJob.body.jobs.some((j) => different.includes(j.jobId))).toBe(false);
  });

  it("never shows another shop's jobs on the same model", async () => {
    await addJob(other.shopId, other.customerId, 'Quillon', 'QA-7');
    const res = await owner.get<ModelHistory>('/api/model-history?maker=Quillon&model=qa7');
    expect(res.body.jobs).toEqual([]);
    expect(res.body.summary).toBe('No earlier units of this model in this shop');
  });
});

describe('what the history carries', () => {
  it('fault found, parts with reference designators, rails, bias, and a one-line summary', async () => {
    const a = await addJob(shop.shopId, shop.customerId, 'Marrowby', 'MA 300', { faultFound: 'Selector IC leaking', status: 'collected' });
    const b = await addJob(shop.shopId, shop.customerId, 'marrowby', 'MA-300', { faultFound: 'Selector IC again' });
    const c = await addJob(shop.shopId, shop.customerId, 'MARROWBY', 'ma300', { faultFound: 'Relay contacts' });
    await db.insert(partsUsed).values([
      { shopId: shop.shopId, jobId: a.jobId, reference: 'IC301', description: 'Input Selector Switch IC' },
      // The newest job's spelling is the one the summary uses.
      { shopId: shop.shopId, jobId: b.jobId, reference: 'IC301', description: 'input selector switch IC' },
      { shopId: shop.shopId, jobId: c.jobId, reference: 'RY1', description: 'speaker relay' },
    ]);
    await db.insert(railChecks).values({ shopId: shop.shopId, jobId: a.jobId, rail: '+B', nominalV: 40, measuredV: 39.5, tolerancePct: 5 });
    await db.insert(biasReadings).values({ shopId: shop.shopId, jobId: a.jobId, channel: 'L', testPoint: 'R1-R2', targetMv: 15, toleranceMv: 2, coldMv: 9, finalMv: 15.2 });
    const current = await addJob(shop.shopId, shop.customerId, 'Marrowby', 'M.A. 300');
    const res = await owner.get<ModelHistory>(`/api/jobs/${current.jobId}/model-history`);
    expect(res.status).toBe(200);
    expect(res.body.summary).toBe('3 earlier units: input selector switch IC (IC301) replaced on 2');
    const first = res.body.jobs.find((j) => j.jobId === a.jobId)!;
    expect(first.faultFound).toBe('Selector IC leaking');
    expect(first.parts).toEqual([{ reference: 'IC301', partNumber: '', description: 'Input Selector Switch IC', quantity: 1 }]);
    expect(first.rails).toEqual([{ rail: '+B', nominalV: 40, measuredV: 39.5, tolerancePct: 5 }]);
    expect(first.bias[0]).toMatchObject({ channel: 'L', coldMv: 9, finalMv: 15.2 });
  });

  it('staff only: a customer is refused, another shop gets not found', async () => {
    const customer = await signedIn(server.url, shop.emails.customer, TEST_PASSWORD);
    expect((await customer.get(`/api/jobs/${shop.jobId}/model-history`)).status).toBe(403);
    const theirs = await signedIn(server.url, other.emails.technician, TEST_PASSWORD);
    expect((await theirs.get(`/api/jobs/${shop.jobId}/model-history`)).status).toBe(404);
    const [row] = await db.select({ id: jobs.id }).from(jobs).where(eq(jobs.id, shop.jobId));
    expect(row).toBeDefined();
  });
});

describe('summary line', () => {
  it('counts a part once per job and says so when none were fitted', () => {
    const part = (description: string, reference = '') => ({ reference, partNumber: '', description, quantity: 1 });
    expect(summariseHistory([{ parts: [part('fuse', 'F1'), part('Fuse', 'F2')] }])).toBe('1 earlier unit: fuse (F1, F2) replaced on 1');
    expect(summariseHistory([{ parts: [] }, { parts: [] }])).toBe('2 earlier units: no parts recorded');
  });
});
