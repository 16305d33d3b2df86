import { pgTable, pgEnum, integer, text, timestamp, index, doublePrecision, jsonb } from 'drizzle-orm/pg-core';
import { JOB_STATUSES } from '../../../shared/jobs';
import { shops, users } from './shop';
import { customers, units } from './customers';
import { SEARCH_CONFIG, tsvector } from './search-columns';
import { sql, type SQL } from 'drizzle-orm';

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
    /** Input crosstalk reference levels typed in, per phase: input → dBFS (shared/input-crosstalk-compare.ts). */
    crosstalkReferences: jsonb().$type<{ before: Record<string, number>; after: Record<string, number> }>().notNull().default({ before: {}, after: {} }),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    /** The fault as reported and as found weigh most; intake remarks less. */
    searchVector: tsvector()
      .notNull()
      .generatedAlwaysAs(
        (): SQL =>
          sql`setweight(to_tsvector(${SEARCH_CONFIG}, ${jobs.reportedFault} || ' ' || ${jobs.faultFound}), 'A') || setweight(to_tsvector(${SEARCH_CONFIG}, ${jobs.conditionNotes} || ' ' || ${jobs.accessories}), 'C')`,
      ),
  },
  (t) => [
    index('jobs_shop_idx').on(t.shopId, t.status),
    index('jobs_customer_idx').on(t.customerId),
    index('jobs_unit_idx').on(t.unitId),
    index('jobs_search_idx').using('gin', t.searchVector).with({ fastupdate: false }),
  ],
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
    searchVector: tsvector()
      .notNull()
      .generatedAlwaysAs((): SQL => sql`to_tsvector(${SEARCH_CONFIG}, ${jobEvents.note})`),
  },
  (t) => [index('job_events_job_idx').on(t.jobId, t.at), index('job_events_search_idx').using('gin', t.searchVector).with({ fastupdate: false })],
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
