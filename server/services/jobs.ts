import { and, desc, eq, sql } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import type { DbOrTx } from '../db/client';
import { customers, jobs, units, users } from '../db/schema/index';
import type { JobSummary } from '../../shared/jobs';
import type { SessionUser } from '../../shared/auth';

export const jobReference = (id: number) => `J-${String(id).padStart(4, '0')}`;

const technician = alias(users, 'technician');

/** The shop's jobs; a customer sees only their own. */
export async function listJobs(db: DbOrTx, viewer: SessionUser): Promise<JobSummary[]> {
  const rows = await db
    .select({
      id: jobs.id,
      status: jobs.status,
      reportedFault: jobs.reportedFault,
      unitId: jobs.unitId,
      unitLabel: sql<string>`${units.maker} || ' ' || ${units.model}`,
      customerId: jobs.customerId,
      customerName: customers.name,
      assignedTechnicianId: jobs.assignedTechnicianId,
      assignedTechnicianName: technician.name,
      createdAt: jobs.createdAt,
      updatedAt: jobs.updatedAt,
    })
    .from(jobs)
    .innerJoin(units, eq(units.id, jobs.unitId))
    .innerJoin(customers, eq(customers.id, jobs.customerId))
    .leftJoin(technician, eq(technician.id, jobs.assignedTechnicianId))
    .where(
      and(
        eq(jobs.shopId, viewer.shop.id),
        viewer.role === 'customer' ? eq(jobs.customerId, viewer.customerId ?? -1) : undefined,
      ),
    )
    .orderBy(desc(jobs.updatedAt));
  return rows.map((r) => ({
    ...r,
    reference: jobReference(r.id),
    createdAt: r.createdAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
  }));
}
