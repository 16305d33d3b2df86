import { pgTable, pgEnum, integer, text, timestamp, doublePrecision, bigint, index } from 'drizzle-orm/pg-core';
import { RECORDING_FORMATS, RECORDING_STATES } from '../../../shared/recordings';
import { shops, users } from './shop';
import { jobs, testPoints } from './jobs';
import { calibrationProfiles, capturePhaseEnum, captures, stimulusEnum } from './bench';

export const recordingFormatEnum = pgEnum('recording_format', RECORDING_FORMATS);
export const recordingStateEnum = pgEnum('recording_state', RECORDING_STATES);

/**
 * A live-bench recording streamed in chunks (stored under recordings/<id>/ in the file store). While open
 * it can take more chunks, be finished into a capture, or be discarded; finished, it points at
 * its capture.
 */
export const recordings = pgTable(
  'recordings',
  {
    id: integer().primaryKey().generatedAlwaysAsIdentity(),
    shopId: integer().notNull().references(() => shops.id),
    jobId: integer()
      .notNull()
      .references(() => jobs.id, { onDelete: 'cascade' }),
    testPointId: integer().references(() => testPoints.id, { onDelete: 'set null' }),
    phase: capturePhaseEnum().notNull(),
    stimulus: stimulusEnum().notNull(),
    drivenChannel: integer(),
    selectedInput: text(),
    drivenInput: text(),
    calibrationId: integer().references(() => calibrationProfiles.id, { onDelete: 'set null' }),
    loadOhms: doublePrecision(),
    sampleRate: integer().notNull(),
    channels: integer().notNull(),
    format: recordingFormatEnum().notNull(),
    plannedSeconds: doublePrecision(),
    notes: text().notNull().default(''),
    /** Chunks received, numbered 0…chunkCount−1; the next one must be chunkCount. */
    chunkCount: integer().notNull().default(0),
    bytesReceived: bigint({ mode: 'number' }).notNull().default(0),
    state: recordingStateEnum().notNull().default('open'),
    captureId: integer().references(() => captures.id, { onDelete: 'set null' }),
    createdBy: integer().references(() => users.id),
    createdAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp({ withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('recordings_shop_job_idx').on(t.shopId, t.jobId, t.state)],
);
