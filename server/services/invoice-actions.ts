import { and, asc, eq, sql } from 'drizzle-orm';
import type { Db, DbOrTx } from '../db/client';
import { invoiceLines, invoices, jobs, partsUsed, payments, shops } from '../db/schema/index';
import type { SessionUser } from '../../shared/auth';
import type { CreateInvoiceRequest, Invoice, InvoiceLineInput, RecordPaymentRequest, UpdateInvoiceRequest } from '../../shared/billing';
import { formatMoney, formatQuantity, hoursToMilli, invoiceTotals } from '../../shared/money';
import { HttpError, conflict, notFound } from '../http-error';
import type { BillingRuntime } from '../billing-runtime';
import { invoiceMail, loadMailContext, paymentReceivedMail } from '../mail/messages';
import { renderEvidencePdf } from '../pdf/evidence';
import { renderInvoicePdf } from '../pdf/invoice';
import { recordJobEvent } from './billing-job-status';
import { allocateInvoiceNumber, getInvoiceFor, invoiceReference, loadInvoices } from './invoices';
import { deliverEmails, queueEmail } from './outbox';

type LineRow = InvoiceLineInput & { partUsedId?: number | null };

async function writeLines(tx: DbOrTx, shopId: number, invoiceId: number, lines: LineRow[], taxRateBp: number) {
  const totals = invoiceTotals({ lines, taxRateBp });
  await tx.delete(invoiceLines).where(and(eq(invoiceLines.shopId, shopId), eq(invoiceLines.invoiceId, invoiceId)));
  if (lines.length) {
    await tx.insert(invoiceLines).values(
      lines.map((l, i) => ({
        shopId,
        invoiceId,
        position: i + 1,
        kind: l.kind,
        description: l.description,
        quantityMilli: l.quantityMilli,
        unitPriceMinor: l.unitPriceMinor,
        amountMinor: totals.lineAmountsMinor[i]!,
        partUsedId: l.partUsedId ?? null,
      })),
    );
  }
  await tx
    .update(invoices)
    .set({ subtotalMinor: totals.subtotalMinor, taxMinor: totals.taxMinor, totalMinor: totals.totalMinor, updatedAt: sql`now()` })
    .where(and(eq(invoices.shopId, shopId), eq(invoices.id, invoiceId)));
}

/** The job's labour and repair-log parts as draft lines, at the shop's current rate. */
async function linesFromJob(tx: DbOrTx, shopId: number, jobId: number, labourRateMinor: number, currency: string): Promise<LineRow[]> {
  const [job] = await tx.select({ labourHours: jobs.labourHours }).from(jobs).where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)));
  if (!job) throw notFound('Job');
  const lines: LineRow[] = [];
  const hoursMilli = hoursToMilli(job.labourHours);
  if (hoursMilli > 0) {
    lines.push({
      kind: 'labour',
      description: `Bench labour: diagnosis, repair and proof measurements (${formatQuantity(hoursMilli)} h at ${formatMoney(labourRateMinor, currency)}/h)`,
      quantityMilli: hoursMilli,
      unitPriceMinor: labourRateMinor,
    });
  }
  const parts = await tx
    .select()
    .from(partsUsed)
    .where(and(eq(partsUsed.shopId, shopId), eq(partsUsed.jobId, jobId)))
    .orderBy(asc(partsUsed.createdAt), asc(partsUsed.id));
  for (const p of parts) {
    if (p.quantity <= 0) continue;
    lines.push({
      kind: 'part',
      description: [p.reference, p.partNumber, p.description].filter((s) => s.trim() !== '').join(' · '),
      quantityMilli: p.quantity * 1000,
      unitPriceMinor: Math.max(0, p.unitCostMinor),
      partUsedId: p.id,
    });
  }
  return lines;
}

