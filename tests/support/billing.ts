import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import Stripe from 'stripe';
import type { Db } from '../../server/db/client';
import { customers, jobs, partsUsed, units, users } from '../../server/db/schema/index';
import { hashPassword } from '../../server/services/passwords';
import { TEST_PASSWORD } from './factories';

/** Known to the test server (passed as STRIPE_WEBHOOK_SECRET) so tests can sign and forge events. */
export const WEBHOOK_SECRET = 'whsec_test_billing_0123456789abcdef';

export async function demoShop(db: Db): Promise<{ shopId: number; customerId: number }> {
  const [row] = await db.select({ shopId: users.shopId, customerId: users.customerId }).from(users).where(eq(users.email, 'customer@quietpath.test'));
  return { shopId: row!.shopId, customerId: row!.customerId! };
}

/** A job of its own for one test, with labour and parts to invoice. */
export async function makeBillableJob(
  db: Db,
  opts: { shopId: number; customerId: number; labourHours?: number; parts?: { reference: string; quantity: number; unitCostMinor: number }[] },
): Promise<{ jobId: number; unitId: number }> {
  const tag = randomUUID().slice(0, 6);
  const [unit] = await db
    .insert(units)
    .values({ shopId: opts.shopId, customerId: opts.customerId, kind: 'preamplifier', maker: 'Harrowgate', model: `Lumen P${tag}` })
    .returning({ id: units.id });
  const [job] = await db
    .insert(jobs)
    .values({ shopId: opts.shopId, unitId: unit!.id, customerId: opts.customerId, status: 'diagnosis', reportedFault: `Hum on the left channel ${tag}`, labourHours: opts.labourHours ?? 0 })
    .returning({ id: jobs.id });
  for (const p of opts.parts ?? []) {
    await db.insert(partsUsed).values({ shopId: opts.shopId, jobId: job!.id, reference: p.reference, partNumber: `QS-${tag}`, description: 'Replacement', quantity: p.quantity, unitCostMinor: p.unitCostMinor });
  }
  return { jobId: job!.id, unitId: unit!.id };
}

/** A second customer with a sign-in in the same shop, with one job of their own. */
export async function makeOtherCustomer(db: Db, shopId: number): Promise<{ email: string; customerId: number; jobId: number; unitId: number }> {
  const tag = randomUUID().slice(0, 8);
  const email = `neighbour-${tag}@example.test`;
  const [c] = await db.insert(customers).values({ shopId, name: `Neighbour ${tag}`, email }).returning({ id: customers.id });
  await db.insert(users).values({ shopId, email, name: `Neighbour ${tag}`, role: 'customer', passwordHash: await hashPassword(TEST_PASSWORD), customerId: c!.id });
  const { jobId, unitId } = await makeBillableJob(db, { shopId, customerId: c!.id, labourHours: 1 });
  return { email, customerId: c!.id, jobId, unitId };
}

/** A checkout.session.completed event signed the way the provider signs it. */
export function signedEvent(session: { id: string; amount_total: number; currency: string; payment_intent?: string }, opts: { eventId?: string; secret?: string } = {}) {
  const payload = JSON.stringify({
    id: opts.eventId ?? `evt_test_${randomUUID().replace(/-/g, '')}`,
    object: 'event',
    type: 'checkout.session.completed',
    created: Math.floor(Date.now() / 1000),
    livemode: false,
    data: {
      object: {
        id: session.id,
        object: 'checkout.session',
        amount_total: session.amount_total,
        currency: session.currency,
        payment_status: 'paid',
        status: 'complete',
        payment_intent: session.payment_intent ?? `pi_test_${randomUUID().replace(/-/g, '')}`,
      },
    },
  });
  const header = new Stripe('sk_test_unused').webhooks.generateTestHeaderString({ payload, secret: opts.secret ?? WEBHOOK_SECRET });
  return { payload, header };
}

export async function postWebhook(baseUrl: string, payload: string, header: string | null): Promise<{ status: number; body: { outcome?: string; error?: string } }> {
  const res = await fetch(`${baseUrl}/api/payments/webhook`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', ...(header ? { 'stripe-signature': header } : {}) },
    body: payload,
  });
  return { status: res.status, body: (await res.json()) as { outcome?: string; error?: string } };
}

/** Pays on the local payment page the way a browser form would, without following the redirect. */
export async function payOnFakePage(checkoutUrl: string, card = '4242 4242 4242 4242'): Promise<Response> {
  return fetch(checkoutUrl, { method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded' }, body: new URLSearchParams({ card, exp: '12/34' }), redirect: 'manual' });
}
