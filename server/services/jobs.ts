import { and, asc, desc, eq, ilike, inArray, isNull, ne, or, sql, type SQL } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import type { DbOrTx } from '../db/client';
import { customers, jobEvents, jobs, shops, units, users } from '../db/schema/index';
import { CUSTOMER_EVENT_KINDS, type JobDetail, type JobEvent, type JobListQuery, type JobSummary, type Technician } from '../../shared/jobs';
import type { SessionUser } from '../../shared/auth';
import { badRequest, notFound } from '../http-error';
import { jobForViewer } from './job-access';

export const jobReference = (id: number) => `J-${String(id).padStart(4, '0')}`;

const technician = alias(users, 'technician');
const like = (s: string) => `%${s.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;

function searchCondition(q: string): SQL | undefined {
  if (!q) return undefined;
  const pattern = like(q);
  const ref = /^j-?0*(\d{1,9})$/i.exec(q);
  return or(
    ilike(sql`${units.maker} || ' ' || ${units.model}`, pattern),
    ilike(units.serial, pattern),
    ilike(customers.name, pattern),
    ilike(jobs.reportedFault, pattern),
    ref ? eq(jobs.id, Number(ref[1])) : undefined,
  );
}

const DEFAULT_QUERY: JobListQuery = { q: '', sort: 'updated', dir: 'desc' };

/**
 * The shop's jobs, filtered; a customer sees only their own. A technician's own queue comes
 * first, then the requested order.
 */
export async function listJobs(db: DbOrTx, viewer: SessionUser, query: JobListQuery = DEFAULT_QUERY): Promise<JobSummary[]> {
  const sortColumn = { updated: jobs.updatedAt, created: jobs.createdAt, stage: jobs.status }[query.sort];
  const order = query.dir === 'asc' ? asc(sortColumn) : desc(sortColumn);
  const ownFirst = viewer.role === 'technician' ? [sql`(${jobs.assignedTechnicianId} is distinct from ${viewer.id})`] : [];
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
        query.status === 'open' ? ne(jobs.status, 'collected') : query.status ? eq(jobs.status, query.status) : undefined,
        query.technicianId === 'none'
          ? isNull(jobs.assignedTechnicianId)
          : query.technicianId
            ? eq(jobs.assignedTechnicianId, query.technicianId)
            : undefined,
        query.customerId ? eq(jobs.customerId, query.customerId) : undefined,
        searchCondition(query.q),
      ),
    )
    .orderBy(...ownFirst, order, desc(jobs.id));
  return rows.map((r) => ({
    ...r,
    reference: jobReference(r.id),
    createdAt: r.createdAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
  }));
}

async function listEvents(db: DbOrTx, jobId: number, forCustomer: boolean): Promise<JobEvent[]> {
  const rows = await db
    .select({
      id: jobEvents.id,
      kind: jobEvents.kind,
      fromStatus: jobEvents.fromStatus,
      toStatus: jobEvents.toStatus,
      note: jobEvents.note,
      at: jobEvents.at,
      userName: users.name,
    })
    .from(jobEvents)
    .leftJoin(users, eq(users.id, jobEvents.userId))
    .where(and(eq(jobEvents.jobId, jobId), forCustomer ? inArray(jobEvents.kind, [...CUSTOMER_EVENT_KINDS]) : undefined))
    .orderBy(asc(jobEvents.at), asc(jobEvents.id));
  return rows.map((r) => ({
    ...r,
    // A stage change's note is written for colleagues; the customer sees the move itself.
    note: forCustomer && r.kind === 'status' ? '' : r.note,
    at: r.at.toISOString(),
  }));
}

/** One job with its unit, customer and trail, as this viewer may see it. */
export async function getJobDetail(db: DbOrTx, viewer: SessionUser, jobId: number): Promise<JobDetail> {
  await jobForViewer(db, viewer, jobId);
  const [row] = await db
    .select({
      job: jobs,
      unit: { id: units.id, kind: units.kind, maker: units.maker, model: units.model, serial: units.serial },
      customer: { id: customers.id, name: customers.name, email: customers.email, phone: customers.phone },
      technicianName: technician.name,
      currency: shops.currency,
    })
    .from(jobs)
    .innerJoin(units, eq(units.id, jobs.unitId))
    .innerJoin(customers, eq(customers.id, jobs.customerId))
    .innerJoin(shops, eq(shops.id, jobs.shopId))
    .leftJoin(technician, eq(technician.id, jobs.assignedTechnicianId))
    .where(eq(jobs.id, jobId));
  if (!row) throw notFound('Job');
  const { job } = row;
  return {
    id: job.id,
    reference: jobReference(job.id),
    status: job.status,
    reportedFault: job.reportedFault,
    accessories: job.accessories,
    conditionNotes: job.conditionNotes,
    faultFound: job.faultFound,
    unit: row.unit,
    customer: row.customer,
    assignedTechnician:
      job.assignedTechnicianId !== null && row.technicianName !== null ? { id: job.assignedTechnicianId, name: row.technicianName } : null,
    currency: row.currency,
    events: await listEvents(db, jobId, viewer.role === 'customer'),
    createdAt: job.createdAt.toISOString(),
    updatedAt: job.updatedAt.toISOString(),
  };
}

/** Staff a job can be assigned to: active technicians, and owners, who often work the bench too. */
export async function listTechnicians(db: DbOrTx, shopId: number): Promise<Technician[]> {
  return db
    .select({ id: users.id, name: users.name, role: users.role })
    .from(users)
    .where(and(eq(users.shopId, shopId), eq(users.active, true), inArray(users.role, ['technician', 'owner'])))
    .orderBy(desc(eq(users.role, 'technician')), asc(users.name));
}

/** Throws unless the user may take bench work in this shop. */
export async function assertTechnician(db: DbOrTx, shopId: number, userId: number): Promise<string> {
  const found = (await listTechnicians(db, shopId)).find((t) => t.id === userId);
  if (!found) throw badRequest('Assign an active technician of this shop');
  return found.name;
}
