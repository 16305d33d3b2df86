import { and, eq } from 'drizzle-orm';
import type { Db } from '../db/client';
import { jobEvents, jobs, testPoints, units } from '../db/schema/index';
import type { JobCreate, JobDetail } from '../../shared/jobs';
import type { SessionUser } from '../../shared/auth';
import { SIGNAL_PATH_TEMPLATES } from '../../shared/test-points';
import { notFound } from '../http-error';
import { assertTechnician, getJobDetail } from './jobs';

/**
 * Books a unit in: the job, its first trail entry and the signal-path template for the unit's
 * kind are written together or not at all.
 */
export async function createJob(db: Db, user: SessionUser, input: JobCreate): Promise<JobDetail> {
  const shopId = user.shop.id;
  const jobId = await db.transaction(async (tx) => {
    const [unit] = await tx
      .select({ id: units.id, customerId: units.customerId, kind: units.kind })
      .from(units)
      .where(and(eq(units.shopId, shopId), eq(units.id, input.unitId)));
    if (!unit) throw notFound('Unit');
    if (input.assignedTechnicianId !== null) await assertTechnician(tx, shopId, input.assignedTechnicianId);
    const [job] = await tx
      .insert(jobs)
      .values({
        shopId,
        unitId: unit.id,
        customerId: unit.customerId,
        status: 'booked_in',
        reportedFault: input.reportedFault,
        accessories: input.accessories,
        conditionNotes: input.conditionNotes,
        assignedTechnicianId: input.assignedTechnicianId,
      })
      .returning({ id: jobs.id });
    const id = job!.id;
    await tx.insert(jobEvents).values({ shopId, jobId: id, userId: user.id, kind: 'status', toStatus: 'booked_in', note: 'Booked in' });
    const template = SIGNAL_PATH_TEMPLATES[unit.kind];
    if (template.length) {
      await tx.insert(testPoints).values(template.map((t, i) => ({ shopId, jobId: id, position: i + 1, name: t.name, description: t.description })));
    }
    return id;
  });
  return getJobDetail(db, user, jobId);
}
