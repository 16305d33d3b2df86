import { and, asc, desc, eq, inArray, sql, type SQL } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
import { customers, invoiceCounters, invoiceLines, invoices, jobs, payments, units } from '../db/schema/index';
import type { Invoice, InvoiceStatus, InvoiceSummary } from '../../shared/billing';
import type { SessionUser } from '../../shared/auth';
import { notFound } from '../http-error';
import { jobReference } from './jobs';

const iso = (d: Date | null) => (d ? d.toISOString() : null);

/** "CAW-0042": the shop's prefix and the gap-free number. */
export const invoiceReference = (prefix: string, n: number) => `${prefix}-${String(n).padStart(4, '0')}`;

/**
 * Takes the shop's next invoice number. The upsert holds the counter row's lock until the
 * caller's transaction ends, so concurrent invoices queue here and a rolled-back one gives its
 * number back: numbers have no gaps and no repeats.
 */
export async function allocateInvoiceNumber(tx: DbOrTx, shopId: number): Promise<number> {
  const [row] = await tx
    .insert(invoiceCounters)
    .values({ shopId, lastNumber: 1 })
    .onConflictDoUpdate({ target: invoiceCounters.shopId, set: { lastNumber: sql`${invoiceCounters.lastNumber} + 1` } })
    .returning({ n: invoiceCounters.lastNumber });
  return row!.n;
}

const summaryColumns = {
  id: invoices.id,
  number: invoices.number,
  reference: invoices.reference,
  status: invoices.status,
  jobId: invoices.jobId,
  customerId: invoices.customerId,
  customerName: customers.name,
  unitLabel: sql<string>`${units.maker} || ' ' || ${units.model}`,
  currency: invoices.currency,
  totalMinor: invoices.totalMinor,
  createdAt: invoices.createdAt,
  sentAt: invoices.sentAt,
  paidAt: invoices.paidAt,
};

async function selectSummaries(db: DbOrTx, where: SQL | undefined): Promise<InvoiceSummary[]> {
  const rows = await db
    .select(summaryColumns)
    .from(invoices)
    .innerJoin(customers, eq(customers.id, invoices.customerId))
    .innerJoin(jobs, eq(jobs.id, invoices.jobId))
    .innerJoin(units, eq(units.id, jobs.unitId))
    .where(where)
    .orderBy(desc(invoices.number));
  return rows.map((r) => ({
    ...r,
    jobReference: jobReference(r.jobId),
    createdAt: r.createdAt.toISOString(),
    sentAt: iso(r.sentAt),
    paidAt: iso(r.paidAt),
  }));
}

export async function listInvoices(
  db: DbOrTx,
  shopId: number,
  filter: { status?: InvoiceStatus; jobId?: number; customerId?: number } = {},
): Promise<InvoiceSummary[]> {
  return selectSummaries(
    db,
    and(
      eq(invoices.shopId, shopId),
      filter.status ? eq(invoices.status, filter.status) : undefined,
      filter.jobId ? eq(invoices.jobId, filter.jobId) : undefined,
      filter.customerId ? eq(invoices.customerId, filter.customerId) : undefined,
    ),
  );
}

/** Full invoices with lines and payments, for a set of ids already scoped by the caller. */
export async function loadInvoices(db: DbOrTx, shopId: number, ids: number[]): Promise<Invoice[]> {
  if (ids.length === 0) return [];
  const summaries = await selectSummaries(db, and(eq(invoices.shopId, shopId), inArray(invoices.id, ids)));
  const heads = await db
    .select({
      id: invoices.id,
      taxRateBp: invoices.taxRateBp,
      subtotalMinor: invoices.subtotalMinor,
      taxMinor: invoices.taxMinor,
      notes: invoices.notes,
      voidReason: invoices.voidReason,
    })
    .from(invoices)
    .where(and(eq(invoices.shopId, shopId), inArray(invoices.id, ids)));
  const lines = await db
    .select()
    .from(invoiceLines)
    .where(and(eq(invoiceLines.shopId, shopId), inArray(invoiceLines.invoiceId, ids)))
    .orderBy(asc(invoiceLines.position));
  const paid = await db
    .select()
    .from(payments)
    .where(and(eq(payments.shopId, shopId), inArray(payments.invoiceId, ids)))
    .orderBy(asc(payments.receivedAt));
  return summaries.map((s) => {
    const head = heads.find((h) => h.id === s.id)!;
    return {
      ...s,
      taxRateBp: head.taxRateBp,
      subtotalMinor: head.subtotalMinor,
      taxMinor: head.taxMinor,
      notes: head.notes,
      voidReason: head.voidReason,
      lines: lines
        .filter((l) => l.invoiceId === s.id)
        .map((l) => ({
          id: l.id,
          position: l.position,
          kind: l.kind,
          description: l.description,
          quantityMilli: l.quantityMilli,
          unitPriceMinor: l.unitPriceMinor,
          amountMinor: l.amountMinor,
        })),
      payments: paid
        .filter((p) => p.invoiceId === s.id)
        .map((p) => ({
          id: p.id,
          amountMinor: p.amountMinor,
          currency: p.currency,
          method: p.method,
          providerRef: p.providerRef,
          note: p.note,
          receivedAt: p.receivedAt.toISOString(),
        })),
    };
  });
}

/**
 * One invoice as `viewer` may see it: staff see the shop's, a customer only their own and never a
 * draft (a draft is still being written). Anything else is "not found", not "forbidden", so ids
 * of other people's invoices reveal nothing.
 */
export async function getInvoiceFor(db: DbOrTx, viewer: SessionUser, id: number): Promise<Invoice> {
  const [row] = await db
    .select({ id: invoices.id, customerId: invoices.customerId, status: invoices.status })
    .from(invoices)
    .where(and(eq(invoices.shopId, viewer.shop.id), eq(invoices.id, id)));
  if (!row) throw notFound('Invoice');
  if (viewer.role === 'customer' && (row.customerId !== viewer.customerId || row.status === 'draft')) throw notFound('Invoice');
  const [invoice] = await loadInvoices(db, viewer.shop.id, [id]);
  return invoice!;
}
