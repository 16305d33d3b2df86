import {
  pgTable,
  pgEnum,
  integer,
  text,
  timestamp,
  doublePrecision,
  jsonb,
  bigint,
  index,
  uniqueIndex,
  varchar,
} from 'drizzle-orm/pg-core';
import { shops, users } from './shop';
import { jobs, testPoints } from './jobs';

export const capturePhaseEnum = pgEnum('capture_phase', ['before', 'after']);
export const stimulusEnum = pgEnum('stimulus', ['tone', 'silence', 'sweep', 'programme']);
export const captureStateEnum = pgEnum('capture_state', ['queued', 'running', 'done', 'failed']);

/** Volts RMS at 0 dBFS for a sound card and probe, so dBFS can be read as dBV/dBu. */
export const calibrationProfiles = pgTable(
  'calibration_profiles',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    name: text().notNull(),
    voltsAtFullScale: doublePrecision().notNull(),
    probeAttenuation: doublePrecision().notNull().default(1),
    notes: text().notNull().default(''),
    createdBy: integer().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('calibration_profiles_shop_idx').on(t.shopId)],
);

export const captures = pgTable(
  'captures',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    jobId: integer()
      .notNull()
      .references(() => jobs.id, { onDelete: 'cascade' }),
    testPointId: integer().references(() => testPoints.id, { onDelete: 'set null' }),
    phase: capturePhaseEnum().notNull(),
    stimulus: stimulusEnum().notNull(),
    /** 0-based channel index carrying the test tone; null = detect. */
    drivenChannel: integer(),
    /** Input the selector was set to, in the unit's spelling; null = not said. */
    selectedInput: text(),
    /** Input the test tone was fed into; differs from selectedInput for an input-crosstalk capture. */
    drivenInput: text(),
    calibrationId: integer().references(() => calibrationProfiles.id, { onDelete: 'set null' }),
    /** Optional dummy-load resistance for output power, ohms. */
    loadOhms: doublePrecision(),
    originalName: text().notNull(),
    sha256: varchar({ length: 64 }).notNull(),
    sizeBytes: bigint({ mode: 'number' }).notNull(),
    sampleRate: integer().notNull(),
    channels: integer().notNull(),
    bitsPerSample: integer().notNull(),
    durationS: doublePrecision().notNull(),
    state: captureStateEnum().notNull().default('queued'),
    error: text(),
    notes: text().notNull().default(''),
    uploadedBy: integer().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('captures_job_idx').on(t.jobId), index('captures_sha_idx').on(t.sha256)],
);

/** One analysis per capture: headline figures as columns, the full result as JSON. */
export const analyses = pgTable(
  'analyses',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    captureId: integer()
      .notNull()
      .references(() => captures.id, { onDelete: 'cascade' }),
    engineVersion: text().notNull(),
    rmsDbfs: doublePrecision(),
    thdPct: doublePrecision(),
    thdnDb: doublePrecision(),
    noiseDbfsA: doublePrecision(),
    separationDb: doublePrecision(),
    clickCount: integer(),
    humDbfs: doublePrecision(),
    /** shared/capture-figures.ts CaptureFigures, so lists need not load the full result. */
    figures: jsonb(),
    result: jsonb().notNull(),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('analyses_capture_idx').on(t.captureId)],
);

export const partsUsed = pgTable(
  'parts_used',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    jobId: integer()
      .notNull()
      .references(() => jobs.id, { onDelete: 'cascade' }),
    reference: text().notNull(),
    partNumber: text().notNull().default(''),
    description: text().notNull().default(''),
    quantity: integer().notNull().default(1),
    unitCostMinor: integer().notNull().default(0),
    createdBy: integer().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('parts_used_job_idx').on(t.jobId)],
);

export const railChecks = pgTable(
  'rail_checks',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    jobId: integer()
      .notNull()
      .references(() => jobs.id, { onDelete: 'cascade' }),
    rail: text().notNull(),
    nominalV: doublePrecision().notNull(),
    measuredV: doublePrecision().notNull(),
    tolerancePct: doublePrecision().notNull(),
    note: text().notNull().default(''),
    createdBy: integer().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('rail_checks_job_idx').on(t.jobId)],
);

export const biasReadings = pgTable(
  'bias_readings',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    jobId: integer()
      .notNull()
      .references(() => jobs.id, { onDelete: 'cascade' }),
    channel: text().notNull(),
    testPoint: text().notNull(),
    targetMv: doublePrecision().notNull(),
    toleranceMv: doublePrecision().notNull(),
    coldMv: doublePrecision(),
    warmUpMinutes: integer(),
    warmMv: doublePrecision(),
    finalMv: doublePrecision(),
    note: text().notNull().default(''),
    createdBy: integer().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('bias_readings_job_idx').on(t.jobId)],
);
