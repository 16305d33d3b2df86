/**
 * Shop search: full-text over jobs, notes, units and customers (PostgreSQL text search, English
 * stemming), prefix matches on serials and job references, ranked, and scoped to the shop and,
 * for a customer, to their own jobs and units.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, testDb } from '../support/server';
import { signedIn, type ApiClient } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { customers, jobEvents, jobs, units } from '../../server/db/schema/index';
import type { SearchHit } from '../../shared/search';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let shop: Awaited<ReturnType<typeof makeShop>>;
let other: Awaited<ReturnType<typeof makeShop>>;
const as = {} as Record<'owner' | 'technician' | 'front_desk' | 'customer', ApiClient>;
const ids = {} as Record<'strong' | 'weak' | 'selector' | 'theirs' | 'othersJob' | 'serialUnit' | 'secondCustomer', number>;
const { db, close } = testDb();

async function unitAndJob(shopId: number, customerId: number, serial: string, job: Partial<typeof jobs.$inferInsert>) {
  const [unit] = await db.insert(units).values({ shopId, customerId, kind: 'receiver', maker: 'Pellworth', model: 'RX 40', serial }).returning({ id: units.id });
  const [row] = await db.insert(jobs).values({ shopId, unitId: unit!.id, customerId, reportedFault: 'See notes', ...job }).returning({ id: jobs.id });
  return { unitId: unit!.id, jobId: row!.id };
}

beforeAll(async () => {
  server = await startTestServer();
  shop = await makeShop(db, 'Search');
  other = await makeShop(db, 'SearchOther');
  for (const role of ['owner', 'technician', 'front_desk', 'customer'] as const) as[role] = await signedIn(server.url, shop.emails[role], TEST_PASSWORD);
  const [second] = await db.insert(customers).values({ shopId: shop.shopId, name: 'Wenna Strathcarrow', email: 'wenna@example.test' }).returning({ id: customers.id });
  ids.secondCustomer = second!.id;
  const mine = shop.customerId;
  ids.strong = (await unitAndJob(shop.shopId, mine, 'PW-1001', { reportedFault: 'Loud hum from both channels; hum rises when warm', faultFound: 'Hum loop at the ground lift' })).jobId;
  ids.weak = (await unitAndJob(shop.shopId, mine, 'PW-1002', { reportedFault: 'Dead tuner', conditionNotes: 'Owner mentions a slight hum' })).jobId;
  ids.selector = (await unitAndJob(shop.shopId, mine, 'PW-1003', { reportedFault: 'Sources bleed into each other', faultFound: 'Selector switching IC leaking' })).jobId;
  const serial = await unitAndJob(shop.shopId, second!.id, 'ZQ77-0042', { reportedFault: 'Hum on the phono input' });
  ids.theirs = serial.jobId;
  ids.serialUnit = serial.unitId;
  await db.insert(jobEvents).values({ shopId: shop.shopId, jobId: ids.theirs, kind: 'note', note: 'Customer asks for a callback before ordering the transformer' });
  ids.othersJob = (await unitAndJob(other.shopId, other.customerId, 'ZQ77-0043', { reportedFault: 'Hum and a transformer buzz' })).jobId;
});
afterAll(async () => {
  await server?.close();
  await close();
});

const search = async (who: ApiClient, q: string) => {
  const res = await who.get<SearchHit[]>(`/api/search?q=${encodeURIComponent(q)}`);
  expect(res.status).toBe(200);
  return res.body;
};
const jobIds = (hits: SearchHit[]) => hits.filter((h) => h.kind === 'job').map((h) => h.id);

describe('search ranking and matching', () => {
  it('ranks a job whose fault is the word above one that mentions it in passing', async () => {
    const hits = jobIds(await search(as.technician, 'hum'));
    expect(hits).toContain(ids.weak);
    expect(hits.indexOf(ids.strong)).toBeLessThan(hits.indexOf(ids.weak));
    expect(hits.indexOf(ids.strong)).toBe(0);
  });

  it('matches word stems and prefixes ("switch" finds "switching", "selec" finds "selector")', async () => {
    expect(jobIds(await search(as.technician, 'switch'))).toEqual([ids.selector]);
    expect(jobIds(await search(as.technician, 'selec leak'))).toEqual([ids.selector]);
  });

  it('finds a unit by the start of its serial, whatever the punctuation', async () => {
    const hits = await search(as.front_desk, 'zq 77');
    const unit = hits.find((h) => h.kind === 'unit');
    expect(unit).toMatchObject({ id: ids.serialUnit, jobId: ids.theirs });
    expect(hits.filter((h) => h.kind === 'unit').map((h) => h.id)).toEqual([ids.serialUnit]);
  });

  it('puts the job named by its reference first', async () => {
    const ref = `J-${String(ids.selector).padStart(4, '0')}`;
    const hits = await search(as.owner, ref);
    expect(hits[0]).toMatchObject({ kind: 'job', id: ids.selector });
  });

  it('finds customers and notes for staff', async () => {
    expect((await search(as.front_desk, 'strathcarrow')).find((h) => h.kind === 'customer')?.id).toBe(ids.secondCustomer);
    expect((await search(as.technician, 'transformer')).filter((h) => h.kind === 'note').map((h) => h.jobId)).toEqual([ids.theirs]);
  });

  it('rejects an empty query; punctuation or stop words alone find nothing rather than fail', async () => {
    expect((await as.owner.get('/api/search?q=')).status).toBe(400);
    expect(await search(as.owner, '&!:*(')).toEqual([]);
    expect(await search(as.owner, 'the')).toEqual([]);
  });
});

describe('search scoping', () => {
  it("never returns another shop's rows", async () => {
    const hits = await search(as.owner, 'transformer');
    expect(hits.some((h) => h.kind === 'job' && h.id === ids.othersJob)).toBe(false);
    expect(jobIds(await search(as.owner, 'buzz'))).toEqual([]);
  });

  it("a customer finds only their own jobs and units, and no customers or notes", async () => {
    const hum = await search(as.customer, 'hum');
    expect(jobIds(hum).sort()).toEqual([ids.strong, ids.weak].sort());
    expect(jobIds(hum)).not.toContain(ids.theirs);
    expect((await search(as.customer, 'zq77')).length).toBe(0);
    expect((await search(as.customer, 'transformer')).length).toBe(0);
    expect((await search(as.customer, 'strathcarrow')).length).toBe(0);
    const ref = `J-${String(ids.theirs).padStart(4, '0')}`;
    expect(jobIds(await search(as.customer, ref))).toEqual([]);
  });
});