/** A draft invoice for a job, numbered at once from the shop's counter (so drafts are never deleted, only voided). */
export async function createInvoiceFromJob(db: Db, user: SessionUser, input: CreateInvoiceRequest): Promise<Invoice> {
  const shopId = user.shop.id;
  const id = await db.transaction(async (tx) => {
    const [job] = await tx
      .select({ id: jobs.id, customerId: jobs.customerId })
      .from(jobs)
      .where(and(eq(jobs.shopId, shopId), eq(jobs.id, input.jobId)));
    if (!job) throw notFound('Job');
    const [shop] = await tx.select().from(shops).where(eq(shops.id, shopId));
    const number = await allocateInvoiceNumber(tx, shopId);
    const [row] = await tx
      .insert(invoices)
      .values({
        shopId,
        jobId: job.id,
        customerId: job.customerId,
        number,
        reference: invoiceReference(shop!.invoicePrefix, number),
        currency: shop!.currency,
        taxRateBp: shop!.taxRateBp,
        notes: input.notes,
        createdBy: user.id,
      })
      .returning({ id: invoices.id });
    await writeLines(tx, shopId, row!.id, await linesFromJob(tx, shopId, job.id, shop!.labourRateMinor, shop!.currency), shop!.taxRateBp);
    return row!.id;
  });
  return getInvoiceFor(db, user, id);
}

async function lockInvoice(tx: DbOrTx, shopId: number, id: number) {
  const [row] = await tx
    .select()
    .from(invoices)
    .where(and(eq(invoices.shopId, shopId), eq(invoices.id, id)))
    .for('update');
  if (!row) throw notFound('Invoice');
  return row;
}

export async function updateDraft(db: Db, user: SessionUser, id: number, input: UpdateInvoiceRequest): Promise<Invoice> {
  await db.transaction(async (tx) => {
    const inv = await lockInvoice(tx, user.shop.id, id);
    if (inv.status !== 'draft') throw conflict('Only a draft can be changed; void the invoice and make a new one');
    await tx.update(invoices).set({ notes: input.notes }).where(and(eq(invoices.shopId, user.shop.id), eq(invoices.id, id)));
    await writeLines(tx, user.shop.id, id, input.lines, inv.taxRateBp);
  });
  return getInvoiceFor(db, user, id);
}

/** Renders both PDFs and files the e-mail inside the caller's transaction. */
async function queueInvoiceEmail(tx: DbOrTx, runtime: BillingRuntime, user: SessionUser, inv: { id: number; jobId: number }) {
  const [full] = await loadInvoices(tx, user.shop.id, [inv.id]);
  const invoicePdf = await renderInvoicePdf(tx, user.shop.id, inv.id);
  const evidencePdf = await renderEvidencePdf(tx, user.shop.id, inv.jobId);
  const ctx = await loadMailContext(tx, user.shop.id, inv.jobId, runtime.publicUrl());
  return queueEmail(tx, {
    shopId: user.shop.id,
    kind: 'invoice',
    jobId: inv.jobId,
    invoiceId: inv.id,
    createdBy: user.id,
    mail: invoiceMail(ctx, full!, [
      { filename: `invoice-${full!.reference}.pdf`, contentType: 'application/pdf', content: invoicePdf },
      { filename: `evidence-${ctx.jobRef}.pdf`, contentType: 'application/pdf', content: evidencePdf },
    ]),
  });
}

/** Draft → sent: the invoice is fixed from here on, and goes to the customer with the evidence report. */
export async function sendInvoice(db: Db, runtime: BillingRuntime, user: SessionUser, id: number): Promise<Invoice> {
  const emailId = await db.transaction(async (tx) => {
    const inv = await lockInvoice(tx, user.shop.id, id);
    if (inv.status !== 'draft') throw conflict('This invoice has already been sent');
    const [{ n }] = (await tx
      .select({ n: sql<number>`count(*)::int` })
      .from(invoiceLines)
      .where(and(eq(invoiceLines.shopId, user.shop.id), eq(invoiceLines.invoiceId, id)))) as [{ n: number }];
    if (n === 0 || inv.totalMinor <= 0) throw new HttpError(400, 'Add at least one line with an amount before sending', 'bad_request');
    await tx.update(invoices).set({ status: 'sent', sentAt: sql`now()`, updatedAt: sql`now()` }).where(and(eq(invoices.shopId, user.shop.id), eq(invoices.id, id)));
    await recordJobEvent(tx, { shopId: user.shop.id, id: inv.jobId }, 'invoice_sent', `Invoice ${inv.reference} sent: ${formatMoney(inv.totalMinor, inv.currency)}`, user.id);
    return queueInvoiceEmail(tx, runtime, user, inv);
  });
  await deliverEmails(db, runtime.mailer, [emailId]);
  return getInvoiceFor(db, user, id);
}

