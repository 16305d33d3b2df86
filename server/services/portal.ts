import { and, asc, desc, eq, inArray, sql } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
import { customers, invoices, jobEvents, jobs, partsUsed, quotes, shops, units } from '../db/schema/index';
import type { SessionUser } from '../../shared/auth';
import type { JobBilling, PortalJob, PortalJobSummary, PortalUnit } from '../../shared/billing';
import { CUSTOMER_EVENT_KINDS } from '../../shared/jobs';
import { HttpError, notFound } from '../http-error';
import { jobReference } from './jobs';
import { listInvoices, loadInvoices } from './invoices';
import { listOutbox } from './outbox';
import { listQuotes } from './quotes';

/** Trail entries a customer may read: stage moves (without the staff's note) and the money steps. */
const PORTAL_EVENT_KINDS = [...CUSTOMER_EVENT_KINDS, 'quote_sent', 'quote_approved', 'quote_declined', 'quote_withdrawn', 'invoice_sent', 'payment'];

function customerOf(viewer: SessionUser): number {
  if (viewer.role !== 'customer' || viewer.customerId === null) throw new HttpError(403, 'Only a customer has this view', 'forbidden');
  return viewer.customerId;
}

const summaryColumns = {
  id: jobs.id,
  status: jobs.status,
  maker: units.maker,
  model: units.model,
  serial: units.serial,
  reportedFault: jobs.reportedFault,
  faultFound: jobs.faultFound,
  updatedAt: jobs.updatedAt,
  pendingQuote: sql<boolean>`exists (select 1 from ${quotes} where ${quotes.jobId} = ${jobs.id} and ${quotes.status} = 'pending')`,
  unpaidInvoices: sql<number>`(select count(*)::int from ${invoices} where ${invoices.jobId} = ${jobs.id} and ${invoices.status} = 'sent')`,
};

export async function listMyJobs(db: DbOrTx, viewer: SessionUser): Promise<PortalJobSummary[]> {
  const customerId = customerOf(viewer);
  const rows = await db
    .select(summaryColumns)
    .from(jobs)
    .innerJoin(units, eq(units.id, jobs.unitId))
    .where(and(eq(jobs.shopId, viewer.shop.id), eq(jobs.customerId, customerId)))
    .orderBy(desc(jobs.updatedAt));
  return rows.map((r) => ({
    id: r.id,
    reference: jobReference(r.id),
    status: r.status,
    unitLabel: `${r.maker} ${r.model}`,
    reportedFault: r.reportedFault,
    pendingQuote: r.pendingQuote,
    unpaidInvoices: r.unpaidInvoices,
    updatedAt: r.updatedAt.toISOString(),
  }));
}

export async function listMyUnits(db: DbOrTx, viewer: SessionUser): Promise<PortalUnit[]> {
  const customerId = customerOf(viewer);
  return db
    .select({ id: units.id, kind: units.kind, maker: units.maker, model: units.model, serial: units.serial })
    .from(units)
    .where(and(eq(units.shopId, viewer.shop.id), eq(units.customerId, customerId)))
    .orderBy(asc(units.maker), asc(units.model));
}

/** One of the customer's own jobs; another customer's (or shop's) job is simply not found. */
export async function getMyJob(db: DbOrTx, viewer: SessionUser, jobId: number): Promise<PortalJob> {
  const customerId = customerOf(viewer);
  const [r] = await db
    .select({ ...summaryColumns, shopName: shops.name })
    .from(jobs)
    .innerJoin(units, eq(units.id, jobs.unitId))
    .innerJoin(shops, eq(shops.id, jobs.shopId))
    .where(and(eq(jobs.shopId, viewer.shop.id), eq(jobs.customerId, customerId), eq(jobs.id, jobId)));
  if (!r) throw notFound('Job');
  const events = await db
    .select({ at: jobEvents.at, kind: jobEvents.kind, toStatus: jobEvents.toStatus, note: jobEvents.note })
    .from(jobEvents)
    .where(and(eq(jobEvents.shopId, viewer.shop.id), eq(jobEvents.jobId, jobId), inArray(jobEvents.kind, PORTAL_EVENT_KINDS)))
    .orderBy(asc(jobEvents.at), asc(jobEvents.id));
  const invoiceIds = (await listInvoices(db, viewer.shop.id, { jobId, customerId }))
    .filter((i) => i.status !== 'draft')
    .map((i) => i.id);
  return {
    id: r.id,
    reference: jobReference(r.id),
    status: r.status,
    unitLabel: `${r.maker} ${r.model}`,
    unitSerial: r.serial,
    reportedFault: r.reportedFault,
    faultFound: r.faultFound,
    shopName: r.shopName,
    pendingQuote: r.pendingQuote,
    unpaidInvoices: r.unpaidInvoices,
    updatedAt: r.updatedAt.toISOString(),
    events: events.map((e) => ({ at: e.at.toISOString(), kind: e.kind, toStatus: e.toStatus, note: e.kind === 'status' ? '' : e.note })),
    quotes: (await listQuotes(db, viewer.shop.id, jobId)).filter((q) => q.status !== 'withdrawn'),
    invoices: await loadInvoices(db, viewer.shop.id, invoiceIds),
  };
}

/** The money side of one job for the desk: estimates, invoices and the messages sent about it. */
export async function getJobBilling(db: DbOrTx, shopId: number, jobId: number): Promise<JobBilling> {
  const [r] = await db
    .select({
      id: jobs.id,
      status: jobs.status,
      maker: units.maker,
      model: units.model,
      customerName: customers.name,
      customerEmail: customers.email,
      labourHours: jobs.labourHours,
      currency: shops.currency,
      partsCount: sql<number>`(select count(*)::int from ${partsUsed} where ${partsUsed.jobId} = ${jobs.id})`,
    })
    .from(jobs)
    .innerJoin(units, eq(units.id, jobs.unitId))
    .innerJoin(customers, eq(customers.id, jobs.customerId))
    .innerJoin(shops, eq(shops.id, jobs.shopId))
    .where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)));
  if (!r) throw notFound('Job');
  return {
    jobId: r.id,
    reference: jobReference(r.id),
    status: r.status,
    unitLabel: `${r.maker} ${r.model}`,
    customerName: r.customerName,
    customerEmail: r.customerEmail,
    labourHours: r.labourHours,
    partsCount: r.partsCount,
    currency: r.currency,
    quotes: await listQuotes(db, shopId, jobId),
    invoices: await listInvoices(db, shopId, { jobId }),
    emails: await listOutbox(db, shopId, { jobId }),
  };
}
