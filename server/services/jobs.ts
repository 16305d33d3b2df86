import { and, asc, desc, eq, ilike, inArray, isNull, ne, or, sql } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import type { DbOrTx } from '../db/client';
import { customers, jobEvents, jobs, shops, units, users } from '../db/schema/index';
import { CUSTOMER_EVENT_KINDS, type JobDetail, type JobEvent, type JobListQuery, type JobSummary, type Technician } from '../../shared/jobs';
import type { SessionUser } from '../../shared/auth';
import { badRequest, notFound } from '../http-error';
import { visibleJobCondition } from './job-access';
import { prepared } from '../db/prepared';

export const jobReference = (id: number) => `J-${String(id).padStart(4, '0')}`;

const technician = alias(users, 'technician');
const like = (s: string) => `%${s.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;

const DEFAULT_QUERY: JobListQuery = { q: '', sort: 'updated', dir: 'desc' };

/** What decides the list query's SQL text; the values themselves travel as parameters. */
export interface ListShape {
  ownFirst: boolean;
  customerOnly: boolean;
  status: 'open' | 'stage' | null;
  technician: 'unassigned' | 'one' | null;
  customer: boolean;
  search: 'text' | 'reference' | null;
  sort: JobListQuery['sort'];
  dir: JobListQuery['dir'];
}

const param = sql.placeholder;

/**
 * The prepared statement's name for a shape. PostgreSQL keeps 63 characters of a name, so one
 * letter per part: the values of each part start with different letters.
 */
export function listStatementName(shape: ListShape): string {
  const letter = (v: string | boolean | null) => (v === null ? 'x' : v === true ? 'y' : v === false ? 'n' : v.charAt(0));
  return `jobs_list_${Object.values(shape).map(letter).join('')}`;
}

function buildList(db: DbOrTx, shape: ListShape, name: string) {
  const sortColumn = { updated: jobs.updatedAt, created: jobs.createdAt, stage: jobs.status }[shape.sort];
  const order = shape.dir === 'asc' ? asc(sortColumn) : desc(sortColumn);
  const ownFirst = shape.ownFirst ? [sql`(${jobs.assignedTechnicianId} is distinct from ${param('viewerId')})`] : [];
  const pattern = param('pattern');
  return db
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
        eq(jobs.shopId, param('shopId')),
        shape.customerOnly ? eq(jobs.customerId, param('viewerCustomerId')) : undefined,
        shape.status === 'open' ? ne(jobs.status, 'collected') : shape.status === 'stage' ? eq(jobs.status, param('status')) : undefined,
        shape.technician === 'unassigned'
          ? isNull(jobs.assignedTechnicianId)
          : shape.technician === 'one'
            ? eq(jobs.assignedTechnicianId, param('technicianId'))
            : undefined,
        shape.customer ? eq(jobs.customerId, param('customerId')) : undefined,
        shape.search
          ? or(
              ilike(sql`${units.maker} || ' ' || ${units.model}`, pattern),
              ilike(units.serial, pattern),
              ilike(customers.name, pattern),
              ilike(jobs.reportedFault, pattern),
              shape.search === 'reference' ? eq(jobs.id, param('referenceId')) : undefined,
            )
          : undefined,
      ),
    )
    .orderBy(...ownFirst, order, desc(jobs.id))
    .prepare(name);
}

/**
 * The shop's jobs, filtered; a customer sees only their own. A technician's own queue comes
 * first, then the requested order.
 */
export async function listJobs(db: DbOrTx, viewer: SessionUser, query: JobListQuery = DEFAULT_QUERY): Promise<JobSummary[]> {
  const reference = query.q ? /^j-?0*(\d{1,9})$/i.exec(query.q) : null;
  const shape: ListShape = {
    ownFirst: viewer.role === 'technician',
    customerOnly: viewer.role === 'customer',
    status: query.status === 'open' ? 'open' : query.status ? 'stage' : null,
    technician: query.technicianId === 'none' ? 'unassigned' : query.technicianId ? 'one' : null,
    customer: Boolean(query.customerId),
    // 'reference': text search, or the job reference the text also reads as.
    search: !query.q ? null : reference ? 'reference' : 'text',
    sort: query.sort,
    dir: query.dir,
  };
  // The job list is the busiest read: one prepared statement per shape (a handful in practice).
  const name = listStatementName(shape);
  const rows = await prepared(db, name, (n) => buildList(db, shape, n)).execute({
    shopId: viewer.shop.id,
    viewerId: viewer.id,
    viewerCustomerId: viewer.customerId ?? -1,
    status: query.status,
    technicianId: typeof query.technicianId === 'number' ? query.technicianId : null,
    customerId: query.customerId ?? null,
    pattern: query.q ? like(query.q) : null,
    referenceId: reference ? Number(reference[1]) : null,
  });
  return rows.map((r) => ({
    ...r,
    reference: jobReference(r.id),
    createdAt: r.createdAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
  }));
}

/** The job's trail as one JSON array, read in the same query as the job (one round trip). */
function trailOf(forCustomer: boolean) {
  const kinds = forCustomer ? sql`and ${inArray(jobEvents.kind, [...CUSTOMER_EVENT_KINDS])}` : sql``;
  return sql<TrailRow[]>`(
    select coalesce(json_agg(json_build_object(
      'id', ${jobEvents.id}, 'kind', ${jobEvents.kind}, 'fromStatus', ${jobEvents.fromStatus}, 'toStatus', ${jobEvents.toStatus},
      'note', ${jobEvents.note}, 'at', ${jobEvents.at}, 'userName', ${users.name}
    ) order by ${jobEvents.at}, ${jobEvents.id}), '[]'::json)
    from ${jobEvents} left join ${users} on ${users.id} = ${jobEvents.userId}
    where ${jobEvents.jobId} = ${jobs.id} ${kinds}
  )`;
}

type TrailRow = Omit<JobEvent, 'at'> & { at: string };

function buildDetail(db: DbOrTx, customerOnly: boolean, name: string) {
  return db
    .select({
      job: {
        id: jobs.id,
        status: jobs.status,
        reportedFault: jobs.reportedFault,
        accessories: jobs.accessories,
        conditionNotes: jobs.conditionNotes,
        faultFound: jobs.faultFound,
        assignedTechnicianId: jobs.assignedTechnicianId,
        createdAt: jobs.createdAt,
        updatedAt: jobs.updatedAt,
      },
      unit: { id: units.id, kind: units.kind, maker: units.maker, model: units.model, serial: units.serial },
      customer: { id: customers.id, name: customers.name, email: customers.email, phone: customers.phone },
      technicianName: technician.name,
      currency: shops.currency,
      events: trailOf(customerOnly),
    })
    .from(jobs)
    .innerJoin(units, eq(units.id, jobs.unitId))
    .innerJoin(customers, eq(customers.id, jobs.customerId))
    .innerJoin(shops, eq(shops.id, jobs.shopId))
    .leftJoin(technician, eq(technician.id, jobs.assignedTechnicianId))
    .where(visibleJobCondition(customerOnly, param('shopId'), param('jobId'), param('customerId')))
    .prepare(name);
}

/** One job with its unit, customer and trail, as this viewer may see it. */
export async function getJobDetail(db: DbOrTx, viewer: SessionUser, jobId: number): Promise<JobDetail> {
  // Access is checked in the same query that reads the job (the rule of jobForViewer).
  const customerOnly = viewer.role === 'customer';
  const detail = prepared(db, customerOnly ? 'job_detail_customer' : 'job_detail_staff', (n) => buildDetail(db, customerOnly, n));
  const [row] = await detail.execute({ shopId: viewer.shop.id, jobId, customerId: viewer.customerId ?? -1 });
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
    events: row.events.map((e) => ({
      ...e,
      // A stage change's note is written for colleagues; the customer sees the move itself.
      note: customerOnly && e.kind === 'status' ? '' : e.note,
      // json_build_object writes PostgreSQL's timestamp text; the API speaks ISO 8601 UTC.
      at: new Date(e.at).toISOString(),
    })),
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