/** Sends a sent or paid invoice again (a lost e-mail, a new address). */
export async function emailInvoiceAgain(db: Db, runtime: BillingRuntime, user: SessionUser, id: number): Promise<Invoice> {
  const emailId = await db.transaction(async (tx) => {
    const inv = await lockInvoice(tx, user.shop.id, id);
    if (inv.status !== 'sent' && inv.status !== 'paid') throw conflict('Only a sent or paid invoice can be e-mailed');
    return queueInvoiceEmail(tx, runtime, user, inv);
  });
  await deliverEmails(db, runtime.mailer, [emailId]);
  return getInvoiceFor(db, user, id);
}

export async function voidInvoice(db: Db, user: SessionUser, id: number, reason: string): Promise<Invoice> {
  await db.transaction(async (tx) => {
    const inv = await lockInvoice(tx, user.shop.id, id);
    if (inv.status === 'paid') throw conflict('A paid invoice cannot be voided; refund the payment first');
    if (inv.status === 'void') throw conflict('The invoice is already void');
    await tx.update(invoices).set({ status: 'void', voidReason: reason, voidedAt: sql`now()`, updatedAt: sql`now()` }).where(and(eq(invoices.shopId, user.shop.id), eq(invoices.id, id)));
    await recordJobEvent(tx, { shopId: user.shop.id, id: inv.jobId }, 'invoice_void', `Invoice ${inv.reference} void: ${reason}`, user.id);
  });
  return getInvoiceFor(db, user, id);
}

export interface SettleInput {
  method: 'online' | 'cash' | 'card_terminal' | 'bank_transfer';
  amountMinor: number;
  currency: string;
  providerRef: string | null;
  eventId: string | null;
  note: string;
  receivedBy: number | null;
}

/**
 * Marks a locked, sent invoice paid in full and files the receipt e-mail; returns the e-mail id.
 * Callers check the amount first; here it must match exactly.
 */
export async function settleInvoice(
  tx: DbOrTx,
  runtime: BillingRuntime,
  inv: { id: number; shopId: number; jobId: number; reference: string; totalMinor: number; currency: string },
  pay: SettleInput,
): Promise<number> {
  if (pay.amountMinor !== inv.totalMinor || pay.currency.toUpperCase() !== inv.currency.toUpperCase()) {
    throw conflict('The payment does not match the invoice total');
  }
  await tx.insert(payments).values({ shopId: inv.shopId, invoiceId: inv.id, ...pay, currency: inv.currency });
  await tx.update(invoices).set({ status: 'paid', paidAt: sql`now()`, updatedAt: sql`now()` }).where(and(eq(invoices.shopId, inv.shopId), eq(invoices.id, inv.id)));
  await recordJobEvent(tx, { shopId: inv.shopId, id: inv.jobId }, 'payment', `Payment received for ${inv.reference}: ${formatMoney(inv.totalMinor, inv.currency)}`, pay.receivedBy);
  const ctx = await loadMailContext(tx, inv.shopId, inv.jobId, runtime.publicUrl());
  return queueEmail(tx, {
    shopId: inv.shopId,
    kind: 'payment_received',
    jobId: inv.jobId,
    invoiceId: inv.id,
    createdBy: pay.receivedBy,
    mail: paymentReceivedMail(ctx, { reference: inv.reference, amountMinor: inv.totalMinor, currency: inv.currency }),
  });
}

/** The desk records a payment taken at the counter (cash, card terminal, bank transfer). */
export async function recordCounterPayment(db: Db, runtime: BillingRuntime, user: SessionUser, id: number, input: RecordPaymentRequest): Promise<Invoice> {
  const emailId = await db.transaction(async (tx) => {
    const inv = await lockInvoice(tx, user.shop.id, id);
    if (inv.status !== 'sent') throw conflict(inv.status === 'paid' ? 'The invoice is already paid' : 'Only a sent invoice can be paid');
    return settleInvoice(tx, runtime, inv, {
      method: input.method,
      amountMinor: inv.totalMinor,
      currency: inv.currency,
      providerRef: null,
      eventId: null,
      note: input.note,
      receivedBy: user.id,
    });
  });
  await deliverEmails(db, runtime.mailer, [emailId]);
  return getInvoiceFor(db, user, id);
}
