/**
 * Online payment with two API nodes on one database, neither configured with a provider key or a
 * webhook secret: each node starts its own local payment stand-in with its own random API key and
 * webhook secret, and the stand-ins share their checkouts through the database. A webhook is
 * signed by the stand-in that took the payment and sent to that stand-in's own node, which checks
 * it with its own secret (HMAC-SHA256 over "timestamp.payload", checked by the SDK's constructEvent).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { randomUUID } from 'node:crypto';
import Stripe from 'stripe';
import { eq } from 'drizzle-orm';
import { startTestServer, testDb } from '../support/server';
import { ApiClient, signedIn } from '../support/client';
import { demoShop, makeBillableJob, payOnFakePage } from '../support/billing';
import { paymentCheckouts, payments } from '../../server/db/schema/index';
import type { Db } from '../../server/db/client';
import type { CheckoutResponse, Invoice } from '../../shared/billing';
import type { RunningServer } from '../../server/main';
import { startFakePaymentApi } from '../../server/fakes/payment-api';

let nodeA: RunningServer;
let nodeB: RunningServer;
let db: Db;
let closeDb: () => Promise<void>;
let demo: { shopId: number; customerId: number };
let desk: ApiClient;
let customerOnA: ApiClient;
let customerOnB: ApiClient;

beforeAll(async () => {
  // No analysis here: the nodes only take payments.
  nodeA = await startTestServer({ WORKER: 'off' });
  nodeB = await startTestServer({ WORKER: 'off' });
  ({ db, close: closeDb } = testDb());
  demo = await demoShop(db);
  desk = await signedIn(nodeA.url, 'desk@quietpath.test');
  customerOnA = await signedIn(nodeA.url, 'customer@quietpath.test');
  // The same browser session, its next request routed to the other node.
  customerOnB = customerOnA.at(nodeB.url);
});
afterAll(async () => {
  await nodeA?.close();
  await nodeB?.close();
  await closeDb();
});

async function sentInvoice(): Promise<Invoice> {
  const { jobId } = await makeBillableJob(db, { ...demo, labourHours: 1.5, parts: [{ reference: 'R12', quantity: 3, unitCostMinor: 95 }] });
  const inv = (await desk.post<Invoice>('/api/invoices', { jobId })).body;
  return (await desk.post<Invoice>(`/api/invoices/${inv.id}/send`)).body;
}

async function payRequest(client: ApiClient, invoiceId: number): Promise<string> {
  const res = await client.post<CheckoutResponse>(`/api/my/invoices/${invoiceId}/pay`);
  expect(res.status).toBe(200);
  return res.body.url;
}

describe('paying online with two nodes, each with its own payment stand-in', () => {
  it('a checkout opened through node A is reused when the customer asks again through node B', async () => {
    // Two stand-ins, one per node.
    expect(nodeA.paymentApiUrl).toMatch(/^http:\/\/127\.0\.0\.1:\d+$/);
    expect(nodeB.paymentApiUrl).toMatch(/^http:\/\/127\.0\.0\.1:\d+$/);
    expect(nodeB.paymentApiUrl).not.toBe(nodeA.paymentApiUrl);
    const inv = await sentInvoice();
    const first = await payRequest(customerOnA, inv.id);
    expect(first.startsWith(`${nodeA.paymentApiUrl}/pay/cs_test_`)).toBe(true);
    const again = await payRequest(customerOnB, inv.id);
    expect(again).toBe(first);
    const rows = await db.select().from(paymentCheckouts).where(eq(paymentCheckouts.invoiceId, inv.id));
    expect(rows).toHaveLength(1);
    expect(rows[0]!.url).toBe(first);
  });

  it('the checkout opened through A is shown and paid on B’s card page; both nodes then see the invoice paid', async () => {
    const inv = await sentInvoice();
    const url = await payRequest(customerOnA, inv.id);
    const sessionId = url.split('/pay/')[1]!;
    const onB = `${nodeB.paymentApiUrl}/pay/${sessionId}`;
    const page = await fetch(onB);
    expect(page.status).toBe(200);
    expect(await page.text()).toContain(`data-amount="${inv.totalMinor}"`);

    // B's stand-in completes it and tells node B, signed with node B's own webhook secret.
    const paid = await payOnFakePage(onB);
    expect(paid.status).toBe(303);
    expect(paid.headers.get('location')).toBe(`${nodeA.url}/my/repairs/${inv.jobId}?paid=${inv.id}`);
    for (const client of [customerOnA, customerOnB]) {
      const seen = await client.get<Invoice>(`/api/invoices/${inv.id}`);
      expect(seen.body.status).toBe('paid');
      expect(seen.body.payments).toHaveLength(1);
      expect(seen.body.payments[0]).toMatchObject({ method: 'online', amountMinor: inv.totalMinor });
    }
    // The same checkout is complete for A's stand-in too: paying it there again takes nothing.
    expect((await payOnFakePage(url)).status).toBe(409);
    expect(await db.select().from(payments).where(eq(payments.invoiceId, inv.id))).toHaveLength(1);
    for (const client of [customerOnA, customerOnB]) {
      expect((await client.post(`/api/my/invoices/${inv.id}/pay`)).status).toBe(409);
    }
  });

  it('a checkout opened through B and reused through A is paid on the page it names; both nodes see it paid', async () => {
    const inv = await sentInvoice();
    const url = await payRequest(customerOnB, inv.id);
    expect(url.startsWith(`${nodeB.paymentApiUrl}/pay/`)).toBe(true);
    expect(await payRequest(customerOnA, inv.id)).toBe(url);
    expect((await payOnFakePage(url)).status).toBe(303);
    const seen = await customerOnA.get<Invoice>(`/api/invoices/${inv.id}`);
    expect(seen.body.status).toBe('paid');
    expect((await customerOnB.get<Invoice>(`/api/invoices/${inv.id}`)).body.status).toBe('paid');
  });
});

describe('two payment stand-ins on one database, called through the official SDK', () => {
  const sdk = (key: string, url: string) => {
    const u = new URL(url);
    return new Stripe(key, { protocol: 'http', host: u.hostname, port: u.port, maxNetworkRetries: 0, telemetry: false });
  };
  const params: Stripe.Checkout.SessionCreateParams = {
    mode: 'payment',
    line_items: [{ quantity: 2, price_data: { currency: 'eur', unit_amount: 1250, product_data: { name: 'Invoice T-1' } } }],
    success_url: 'http://127.0.0.1:9/done',
  };

  it('a create retried through the other stand-in with the same idempotency key returns the same session', async () => {
    const one = await startFakePaymentApi({ secretKey: 'sk_test_local_one', webhookSecret: 'whsec_local_one', db });
    const two = await startFakePaymentApi({ secretKey: 'sk_test_local_two', webhookSecret: 'whsec_local_two', db });
    try {
      const idempotencyKey = randomUUID();
      const a = await sdk('sk_test_local_one', one.url).checkout.sessions.create(params, { idempotencyKey });
      const b = await sdk('sk_test_local_two', two.url).checkout.sessions.create(params, { idempotencyKey });
      expect(b.id).toBe(a.id);
      // 2 × 1250 minor units
      expect(b.amount_total).toBe(2500);
      // Each stand-in still answers only to its own key.
      await expect(sdk('sk_test_local_one', two.url).checkout.sessions.retrieve(a.id)).rejects.toMatchObject({ statusCode: 401 });
      expect((await sdk('sk_test_local_two', two.url).checkout.sessions.retrieve(a.id)).status).toBe('open');
    } finally {
      await Promise.all([one.close(), two.close()]);
    }
  });

  it('a checkout paid through one stand-in is complete for the other, which takes no second payment', async () => {
    const one = await startFakePaymentApi({ secretKey: 'sk_test_local_one', webhookSecret: 'whsec_local_one', db });
    const two = await startFakePaymentApi({ secretKey: 'sk_test_local_two', webhookSecret: 'whsec_local_two', db });
    try {
      const s = await sdk('sk_test_local_one', one.url).checkout.sessions.create(params);
      // No webhook target is set, so the payment answers 502 (paid, shop not told yet).
      expect((await payOnFakePage(`${one.url}/pay/${s.id}`)).status).toBe(502);
      expect((await payOnFakePage(`${two.url}/pay/${s.id}`)).status).toBe(409);
      const seen = await sdk('sk_test_local_two', two.url).checkout.sessions.retrieve(s.id);
      expect(seen).toMatchObject({ status: 'complete', payment_status: 'paid' });
      expect(seen.payment_intent).toMatch(/^pi_test_/);
    } finally {
      await Promise.all([one.close(), two.close()]);
    }
  });
});
