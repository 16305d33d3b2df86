import { and, eq, type Placeholder } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
import { jobs } from '../db/schema/index';
import type { SessionUser } from '../../shared/auth';
import { notFound } from '../http-error';

export interface JobRef {
  id: number;
  shopId: number;
  customerId: number;
  unitId: number;
  status: (typeof jobs.$inferSelect)['status'];
}

const refColumns = { id: jobs.id, shopId: jobs.shopId, customerId: jobs.customerId, unitId: jobs.unitId, status: jobs.status };

/**
 * The access rule as a condition: the job is in the viewer's shop and, for a customer, theirs.
 * Values may be a prepared statement's placeholders.
 */
export function visibleJobCondition(customerOnly: boolean, shopId: number | Placeholder, jobId: number | Placeholder, customerId: number | Placeholder) {
  return and(eq(jobs.shopId, shopId), eq(jobs.id, jobId), customerOnly ? eq(jobs.customerId, customerId) : undefined);
}

/**
 * The job if this viewer may see it: staff within their shop, a customer only their own.
 * Anything else is "not found", so ids of other shops or customers reveal nothing.
 */
export async function jobForViewer(db: DbOrTx, viewer: SessionUser, jobId: number): Promise<JobRef> {
  const [row] = await db
    .select(refColumns)
    .from(jobs)
    .where(visibleJobCondition(viewer.role === 'customer', viewer.shop.id, jobId, viewer.customerId ?? -1));
  if (!row) throw notFound('Job');
  return row;
}

/** The job within the staff member's shop, or "not found". */
export async function jobInShop(db: DbOrTx, shopId: number, jobId: number): Promise<JobRef> {
  const [row] = await db.select(refColumns).from(jobs).where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)));
  if (!row) throw notFound('Job');
  return row;
}

/** Same as jobForViewer for staff, but holds the row lock until the transaction ends. */
export async function lockJob(tx: DbOrTx, shopId: number, jobId: number): Promise<JobRef> {
  const [row] = await tx
    .select(refColumns)
    .from(jobs)
    .where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)))
    .for('update');
  if (!row) throw notFound('Job');
  return row;
}
