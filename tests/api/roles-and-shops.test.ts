import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let other: Awaited<ReturnType<typeof makeShop>>;
beforeAll(async () => {
  server = await startTestServer();
  const { db, close } = testDb();
  other = await makeShop(db);
  await close();
});
afterAll(() => server.close());

describe('roles on the customer routes', () => {
  it('anonymous gets 401', async () => {
    expect((await new ApiClient(server.url).get('/api/customers')).status).toBe(401);
  });
  it.each([
    ['owner@quietpath.test', 200, 201],
    ['desk@quietpath.test', 200, 201],
    ['tech@quietpath.test', 200, 403],
    ['customer@quietpath.test', 403, 403],
  ])('%s: list %i, create %i', async (email, listStatus, createStatus) => {
    const c = await signedIn(server.url, email);
    expect((await c.get('/api/customers')).status).toBe(listStatus);
    expect((await c.post('/api/customers', { name: `Made by ${email}` })).status).toBe(createStatus);
  });
});

describe('shop scoping', () => {
  it("another shop's customer is a 404, not a leak", async () => {
    const c = await signedIn(server.url, 'owner@quietpath.test');
    const res = await c.get(`/api/customers/${other.customerId}`);
    expect(res.status).toBe(404);
    const list = await c.get<{ id: number }[]>('/api/customers');
    expect(list.body.map((x) => x.id)).not.toContain(other.customerId);
  });

  it("another shop cannot edit our customer, and its owner sees only its own", async () => {
    const ours = await signedIn(server.url, 'desk@quietpath.test');
    const created = await ours.post<{ id: number }>('/api/customers', { name: 'Scoped Customer' });
    expect(created.status).toBe(201);
    const theirs = new ApiClient(server.url);
    expect((await theirs.login(other.emails.owner, TEST_PASSWORD)).status).toBe(200);
    const edit = await theirs.put(`/api/customers/${created.body.id}`, { name: 'Hijacked' });
    expect(edit.status).toBe(404);
    const list = await theirs.get<{ id: number }[]>('/api/customers');
    expect(list.body.map((x) => x.id)).toEqual([other.customerId]);
  });

  it("jobs: each shop lists only its own, a customer only theirs", async () => {
    const owner = await signedIn(server.url, 'owner@quietpath.test');
    const all = await owner.get<{ id: number; customerName: string }[]>('/api/jobs');
    expect(all.status).toBe(200);
    expect(all.body.map((j) => j.id)).not.toContain(other.jobId);
    const customer = await signedIn(server.url, 'customer@quietpath.test');
    const mine = await customer.get<{ customerName: string }[]>('/api/jobs');
    expect(mine.body.length).toBeGreaterThan(0);
    expect(mine.body.length).toBeLessThan(all.body.length);
    expect(new Set(mine.body.map((j) => j.customerName))).toEqual(new Set(['Casimir Fennow']));
  });
});

describe('errors', () => {
  it('validation problems are 400 with details', async () => {
    const c = await signedIn(server.url, 'desk@quietpath.test');
    const res = await c.post<{ error: string; details: { path: string }[] }>('/api/units', { customerId: 'x', kind: 'toaster' });
    expect(res.status).toBe(400);
    expect(res.body.details.map((d) => d.path)).toEqual(expect.arrayContaining(['customerId', 'kind', 'maker', 'model']));
  });
  it('a non-numeric id is a 404', async () => {
    const c = await signedIn(server.url, 'desk@quietpath.test');
    expect((await c.get('/api/customers/abc')).status).toBe(404);
  });
});
