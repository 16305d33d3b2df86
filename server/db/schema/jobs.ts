import { pgTable, pgEnum, integer, text, timestamp, index, doublePrecision } from 'drizzle-orm/pg-core';
import { JOB_STATUSES } from '../../../shared/jobs';
import { shops, users } from './shop';
import { customers, units } from './customers';

export const jobStatusEnum = pgEnum('job_status', JOB_STATUSES);

export const jobs = pgTable(
  'jobs',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    unitId: integer().notNull().references(() => units.id),
    customerId: integer().notNull().references(() => customers.id),
    status: jobStatusEnum().notNull().default('booked_in'),
    reportedFault: text().notNull(),
    accessories: text().notNull().default(''),
    conditionNotes: text().notNull().default(''),
    faultFound: text().notNull().default(''),
    assignedTechnicianId: integer().references(() => users.id),
    labourHours: doublePrecision().notNull().default(0),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('jobs_shop_idx').on(t.shopId, t.status), index('jobs_customer_idx').on(t.customerId)],
);

/** The job's audit trail: status moves, notes and other changes, with who and when. */
export const jobEvents = pgTable(
  'job_events',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    jobId: integer()
      .notNull()
      .references(() => jobs.id, { onDelete: 'cascade' }),
    userId: integer().references(() => users.id),
    kind: text().notNull(),
    fromStatus: jobStatusEnum(),
    toStatus: jobStatusEnum(),
    note: text().notNull().default(''),
    at: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('job_events_job_idx').on(t.jobId, t.at)],
);

/** Ordered stages of the unit's signal path where the technician probes. */
export const testPoints = pgTable(
  'test_points',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    jobId: integer()
      .notNull()
      .references(() => jobs.id, { onDelete: 'cascade' }),
    position: integer().notNull(),
    name: text().notNull(),
    description: text().notNull().default(''),
  },
  (t) => [index('test_points_job_idx').on(t.jobId, t.position)],
);
