/**
 * Online payment through the official SDK and the local stand-in of the provider's API, with
 * webhooks signed as the provider signs them (HMAC-SHA256 over "timestamp.payload", the SDK's
 * generateTestHeaderString) and checked by the SDK's constructEvent on our side.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { demoShop, makeBillableJob, payOnFakePage, postWebhook, signedEvent, WEBHOOK_SECRET } from '../support/billing';
import { paymentCheckouts, payments } from '../../server/db/schema/index';
import type { Db } from '../../server/db/client';
import type { CheckoutResponse, Invoice, OutboxMessage } from '../../shared/billing';
import type { RunningServer } from '../../server/main';

let server: RunningServer;
let db: Db;
let closeDb: () => Promise<void>;
let demo: { shopId: number; customerId: number };
let desk: ApiClient;
let customer: ApiClient;

beforeAll(async () => {
  server = await startTestServer({ STRIPE_WEBHOOK_SECRET: WEBHOOK_SECRET });
  ({ db, close: closeDb } = testDb());
  demo = await demoShop(db);
  desk = await signedIn(server.url, 'desk@quietpath.test');
  customer = await signedIn(server.url, 'customer@quietpath.test');
});
afterAll(async () => {
  await server.close();
  await closeDb();
});

async function sentInvoice(): Promise<Invoice> {
  const { jobId } = await makeBillableJob(db, { ...demo, labourHours: 1.25, parts: [{ reference: 'Q401', quantity: 2, unitCostMinor: 180 }] });
  const inv = (await desk.post<Invoice>('/api/invoices', { jobId })).body;
  return (await desk.post<Invoice>(`/api/invoices/${inv.id}/send`)).body;
}

async function checkout(invoiceId: number) {
  const res = await customer.post<CheckoutResponse>(`/api/my/invoices/${invoiceId}/pay`);
  expect(res.status).toBe(200);
  const [row] = await db.select().from(paymentCheckouts).where(eq(paymentCheckouts.url, res.body.url));
  return { url: res.body.url, sessionId: row!.sessionId };
}

const paymentsFor = (invoiceId: number) => db.select().from(payments).where(eq(payments.invoiceId, invoiceId));

describe('paying online', () => {
  it('the card page completes the session, the signed webhook marks the invoice paid, the receipt is e-mailed', async () => {
    const inv = await sentInvoice();
    const { url } = await checkout(inv.id);
    const page = await fetch(url);
    expect(page.status).toBe(200);
    expect(await page.text()).toContain(`data-amount="${inv.totalMinor}"`);
    const paid = await payOnFakePage(url);
    expect(paid.status).toBe(303);
    expect(paid.headers.get('location')).toBe(`${server.url}/my/repairs/${inv.jobId}?paid=${inv.id}`);
    const after = await customer.get<Invoice>(`/api/invoices/${inv.id}`);
    expect(after.body.status).toBe('paid');
    expect(after.body.payments).toHaveLength(1);
    expect(after.body.payments[0]).toMatchObject({ method: 'online', amountMinor: inv.totalMinor, currency: 'EUR' });
    expect(after.body.payments[0]!.providerRef).toMatch(/^pi_test_/);
    const mail = await desk.get<OutboxMessage[]>(`/api/outbox?jobId=${inv.jobId}`);
    expect(mail.body.map((m) => m.kind).sort()).toEqual(['invoice', 'payment_received']);
    expect(mail.body.every((m) => m.status === 'sent' && m.inLocalMailbox)).toBe(true);
    expect((await customer.post(`/api/my/invoices/${inv.id}/pay`)).status).toBe(409);
  });

  it('asking to pay twice reuses the open checkout, so one invoice cannot be paid twice', async () => {
    const inv = await sentInvoice();
    const first = await checkout(inv.id);
    const again = await customer.post<CheckoutResponse>(`/api/my/invoices/${inv.id}/pay`);
    expect(again.status).toBe(200);
    expect(again.body.url).toBe(first.url);
    expect(await db.select().from(paymentCheckouts).where(eq(paymentCheckouts.invoiceId, inv.id))).toHaveLength(1);
  });

  it('a declined card changes nothing', async () => {
    const inv = await sentInvoice();
    const { url } = await checkout(inv.id);
    const res = await payOnFakePage(url, '4000 0000 0000 0002');
    expect(res.status).toBe(402);
    expect((await customer.get<Invoice>(`/api/invoices/${inv.id}`)).body.status).toBe('sent');
    expect(await paymentsFor(inv.id)).toHaveLength(0);
  });

  it('drafts and void invoices cannot be paid; the desk cannot pay for the customer', async () => {
    const { jobId } = await makeBillableJob(db, { ...demo, labourHours: 1 });
    const draft = (await desk.post<Invoice>('/api/invoices', { jobId })).body;
    expect((await customer.post(`/api/my/invoices/${draft.id}/pay`)).status).toBe(404);
    await desk.post(`/api/invoices/${draft.id}/void`, { reason: 'test' });
    expect((await customer.post(`/api/my/invoices/${draft.id}/pay`)).status).toBe(409);
    expect((await desk.post(`/api/my/invoices/${draft.id}/pay`)).status).toBe(403);
  });
});

describe('webhook checks', () => {
  it('a forged signature, a missing one, or a tampered body is refused and changes nothing', async () => {
    const inv = await sentInvoice();
    const { sessionId } = await checkout(inv.id);
    const forged = signedEvent({ id: sessionId, amount_total: inv.totalMinor, currency: 'eur' }, { secret: 'whsec_not_ours' });
    expect((await postWebhook(server.url, forged.payload, forged.header)).status).toBe(400);
    const real = signedEvent({ id: sessionId, amount_total: inv.totalMinor, currency: 'eur' });
    expect((await postWebhook(server.url, real.payload, null)).status).toBe(400);
    expect((await postWebhook(server.url, real.payload.replace(`"amount_total":${inv.totalMinor}`, '"amount_total":1'), real.header)).status).toBe(400);
    expect((await customer.get<Invoice>(`/api/invoices/${inv.id}`)).body.status).toBe('sent');
    expect(await paymentsFor(inv.id)).toHaveLength(0);
  });

  it('a replayed event (same id) changes nothing the second time', async () => {
    const inv = await sentInvoice();
    const { sessionId } = await checkout(inv.id);
    const ev = signedEvent({ id: sessionId, amount_total: inv.totalMinor, currency: 'eur' });
    const first = await postWebhook(server.url, ev.payload, ev.header);
    expect(first.status).toBe(200);
    expect(first.body.outcome).toBe('paid');
    const again = await postWebhook(server.url, ev.payload, ev.header);
    expect(again.status).toBe(200);
    expect(again.body.outcome).toBe('duplicate');
    // A new event id for the same, already settled checkout adds no second payment either.
    const other = signedEvent({ id: sessionId, amount_total: inv.totalMinor, currency: 'eur' });
    expect((await postWebhook(server.url, other.payload, other.header)).body.outcome).toBe('already_paid');
    expect(await paymentsFor(inv.id)).toHaveLength(1);
    const receipts = (await desk.get<OutboxMessage[]>(`/api/outbox?jobId=${inv.jobId}`)).body.filter((m) => m.kind === 'payment_received');
    expect(receipts).toHaveLength(1);
  });

  it('a signed event for a checkout we never opened, or for the wrong amount, settles nothing', async () => {
    const inv = await sentInvoice();
    const { sessionId } = await checkout(inv.id);
    const unknown = signedEvent({ id: 'cs_test_not_ours', amount_total: inv.totalMinor, currency: 'eur' });
    expect((await postWebhook(server.url, unknown.payload, unknown.header)).body.outcome).toBe('unknown_checkout');
    const short = signedEvent({ id: sessionId, amount_total: inv.totalMinor - 1, currency: 'eur' });
    expect((await postWebhook(server.url, short.payload, short.header)).body.outcome).toBe('amount_mismatch');
    const otherCurrency = signedEvent({ id: sessionId, amount_total: inv.totalMinor, currency: 'usd' });
    expect((await postWebhook(server.url, otherCurrency.payload, otherCurrency.header)).body.outcome).toBe('amount_mismatch');
    expect((await customer.get<Invoice>(`/api/invoices/${inv.id}`)).body.status).toBe('sent');
    expect(await paymentsFor(inv.id)).toHaveLength(0);
  });

  it('the webhook needs no session or form token (the provider is not a browser)', async () => {
    const inv = await sentInvoice();
    const { sessionId } = await checkout(inv.id);
    const ev = signedEvent({ id: sessionId, amount_total: inv.totalMinor, currency: 'eur' });
    const res = await fetch(`${server.url}/api/payments/webhook`, { method: 'POST', headers: { 'content-type': 'application/json; charset=utf-8', 'stripe-signature': ev.header }, body: ev.payload });
    expect(res.status).toBe(200);
    expect((await desk.get<Invoice>(`/api/invoices/${inv.id}`)).body.status).toBe('paid');
  });
});
