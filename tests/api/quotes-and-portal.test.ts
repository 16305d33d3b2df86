import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { asc, eq } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { demoShop, makeBillableJob, makeOtherCustomer } from '../support/billing';
import { jobEvents, jobs } from '../../server/db/schema/index';
import type { Db } from '../../server/db/client';
import type { Invoice, OutboxMessage, PortalJob, PortalJobSummary, PortalUnit, Quote } from '../../shared/billing';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let db: Db;
let closeDb: () => Promise<void>;
let demo: { shopId: number; customerId: number };
let desk: ApiClient;
let customer: ApiClient;

beforeAll(async () => {
  server = await startTestServer();
  ({ db, close: closeDb } = testDb());
  demo = await demoShop(db);
  desk = await signedIn(server.url, 'desk@quietpath.test');
  customer = await signedIn(server.url, 'customer@quietpath.test');
});
afterAll(async () => {
  await server.close();
  await closeDb();
});

const statusOf = async (jobId: number) => (await db.select({ s: jobs.status }).from(jobs).where(eq(jobs.id, jobId)))[0]!.s;
const trail = (jobId: number) =>
  db.select({ kind: jobEvents.kind, from: jobEvents.fromStatus, to: jobEvents.toStatus }).from(jobEvents).where(eq(jobEvents.jobId, jobId)).orderBy(asc(jobEvents.id));

describe('estimates', () => {
  it('sending one moves the job to awaiting approval, records it, and e-mails the customer', async () => {
    const { jobId } = await makeBillableJob(db, demo);
    const res = await desk.post<Quote>('/api/quotes', { jobId, amountMinor: 14500, text: 'Replace the input selector IC and clean the controls.' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ status: 'pending', amountMinor: 14500, nextStatus: 'repair' });
    expect(await statusOf(jobId)).toBe('awaiting_approval');
    expect(await trail(jobId)).toEqual(
      expect.arrayContaining([{ kind: 'status', from: 'diagnosis', to: 'awaiting_approval' }, { kind: 'quote_sent', from: null, to: null }]),
    );
    const mail = await desk.get<OutboxMessage[]>(`/api/outbox?jobId=${jobId}`);
    expect(mail.status).toBe(200);
    expect(mail.body).toHaveLength(1);
    expect(mail.body[0]).toMatchObject({ kind: 'quote_ready', status: 'sent', inLocalMailbox: true, to: 'Casimir Fennow <customer@quietpath.test>' });
    expect(mail.body[0]!.text).toContain('€145.00');
    expect(mail.body[0]!.text).toContain(`/my/repairs/${jobId}`);
  });

  it('a second open estimate on the same job is refused (409)', async () => {
    const { jobId } = await makeBillableJob(db, demo);
    expect((await desk.post('/api/quotes', { jobId, amountMinor: 100, text: 'First' })).status).toBe(201);
    expect((await desk.post('/api/quotes', { jobId, amountMinor: 200, text: 'Second' })).status).toBe(409);
  });

  it('approval moves the job on (to waiting for parts when the desk said so) in the same step', async () => {
    const { jobId } = await makeBillableJob(db, demo);
    const q = (await desk.post<Quote>('/api/quotes', { jobId, amountMinor: 9000, text: 'New output relay', nextStatus: 'awaiting_parts' })).body;
    const res = await customer.post<Quote>(`/api/my/quotes/${q.id}/approve`);
    expect(res.status).toBe(200);
    expect(res.body.status).toBe('approved');
    expect(await statusOf(jobId)).toBe('awaiting_parts');
    const kinds = (await trail(jobId)).map((e) => `${e.kind}:${e.to ?? ''}`);
    expect(kinds.slice(-2)).toEqual(['quote_approved:', 'status:awaiting_parts']);
    expect((await customer.post(`/api/my/quotes/${q.id}/approve`)).status).toBe(409);
    expect((await customer.post(`/api/my/quotes/${q.id}/decline`, {})).status).toBe(409);
  });

  it('declining is recorded with the reason and leaves the job waiting for the desk', async () => {
    const { jobId } = await makeBillableJob(db, demo);
    const q = (await desk.post<Quote>('/api/quotes', { jobId, amountMinor: 30000, text: 'Rebuild the power supply' })).body;
    const res = await customer.post<Quote>(`/api/my/quotes/${q.id}/decline`, { reason: 'Too dear for this unit' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ status: 'declined', declineReason: 'Too dear for this unit' });
    expect(await statusOf(jobId)).toBe('awaiting_approval');
    expect((await trail(jobId)).at(-1)!.kind).toBe('quote_declined');
  });

  it('the desk can withdraw an open estimate and send another', async () => {
    const { jobId } = await makeBillableJob(db, demo);
    const q = (await desk.post<Quote>('/api/quotes', { jobId, amountMinor: 5000, text: 'First try' })).body;
    expect((await desk.post<Quote>(`/api/quotes/${q.id}/withdraw`)).body.status).toBe('withdrawn');
    expect((await customer.post(`/api/my/quotes/${q.id}/approve`)).status).toBe(409);
    expect((await desk.post('/api/quotes', { jobId, amountMinor: 4500, text: 'Corrected' })).status).toBe(201);
  });

  it('roles: technicians and customers cannot send, staff cannot approve for the customer', async () => {
    const { jobId } = await makeBillableJob(db, demo);
    const tech = await signedIn(server.url, 'tech@quietpath.test');
    expect((await tech.post('/api/quotes', { jobId, amountMinor: 1, text: 'x' })).status).toBe(403);
    expect((await customer.post('/api/quotes', { jobId, amountMinor: 1, text: 'x' })).status).toBe(403);
    const q = (await desk.post<Quote>('/api/quotes', { jobId, amountMinor: 1000, text: 'Estimate' })).body;
    expect((await desk.post(`/api/my/quotes/${q.id}/approve`)).status).toBe(403);
    expect((await tech.post(`/api/my/quotes/${q.id}/approve`)).status).toBe(403);
  });

  it('a job that has moved past approval cannot be sent an estimate that would move it back', async () => {
    const { jobId } = await makeBillableJob(db, demo);
    await db.update(jobs).set({ status: 'soak_test' }).where(eq(jobs.id, jobId));
    const res = await desk.post<{ error: string }>('/api/quotes', { jobId, amountMinor: 100, text: 'Late' });
    expect(res.status).toBe(409);
    expect(await statusOf(jobId)).toBe('soak_test');
  });
});

