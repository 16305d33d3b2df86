import { eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { jobEvents, jobs } from '../db/schema/index';
import type { JobAssign, JobDetail, JobNote, JobStatusChange, JobUpdate } from '../../shared/jobs';
import { JOB_STATUS_LABELS } from '../../shared/jobs';
import { checkMove } from '../../shared/job-transitions';
import type { SessionUser } from '../../shared/auth';
import { HttpError, conflict } from '../http-error';
import { lockJob } from './job-access';
import { assertTechnician, getJobDetail } from './jobs';

// Every change to a job writes its trail entry in the same transaction, under the job's row lock,
// so the trail and the job never disagree and two people cannot move the same job at once.

type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];

async function withJob(db: Db, user: SessionUser, jobId: number, change: (tx: Tx, job: Awaited<ReturnType<typeof lockJob>>) => Promise<void>) {
  await db.transaction(async (tx) => {
    const job = await lockJob(tx, user.shop.id, jobId);
    await change(tx, job);
  });
  return getJobDetail(db, user, jobId);
}

const event = (user: SessionUser, jobId: number, kind: string, note: string, extra: Partial<typeof jobEvents.$inferInsert> = {}) => ({
  shopId: user.shop.id,
  jobId,
  userId: user.id,
  kind,
  note,
  ...extra,
});

export function changeStatus(db: Db, user: SessionUser, jobId: number, input: JobStatusChange): Promise<JobDetail> {
  return withJob(db, user, jobId, async (tx, job) => {
    if (input.from && input.from !== job.status) {
      throw conflict(`The job has meanwhile moved to “${JOB_STATUS_LABELS[job.status]}”; reload and try again`);
    }
    const check = checkMove(user.role, job.status, input.to);
    if (!check.ok) throw new HttpError(check.reason === 'role' ? 403 : 409, check.message, check.reason === 'role' ? 'forbidden' : 'conflict');
    await tx.update(jobs).set({ status: input.to, updatedAt: new Date() }).where(eq(jobs.id, jobId));
    await tx.insert(jobEvents).values(event(user, jobId, 'status', input.note, { fromStatus: job.status, toStatus: input.to }));
  });
}

export function updateIntake(db: Db, user: SessionUser, jobId: number, input: JobUpdate): Promise<JobDetail> {
  return withJob(db, user, jobId, async (tx) => {
    await tx.update(jobs).set({ ...input, updatedAt: new Date() }).where(eq(jobs.id, jobId));
    const labels = { reportedFault: 'reported fault', accessories: 'accessories', conditionNotes: 'condition notes' } as const;
    const changed = (Object.keys(input) as (keyof JobUpdate)[]).map((k) => labels[k]).join(', ');
    await tx.insert(jobEvents).values(event(user, jobId, 'edited', `Changed: ${changed}`));
  });
}

export function setFaultFound(db: Db, user: SessionUser, jobId: number, text: string): Promise<JobDetail> {
  return withJob(db, user, jobId, async (tx) => {
    await tx.update(jobs).set({ faultFound: text, updatedAt: new Date() }).where(eq(jobs.id, jobId));
    await tx.insert(jobEvents).values(event(user, jobId, 'fault_found', text || '(cleared)'));
  });
}

export function addNote(db: Db, user: SessionUser, jobId: number, input: JobNote): Promise<JobDetail> {
  return withJob(db, user, jobId, async (tx) => {
    await tx.update(jobs).set({ updatedAt: new Date() }).where(eq(jobs.id, jobId));
    await tx.insert(jobEvents).values(event(user, jobId, input.visibleToCustomer ? 'customer_note' : 'note', input.text));
  });
}

export function assignTechnician(db: Db, user: SessionUser, jobId: number, input: JobAssign): Promise<JobDetail> {
  return withJob(db, user, jobId, async (tx) => {
    const name = input.technicianId === null ? null : await assertTechnician(tx, user.shop.id, input.technicianId);
    await tx.update(jobs).set({ assignedTechnicianId: input.technicianId, updatedAt: new Date() }).where(eq(jobs.id, jobId));
    await tx.insert(jobEvents).values(event(user, jobId, 'assigned', name ? `Assigned to ${name}` : 'Unassigned'));
  });
}
