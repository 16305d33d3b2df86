import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, sql } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { makeShop, TEST_PASSWORD } from '../support/factories';
import { demoShop, makeBillableJob, makeOtherCustomer, WEBHOOK_SECRET } from '../support/billing';
import { jobEvents, shops } from '../../server/db/schema/index';
import type { Db } from '../../server/db/client';
import type { Invoice, InvoiceSummary } from '../../shared/billing';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let db: Db;
let closeDb: () => Promise<void>;
let demo: { shopId: number; customerId: number };
let desk: ApiClient;
let owner: ApiClient;
let customer: ApiClient;

beforeAll(async () => {
  server = await startTestServer({ STRIPE_WEBHOOK_SECRET: WEBHOOK_SECRET });
  ({ db, close: closeDb } = testDb());
  demo = await demoShop(db);
  desk = await signedIn(server.url, 'desk@quietpath.test');
  owner = await signedIn(server.url, 'owner@quietpath.test');
  customer = await signedIn(server.url, 'customer@quietpath.test');
});
afterAll(async () => {
  await server.close();
  await closeDb();
});

async function shopRates() {
  const [s] = await db.select().from(shops).where(eq(shops.id, demo.shopId));
  return s!;
}

describe('making an invoice from a job', () => {
  it('takes labour at the shop rate and the repair-log parts, and totals on the server', async () => {
    const { jobId } = await makeBillableJob(db, {
      ...demo,
      labourHours: 1.5,
      parts: [
        { reference: 'IC301', quantity: 1, unitCostMinor: 1250 },
        { reference: 'C512', quantity: 2, unitCostMinor: 35 },
      ],
    });
    const shop = await shopRates();
    const res = await desk.post<Invoice>('/api/invoices', { jobId });
    expect(res.status).toBe(201);
    const inv = res.body;
    expect(inv.status).toBe('draft');
    expect(inv.reference).toMatch(new RegExp(`^${shop.invoicePrefix}-\\d{4}$`));
    expect(inv.lines.map((l) => [l.kind, l.quantityMilli, l.unitPriceMinor])).toEqual([
      ['labour', 1500, shop.labourRateMinor],
      ['part', 1000, 1250],
      ['part', 2000, 35],
    ]);
    // Worked by hand: 1.5 h × rate, + 12.50 + 2 × 0.35; tax half-up on the subtotal.
    const subtotal = Math.round(1.5 * shop.labourRateMinor) + 1250 + 70;
    expect(inv.subtotalMinor).toBe(subtotal);
    expect(inv.taxMinor).toBe(Math.floor((subtotal * shop.taxRateBp) / 10000 + 0.5));
    expect(inv.totalMinor).toBe(inv.subtotalMinor + inv.taxMinor);
    expect(inv.taxRateBp).toBe(shop.taxRateBp);
  });

  it('recomputes a draft from edited lines and ignores any totals sent by the client', async () => {
    const { jobId } = await makeBillableJob(db, demo);
    const created = await desk.post<Invoice>('/api/invoices', { jobId });
    const res = await desk.put<Invoice>(`/api/invoices/${created.body.id}`, {
      notes: 'Thank you',
      lines: [
        { kind: 'other', description: 'Diagnosis', quantityMilli: 1000, unitPriceMinor: 4000, amountMinor: 1 },
        { kind: 'other', description: 'Cleaning of controls', quantityMilli: 333, unitPriceMinor: 1000 },
      ],
      totalMinor: 5,
    });
    expect(res.status).toBe(200);
    // 0.333 × 10.00 = 3.33; subtotal 43.33; 20 % tax = 8.666 → 8.67.
    expect(res.body.lines.map((l) => l.amountMinor)).toEqual([4000, 333]);
    expect(res.body.subtotalMinor).toBe(4333);
    expect(res.body.taxMinor).toBe(Math.floor((4333 * res.body.taxRateBp) / 10000 + 0.5));
    expect(res.body.notes).toBe('Thank you');
  });

  it('refuses bad lines with 400 and changes nothing', async () => {
    const { jobId } = await makeBillableJob(db, { ...demo, labourHours: 2 });
    const created = await desk.post<Invoice>('/api/invoices', { jobId });
    const bad = await desk.put<{ details: { path: string }[] }>(`/api/invoices/${created.body.id}`, {
      lines: [{ kind: 'other', description: '', quantityMilli: 0, unitPriceMinor: -5 }],
    });
    expect(bad.status).toBe(400);
    expect(bad.body.details.map((d) => d.path)).toEqual(expect.arrayContaining(['lines.0.description', 'lines.0.quantityMilli', 'lines.0.unitPriceMinor']));
    const after = await desk.get<Invoice>(`/api/invoices/${created.body.id}`);
    expect(after.body.totalMinor).toBe(created.body.totalMinor);
    expect(after.body.lines).toHaveLength(1);
  });

  it("another shop's job cannot be invoiced (404)", async () => {
    const other = await makeShop(db, 'Billing');
    const res = await desk.post('/api/invoices', { jobId: other.jobId });
    expect(res.status).toBe(404);
  });
});