describe("the customer's own view", () => {
  it('lists only their jobs and units, with history, estimates and sent invoices', async () => {
    const { jobId } = await makeBillableJob(db, { ...demo, labourHours: 1 });
    await desk.post('/api/quotes', { jobId, amountMinor: 6500, text: 'Estimate' });
    const draft = (await desk.post<Invoice>('/api/invoices', { jobId })).body;
    const list = await customer.get<PortalJobSummary[]>('/api/my/jobs');
    expect(list.status).toBe(200);
    const row = list.body.find((j) => j.id === jobId)!;
    expect(row).toMatchObject({ pendingQuote: true, unpaidInvoices: 0, status: 'awaiting_approval' });
    const detail = await customer.get<PortalJob>(`/api/my/jobs/${jobId}`);
    expect(detail.status).toBe(200);
    expect(detail.body.quotes).toHaveLength(1);
    expect(detail.body.invoices).toEqual([]); // a draft is not shown
    expect(detail.body.events.map((e) => e.kind)).toEqual(expect.arrayContaining(['status', 'quote_sent']));
    // Stage moves are shown without the staff's note.
    expect(detail.body.events.filter((e) => e.kind === 'status').every((e) => e.note === '')).toBe(true);
    await desk.post(`/api/invoices/${draft.id}/send`);
    const after = await customer.get<PortalJob>(`/api/my/jobs/${jobId}`);
    expect(after.body.invoices.map((i) => i.id)).toEqual([draft.id]);
    const units = await customer.get<PortalUnit[]>('/api/my/units');
    expect(units.status).toBe(200);
    expect(units.body.map((u) => u.maker)).toContain('Vellmark');
  });

  it('never shows another customer of the same shop, nor another shop', async () => {
    const neighbour = await makeOtherCustomer(db, demo.shopId);
    const q = (await desk.post<Quote>('/api/quotes', { jobId: neighbour.jobId, amountMinor: 1000, text: 'Theirs' })).body;
    expect((await customer.get(`/api/my/jobs/${neighbour.jobId}`)).status).toBe(404);
    expect((await customer.get(`/api/jobs/${neighbour.jobId}/evidence.pdf`)).status).toBe(404);
    expect((await customer.post(`/api/my/quotes/${q.id}/approve`)).status).toBe(404);
    expect((await customer.post(`/api/my/quotes/${q.id}/decline`, {})).status).toBe(404);
    const mine = await customer.get<PortalJobSummary[]>('/api/my/jobs');
    expect(mine.body.map((j) => j.id)).not.toContain(neighbour.jobId);
    const units = await customer.get<PortalUnit[]>('/api/my/units');
    expect(units.body.map((u) => u.id)).not.toContain(neighbour.unitId);

    const theirs = new ApiClient(server.url);
    expect((await theirs.login(neighbour.email, TEST_PASSWORD)).status).toBe(200);
    const theirList = await theirs.get<PortalJobSummary[]>('/api/my/jobs');
    expect(theirList.body.map((j) => j.id)).toEqual([neighbour.jobId]);
    expect((await theirs.get('/api/my/jobs/1')).status).toBe(404);
    expect((await theirs.get('/api/jobs/1/evidence.pdf')).status).toBe(404);

    const other = await makeShop(db, 'Portal');
    const stranger = new ApiClient(server.url);
    await stranger.login(other.emails.customer, TEST_PASSWORD);
    expect((await stranger.get(`/api/my/jobs/${neighbour.jobId}`)).status).toBe(404);
    expect((await stranger.post(`/api/my/quotes/${q.id}/approve`)).status).toBe(404);
    expect((await stranger.get<PortalJobSummary[]>('/api/my/jobs')).body.map((j) => j.id)).toEqual([other.jobId]);
  });

  it('the evidence report opens for staff and the job’s own customer', async () => {
    for (const c of [desk, customer, await signedIn(server.url, 'tech@quietpath.test')]) {
      const res = await c.raw('GET', '/api/jobs/1/evidence.pdf');
      expect(res.status).toBe(200);
      expect(res.headers.get('content-type')).toBe('application/pdf');
      expect(Buffer.from(await res.arrayBuffer()).subarray(0, 5).toString('latin1')).toBe('%PDF-');
    }
    expect((await new ApiClient(server.url).get('/api/jobs/1/evidence.pdf')).status).toBe(401);
  });

  it('staff have no customer view (403)', async () => {
    expect((await desk.get('/api/my/jobs')).status).toBe(403);
  });
});

describe('ready for collection', () => {
  it('the desk tells the customer once the job is ready, not before', async () => {
    const { jobId } = await makeBillableJob(db, demo);
    expect((await desk.post(`/api/billing/jobs/${jobId}/ready-notice`)).status).toBe(409);
    await db.update(jobs).set({ status: 'ready' }).where(eq(jobs.id, jobId));
    const res = await desk.post<OutboxMessage>(`/api/billing/jobs/${jobId}/ready-notice`);
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ kind: 'ready_for_collection', status: 'sent', inLocalMailbox: true });
    expect(res.body.subject).toContain('ready to collect');
  });
});
