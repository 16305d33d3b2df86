import { and, desc, eq } from 'drizzle-orm';
import type Stripe from 'stripe';
import type { Db } from '../db/client';
import { invoices, paymentCheckouts, processedWebhookEvents } from '../db/schema/index';
import type { SessionUser } from '../../shared/auth';
import type { CheckoutResponse } from '../../shared/billing';
import { HttpError, conflict } from '../http-error';
import type { BillingRuntime } from '../billing-runtime';
import { settleInvoice } from './invoice-actions';
import { getInvoiceFor } from './invoices';
import { deliverEmails } from './outbox';

/**
 * Opens a hosted checkout for the customer's own sent invoice and returns where to send them.
 * The session is recorded, so a webhook can only settle a checkout this shop opened.
 */
export async function startCheckout(db: Db, runtime: BillingRuntime, viewer: SessionUser, invoiceId: number): Promise<CheckoutResponse> {
  const invoice = await getInvoiceFor(db, viewer, invoiceId);
  if (invoice.status === 'paid') throw conflict('This invoice is already paid');
  if (invoice.status !== 'sent') throw conflict('This invoice cannot be paid');
  // A second click (or a second tab) reuses the checkout still open, so one invoice is not paid twice.
  const [previous] = await db
    .select()
    .from(paymentCheckouts)
    .where(and(eq(paymentCheckouts.shopId, viewer.shop.id), eq(paymentCheckouts.invoiceId, invoice.id), eq(paymentCheckouts.amountMinor, invoice.totalMinor)))
    .orderBy(desc(paymentCheckouts.createdAt), desc(paymentCheckouts.id))
    .limit(1);
  if (previous) {
    const open = await runtime.stripe.checkout.sessions.retrieve(previous.sessionId).catch(() => null);
    if (open?.status === 'open' && open.url) return { url: open.url };
  }
  const base = runtime.publicUrl().replace(/\/$/, '');
  const session = await runtime.stripe.checkout.sessions.create({
    mode: 'payment',
    line_items: [
      {
        quantity: 1,
        price_data: {
          currency: invoice.currency.toLowerCase(),
          unit_amount: invoice.totalMinor,
          product_data: { name: `Invoice ${invoice.reference}`, description: `${invoice.unitLabel}, job ${invoice.jobReference}` },
        },
      },
    ],
    client_reference_id: String(invoice.id),
    metadata: { invoiceId: String(invoice.id), shopId: String(viewer.shop.id) },
    success_url: `${base}/my/repairs/${invoice.jobId}?paid=${invoice.id}`,
    cancel_url: `${base}/my/repairs/${invoice.jobId}`,
  });
  if (!session.url) throw new HttpError(502, 'The payment service did not return a payment page', 'payment_provider');
  await db.insert(paymentCheckouts).values({
    shopId: viewer.shop.id,
    invoiceId: invoice.id,
    sessionId: session.id,
    amountMinor: invoice.totalMinor,
    currency: invoice.currency,
    url: session.url,
    createdBy: viewer.id,
  });
  return { url: session.url };
}

export type WebhookOutcome =
  | 'paid'
  | 'duplicate'
  | 'ignored'
  | 'not_paid'
  | 'unknown_checkout'
  | 'already_paid'
  | 'invoice_not_open'
  | 'amount_mismatch';

/** Verifies the signature over the raw bytes; anything unsigned or tampered with is a 400. */
export function verifyWebhook(runtime: BillingRuntime, rawBody: Buffer, signature: string | undefined): Stripe.Event {
  if (!signature) throw new HttpError(400, 'Missing Stripe-Signature header', 'bad_signature');
  try {
    return runtime.stripe.webhooks.constructEvent(rawBody, signature, runtime.webhookSecret);
  } catch {
    throw new HttpError(400, 'Webhook signature does not verify', 'bad_signature');
  }
}

/**
 * Acts on a verified event once. The event id is claimed in the same transaction that marks the
 * invoice paid, so a replay finds the id taken and changes nothing, and a failure part-way leaves
 * the id free for the provider's retry.
 */
export async function handleWebhookEvent(db: Db, runtime: BillingRuntime, event: Stripe.Event): Promise<WebhookOutcome> {
  const result = await db.transaction(async (tx) => {
    const [claimed] = await tx
      .insert(processedWebhookEvents)
      .values({ eventId: event.id, type: event.type, outcome: 'received' })
      .onConflictDoNothing()
      .returning({ eventId: processedWebhookEvents.eventId });
    if (!claimed) return { outcome: 'duplicate' as const, emailId: null };

    const finish = async (outcome: WebhookOutcome, ids: { shopId?: number; invoiceId?: number } = {}, emailId: number | null = null) => {
      await tx
        .update(processedWebhookEvents)
        .set({ outcome, shopId: ids.shopId ?? null, invoiceId: ids.invoiceId ?? null })
        .where(eq(processedWebhookEvents.eventId, event.id));
      return { outcome, emailId };
    };

    if (event.type !== 'checkout.session.completed' && event.type !== 'checkout.session.async_payment_succeeded') return finish('ignored');
    const session = event.data.object;
    if (session.payment_status !== 'paid') return finish('not_paid');
    const [checkout] = await tx.select().from(paymentCheckouts).where(eq(paymentCheckouts.sessionId, session.id));
    if (!checkout) return finish('unknown_checkout');
    const ids = { shopId: checkout.shopId, invoiceId: checkout.invoiceId };
    const [inv] = await tx
      .select()
      .from(invoices)
      .where(and(eq(invoices.shopId, checkout.shopId), eq(invoices.id, checkout.invoiceId)))
      .for('update');
    if (!inv) return finish('unknown_checkout');
    if (inv.status === 'paid') return finish('already_paid', ids);
    if (inv.status !== 'sent') return finish('invoice_not_open', ids);
    const paidCurrency = (session.currency ?? '').toUpperCase();
    if (session.amount_total !== inv.totalMinor || session.amount_total !== checkout.amountMinor || paidCurrency !== inv.currency.toUpperCase()) {
      return finish('amount_mismatch', ids);
    }
    const providerRef = typeof session.payment_intent === 'string' ? session.payment_intent : (session.payment_intent?.id ?? session.id);
    const emailId = await settleInvoice(tx, runtime, inv, {
      method: 'online',
      amountMinor: session.amount_total,
      currency: paidCurrency,
      providerRef,
      eventId: event.id,
      note: '',
      receivedBy: null,
    });
    return finish('paid', ids, emailId);
  });
  if (result.emailId !== null) await deliverEmails(db, runtime.mailer, [result.emailId]);
  return result.outcome;
}