describe('numbering', () => {
  it('gives concurrent invoices consecutive numbers with no gaps or repeats', async () => {
    const other = await makeShop(db, 'Numbering');
    const theirDesk = new ApiClient(server.url);
    expect((await theirDesk.login(other.emails.front_desk, TEST_PASSWORD)).status).toBe(200);
    const results = await Promise.all(Array.from({ length: 12 }, () => theirDesk.post<Invoice>('/api/invoices', { jobId: other.jobId })));
    expect(results.map((r) => r.status)).toEqual(Array(12).fill(201));
    const numbers = results.map((r) => r.body.number).sort((a, b) => a - b);
    expect(numbers).toEqual(Array.from({ length: 12 }, (_, i) => i + 1));
  });

  it('a failed creation gives its number back (the counter moves only with a committed invoice)', async () => {
    const other = await makeShop(db, 'Rollback');
    const theirDesk = new ApiClient(server.url);
    await theirDesk.login(other.emails.front_desk, TEST_PASSWORD);
    const first = await theirDesk.post<Invoice>('/api/invoices', { jobId: other.jobId });
    expect(first.body.number).toBe(1);
    // Make the insert fail after the number is taken: a temporary trigger refuses the "X-" reference
    // (raised as a unique violation, so the API answers 409 rather than logging a server error).
    await db.update(shops).set({ invoicePrefix: 'X' }).where(eq(shops.id, other.shopId));
    await db.execute(sql.raw(`create function test_refuse_x() returns trigger language plpgsql as $$
      begin if new.reference like 'X-%' then raise exception 'refused by test' using errcode = '23505'; end if; return new; end $$`));
    await db.execute(sql.raw('create trigger test_refuse_x before insert on invoices for each row execute function test_refuse_x()'));
    try {
      const failed = await theirDesk.post('/api/invoices', { jobId: other.jobId });
      expect(failed.status).toBe(409);
    } finally {
      await db.execute(sql.raw('drop trigger test_refuse_x on invoices'));
      await db.execute(sql.raw('drop function test_refuse_x()'));
    }
    await db.update(shops).set({ invoicePrefix: 'OK' }).where(eq(shops.id, other.shopId));
    const next = await theirDesk.post<Invoice>('/api/invoices', { jobId: other.jobId });
    expect(next.status).toBe(201);
    expect(next.body.number).toBe(2);
  });
});

describe('states', () => {
  it('draft → sent → paid at the counter, with the trail on the job; a sent invoice is fixed', async () => {
    const { jobId } = await makeBillableJob(db, { ...demo, labourHours: 1 });
    const inv = (await desk.post<Invoice>('/api/invoices', { jobId })).body;
    const sent = await desk.post<Invoice>(`/api/invoices/${inv.id}/send`);
    expect(sent.status).toBe(200);
    expect(sent.body.status).toBe('sent');
    expect(sent.body.sentAt).not.toBeNull();
    expect((await desk.put(`/api/invoices/${inv.id}`, { lines: [] })).status).toBe(409);
    expect((await desk.post(`/api/invoices/${inv.id}/send`)).status).toBe(409);
    const paid = await desk.post<Invoice>(`/api/invoices/${inv.id}/payments`, { method: 'cash', note: 'At the counter' });
    expect(paid.status).toBe(200);
    expect(paid.body.status).toBe('paid');
    expect(paid.body.payments).toHaveLength(1);
    expect(paid.body.payments[0]!.amountMinor).toBe(inv.totalMinor);
    expect((await desk.post(`/api/invoices/${inv.id}/payments`, { method: 'cash' })).status).toBe(409);
    expect((await desk.post(`/api/invoices/${inv.id}/void`, { reason: 'Mistake' })).status).toBe(409);
    const trail = await db.select({ kind: jobEvents.kind }).from(jobEvents).where(and(eq(jobEvents.jobId, jobId)));
    expect(trail.map((e) => e.kind)).toEqual(expect.arrayContaining(['invoice_sent', 'payment']));
  });

  it('an empty draft cannot be sent; a draft or sent invoice can be voided with a reason', async () => {
    const { jobId } = await makeBillableJob(db, demo);
    const inv = (await desk.post<Invoice>('/api/invoices', { jobId })).body;
    expect(inv.lines).toHaveLength(0);
    const send = await desk.post<{ error: string }>(`/api/invoices/${inv.id}/send`);
    expect(send.status).toBe(400);
    expect((await desk.post(`/api/invoices/${inv.id}/void`, {})).status).toBe(400);
    const voided = await desk.post<Invoice>(`/api/invoices/${inv.id}/void`, { reason: 'Customer withdrew the unit' });
    expect(voided.status).toBe(200);
    expect(voided.body.status).toBe('void');
    expect(voided.body.voidReason).toBe('Customer withdrew the unit');
    expect((await desk.post(`/api/invoices/${inv.id}/payments`, { method: 'cash' })).status).toBe(409);
  });
});

