import { and, desc, eq, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '../db/client';
import { jobs, quotes, shops } from '../db/schema/index';
import type { SessionUser } from '../../shared/auth';
import type { CreateQuoteRequest, Quote } from '../../shared/billing';
import { formatMoney } from '../../shared/money';
import { conflict, notFound } from '../http-error';
import type { BillingRuntime } from '../billing-runtime';
import { loadMailContext, quoteReadyMail } from '../mail/messages';
import { lockJob, moveJobStatus, recordJobEvent } from './billing-job-status';
import { deliverEmails, queueEmail } from './outbox';

function toQuote(r: typeof quotes.$inferSelect): Quote {
  return {
    id: r.id,
    jobId: r.jobId,
    amountMinor: r.amountMinor,
    currency: r.currency,
    text: r.text,
    status: r.status,
    nextStatus: r.nextStatus,
    declineReason: r.declineReason,
    createdAt: r.createdAt.toISOString(),
    decidedAt: r.decidedAt ? r.decidedAt.toISOString() : null,
  };
}

export async function listQuotes(db: DbOrTx, shopId: number, jobId: number): Promise<Quote[]> {
  const rows = await db
    .select()
    .from(quotes)
    .where(and(eq(quotes.shopId, shopId), eq(quotes.jobId, jobId)))
    .orderBy(desc(quotes.createdAt), desc(quotes.id));
  return rows.map(toQuote);
}

/**
 * The desk sends an estimate: the job waits at "awaiting approval" until the customer answers.
 * The move and its audit event commit with the quote; the e-mail goes out after commit.
 */
export async function sendQuote(db: Db, runtime: BillingRuntime, user: SessionUser, input: CreateQuoteRequest): Promise<Quote> {
  const shopId = user.shop.id;
  const { quote, emailId } = await db.transaction(async (tx) => {
    const job = await lockJob(tx, shopId, input.jobId);
    const [open] = await tx
      .select({ id: quotes.id })
      .from(quotes)
      .where(and(eq(quotes.shopId, shopId), eq(quotes.jobId, job.id), eq(quotes.status, 'pending')));
    if (open) throw conflict('This job already has an estimate waiting for the customer; withdraw it first');
    const [shop] = await tx.select({ currency: shops.currency }).from(shops).where(eq(shops.id, shopId));
    const [row] = await tx
      .insert(quotes)
      .values({ shopId, jobId: job.id, amountMinor: input.amountMinor, currency: shop!.currency, text: input.text, nextStatus: input.nextStatus, createdBy: user.id })
      .returning();
    const amount = formatMoney(input.amountMinor, shop!.currency);
    await moveJobStatus(tx, job, 'awaiting_approval', { userId: user.id, note: `Estimate of ${amount} sent to the customer` });
    await recordJobEvent(tx, job, 'quote_sent', `Estimate sent: ${amount}`, user.id);
    const ctx = await loadMailContext(tx, shopId, job.id, runtime.publicUrl());
    const emailId = await queueEmail(tx, {
      shopId,
      kind: 'quote_ready',
      jobId: job.id,
      quoteId: row!.id,
      createdBy: user.id,
      mail: quoteReadyMail(ctx, { amountMinor: input.amountMinor, currency: shop!.currency, text: input.text }),
    });
    return { quote: toQuote(row!), emailId };
  });
  await deliverEmails(db, runtime.mailer, [emailId]);
  return quote;
}

/** A pending quote locked for a decision; a customer reaches only quotes on their own jobs. */
async function lockPendingQuote(tx: DbOrTx, viewer: SessionUser, quoteId: number) {
  const [row] = await tx
    .select({ quote: quotes, customerId: jobs.customerId })
    .from(quotes)
    .innerJoin(jobs, eq(jobs.id, quotes.jobId))
    .where(and(eq(quotes.shopId, viewer.shop.id), eq(quotes.id, quoteId)))
    .for('update', { of: quotes });
  if (!row || (viewer.role === 'customer' && row.customerId !== viewer.customerId)) throw notFound('Estimate');
  if (row.quote.status !== 'pending') throw conflict(`This estimate was already ${row.quote.status}`);
  return row.quote;
}

/** The customer approves: the job moves on to repair (or waiting for parts) in the same transaction. */
export async function approveQuote(db: Db, viewer: SessionUser, quoteId: number): Promise<Quote> {
  return db.transaction(async (tx) => {
    const q = await lockPendingQuote(tx, viewer, quoteId);
    const [row] = await tx
      .update(quotes)
      .set({ status: 'approved', decidedAt: sql`now()`, decidedBy: viewer.id })
      .where(and(eq(quotes.shopId, viewer.shop.id), eq(quotes.id, q.id)))
      .returning();
    const job = await lockJob(tx, viewer.shop.id, q.jobId);
    const amount = formatMoney(q.amountMinor, q.currency);
    await recordJobEvent(tx, job, 'quote_approved', `Estimate of ${amount} approved`, viewer.id);
    await moveJobStatus(tx, job, q.nextStatus, { userId: viewer.id, note: `Customer approved the estimate of ${amount}` });
    return toQuote(row!);
  });
}

/** The customer declines: recorded on the quote and the job's trail; the desk then arranges return. */
export async function declineQuote(db: Db, viewer: SessionUser, quoteId: number, reason: string): Promise<Quote> {
  return db.transaction(async (tx) => {
    const q = await lockPendingQuote(tx, viewer, quoteId);
    const [row] = await tx
      .update(quotes)
      .set({ status: 'declined', declineReason: reason, decidedAt: sql`now()`, decidedBy: viewer.id })
      .where(and(eq(quotes.shopId, viewer.shop.id), eq(quotes.id, q.id)))
      .returning();
    const note = `Estimate of ${formatMoney(q.amountMinor, q.currency)} declined${reason ? `: ${reason}` : ''}`;
    await recordJobEvent(tx, { shopId: viewer.shop.id, id: q.jobId }, 'quote_declined', note, viewer.id);
    return toQuote(row!);
  });
}

/** The desk takes an unanswered estimate back (to correct it, or because the customer phoned). */
export async function withdrawQuote(db: Db, user: SessionUser, quoteId: number): Promise<Quote> {
  return db.transaction(async (tx) => {
    const q = await lockPendingQuote(tx, user, quoteId);
    const [row] = await tx
      .update(quotes)
      .set({ status: 'withdrawn', decidedAt: sql`now()`, decidedBy: user.id })
      .where(and(eq(quotes.shopId, user.shop.id), eq(quotes.id, q.id)))
      .returning();
    await recordJobEvent(tx, { shopId: user.shop.id, id: q.jobId }, 'quote_withdrawn', `Estimate of ${formatMoney(q.amountMinor, q.currency)} withdrawn`, user.id);
    return toQuote(row!);
  });
}
