import { z } from 'zod';
import { stimulusSchema } from './analysis-result';
import { captureFiguresSchema } from './capture-figures';
import { captureInputSchema } from './inputs';

// Captures: one WAV file recorded at a test point of a job, before or after the repair.

export const CAPTURE_PHASES = ['before', 'after'] as const;
export const capturePhaseSchema = z.enum(CAPTURE_PHASES);
export type CapturePhase = z.infer<typeof capturePhaseSchema>;
export const CAPTURE_PHASE_LABELS: Record<CapturePhase, string> = { before: 'Before repair', after: 'After repair' };

export const CAPTURE_STATES = ['queued', 'running', 'done', 'failed'] as const;
export const captureStateSchema = z.enum(CAPTURE_STATES);
export type CaptureState = z.infer<typeof captureStateSchema>;
export const CAPTURE_STATE_LABELS: Record<CaptureState, string> = {
  queued: 'Waiting',
  running: 'Measuring',
  done: 'Measured',
  failed: 'Failed',
};

export const STIMULUS_LABELS: Record<z.infer<typeof stimulusSchema>, string> = {
  tone: 'Test tone',
  silence: 'Silence (input terminated)',
  sweep: 'Log sweep',
  programme: 'Programme material',
};

/** Most files one upload may carry. */
export const MAX_FILES_PER_UPLOAD = 12;

/** What the technician says about one uploaded file; one entry per file, in the order sent. */
export const captureFileMetaSchema = z
  .object({
    testPointId: z.number().int().positive().nullable().default(null),
    phase: capturePhaseSchema,
    stimulus: stimulusSchema,
    /** 0-based channel carrying the test tone; null = let the engine detect it. */
    drivenChannel: z.number().int().min(0).max(7).nullable().default(null),
    /** Input the selector was set to, one of the unit's inputs (any case); null = not said. */
    selectedInput: captureInputSchema,
    /** Input the test tone was fed into: the selected one for an ordinary measurement, another for input crosstalk. */
    drivenInput: captureInputSchema,
    calibrationId: z.number().int().positive().nullable().default(null),
    /** Dummy-load resistance for output power, ohms. */
    loadOhms: z.number().positive().max(100_000).nullable().default(null),
    notes: z.string().trim().max(2000).default(''),
  })
  .strict();
export type CaptureFileMeta = z.infer<typeof captureFileMetaSchema>;
export type CaptureFileMetaInput = z.input<typeof captureFileMetaSchema>;

/** The multipart field "metadata": a JSON array, one entry per file part, in order. */
export const captureUploadMetaSchema = z
  .array(captureFileMetaSchema)
  .min(1, 'Add at least one file')
  .max(MAX_FILES_PER_UPLOAD, `At most ${MAX_FILES_PER_UPLOAD} files per upload`);

export const captureSummarySchema = z.object({
  id: z.number().int(),
  jobId: z.number().int(),
  testPointId: z.number().int().nullable(),
  testPointName: z.string().nullable(),
  testPointPosition: z.number().int().nullable(),
  phase: capturePhaseSchema,
  stimulus: stimulusSchema,
  drivenChannel: z.number().int().nullable(),
  selectedInput: z.string().nullable(),
  drivenInput: z.string().nullable(),
  calibrationId: z.number().int().nullable(),
  calibrationName: z.string().nullable(),
  loadOhms: z.number().nullable(),
  originalName: z.string(),
  sha256: z.string(),
  sizeBytes: z.number().int(),
  sampleRate: z.number().int(),
  channels: z.number().int(),
  bitsPerSample: z.number().int(),
  durationS: z.number(),
  state: captureStateSchema,
  error: z.string().nullable(),
  notes: z.string(),
  uploadedByName: z.string().nullable(),
  createdAt: z.string(),
  engineVersion: z.string().nullable(),
  figures: captureFiguresSchema.nullable(),
});
export type CaptureSummary = z.infer<typeof captureSummarySchema>;

export const uploadCapturesResponseSchema = z.object({ captures: z.array(captureSummarySchema) });
export type UploadCapturesResponse = z.infer<typeof uploadCapturesResponseSchema>;

/** Bytes → "12.3 MB" for messages and lists (decimal units, as file managers show them). */
export function formatBytes(n: number): string {
  if (n < 1000) return `${n} B`;
  if (n < 1e6) return `${(n / 1e3).toFixed(1)} kB`;
  if (n < 1e9) return `${(n / 1e6).toFixed(1)} MB`;
  return `${(n / 1e9).toFixed(2)} GB`;
}
