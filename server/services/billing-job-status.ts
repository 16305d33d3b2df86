import { and, eq, sql } from 'drizzle-orm';
import type { DbOrTx } from '../db/client';
import { jobEvents, jobs } from '../db/schema/index';
import { JOB_MOVES } from '../../shared/job-transitions';
import { JOB_STATUS_LABELS, type JobStatus } from '../../shared/jobs';
import { conflict, notFound } from '../http-error';

export interface LockedJob {
  id: number;
  shopId: number;
  customerId: number;
  status: JobStatus;
}

/** Reads a job of the shop with a row lock, so a status check and the move that follows cannot race. */
export async function lockJob(tx: DbOrTx, shopId: number, jobId: number): Promise<LockedJob> {
  const [row] = await tx
    .select({ id: jobs.id, shopId: jobs.shopId, customerId: jobs.customerId, status: jobs.status })
    .from(jobs)
    .where(and(eq(jobs.shopId, shopId), eq(jobs.id, jobId)))
    .for('update');
  if (!row) throw notFound('Job');
  return row;
}

/**
 * Moves a locked job along the stage map of shared/job-transitions.ts and writes the audit event
 * in the same transaction. The quote flow moves jobs on the customer's word, so the stage map is
 * checked here but the per-role stage list is not (a customer's approval is not a bench action).
 */
export async function moveJobStatus(
  tx: DbOrTx,
  job: LockedJob,
  to: JobStatus,
  by: { userId: number; note: string },
): Promise<void> {
  if (job.status === to) return;
  if (!JOB_MOVES[job.status].includes(to)) {
    throw conflict(`The job is at “${JOB_STATUS_LABELS[job.status]}” and cannot go to “${JOB_STATUS_LABELS[to]}” from there`);
  }
  await tx
    .update(jobs)
    .set({ status: to, updatedAt: sql`now()` })
    .where(and(eq(jobs.shopId, job.shopId), eq(jobs.id, job.id)));
  await tx.insert(jobEvents).values({
    shopId: job.shopId,
    jobId: job.id,
    userId: by.userId,
    kind: 'status',
    fromStatus: job.status,
    toStatus: to,
    note: by.note,
  });
  job.status = to;
}

/** An audit line on the job's trail that is not a stage move (invoice sent, payment received…). */
export async function recordJobEvent(
  tx: DbOrTx,
  job: { shopId: number; id: number },
  kind: string,
  note: string,
  userId: number | null,
): Promise<void> {
  await tx.insert(jobEvents).values({ shopId: job.shopId, jobId: job.id, userId, kind, note });
  await tx.update(jobs).set({ updatedAt: sql`now()` }).where(and(eq(jobs.shopId, job.shopId), eq(jobs.id, job.id)));
}