describe('who may do what', () => {
  it('technicians and customers cannot make, send or list invoices', async () => {
    const { jobId } = await makeBillableJob(db, { ...demo, labourHours: 1 });
    const tech = await signedIn(server.url, 'tech@quietpath.test');
    expect((await tech.post('/api/invoices', { jobId })).status).toBe(403);
    expect((await customer.post('/api/invoices', { jobId })).status).toBe(403);
    expect((await tech.get('/api/invoices')).status).toBe(403);
    expect((await customer.get('/api/invoices')).status).toBe(403);
    const inv = (await owner.post<Invoice>('/api/invoices', { jobId })).body;
    expect((await tech.post(`/api/invoices/${inv.id}/send`)).status).toBe(403);
    expect((await customer.post(`/api/invoices/${inv.id}/send`)).status).toBe(403);
    expect((await customer.post(`/api/invoices/${inv.id}/payments`, { method: 'cash' })).status).toBe(403);
  });

  it('a customer sees their own invoice once sent, never a draft, never another customer’s', async () => {
    const { jobId } = await makeBillableJob(db, { ...demo, labourHours: 1 });
    const inv = (await desk.post<Invoice>('/api/invoices', { jobId })).body;
    expect((await customer.get(`/api/invoices/${inv.id}`)).status).toBe(404);
    expect((await customer.get(`/api/invoices/${inv.id}/invoice.pdf`)).status).toBe(404);
    await desk.post(`/api/invoices/${inv.id}/send`);
    const mine = await customer.get<Invoice>(`/api/invoices/${inv.id}`);
    expect(mine.status).toBe(200);
    expect(mine.body.reference).toBe(inv.reference);

    const neighbour = await makeOtherCustomer(db, demo.shopId);
    const theirs = new ApiClient(server.url);
    expect((await theirs.login(neighbour.email, TEST_PASSWORD)).status).toBe(200);
    expect((await theirs.get(`/api/invoices/${inv.id}`)).status).toBe(404);
    expect((await theirs.get(`/api/invoices/${inv.id}/invoice.pdf`)).status).toBe(404);
    expect((await theirs.post(`/api/my/invoices/${inv.id}/pay`)).status).toBe(404);

    const other = await makeShop(db, 'Peek');
    const otherOwner = new ApiClient(server.url);
    await otherOwner.login(other.emails.owner, TEST_PASSWORD);
    expect((await otherOwner.get(`/api/invoices/${inv.id}`)).status).toBe(404);
    const list = await otherOwner.get<InvoiceSummary[]>('/api/invoices');
    expect(list.body.map((i) => i.id)).not.toContain(inv.id);
  });
});

describe('invoice PDF', () => {
  it('is a PDF for staff and the customer, naming the reference', async () => {
    const { jobId } = await makeBillableJob(db, { ...demo, labourHours: 2, parts: [{ reference: 'R101', quantity: 4, unitCostMinor: 12 }] });
    const inv = (await desk.post<Invoice>('/api/invoices', { jobId })).body;
    await desk.post(`/api/invoices/${inv.id}/send`);
    for (const c of [desk, customer]) {
      const res = await c.raw('GET', `/api/invoices/${inv.id}/invoice.pdf`);
      expect(res.status).toBe(200);
      expect(res.headers.get('content-type')).toBe('application/pdf');
      const bytes = Buffer.from(await res.arrayBuffer());
      expect(bytes.subarray(0, 5).toString('latin1')).toBe('%PDF-');
      expect(bytes.subarray(-6).toString('latin1')).toMatch(/%%EOF/);
    }
  });
});
