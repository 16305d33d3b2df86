import { z } from 'zod';
import { stimulusSchema } from './analysis-result';
import { capturePhaseSchema, captureSummarySchema } from './captures';
import { captureInputSchema } from './inputs';

// Recordings made on the live bench (soak tests). The browser streams raw PCM to the server in
// numbered chunks while it records, so a closed tab loses at most the chunk in flight; finishing
// writes the WAV file into capture storage as a capture and queues its analysis like an upload.

export const RECORDING_FORMATS = ['pcm16', 'pcm24', 'float32'] as const;
export const recordingFormatSchema = z.enum(RECORDING_FORMATS);
export type RecordingFormat = z.infer<typeof recordingFormatSchema>;

export const RECORDING_STATES = ['open', 'finished'] as const;
export type RecordingState = (typeof RECORDING_STATES)[number];

/** Bytes per sample of one channel, little-endian, interleaved as in a WAV data chunk. */
export function recordingBytesPerSample(format: RecordingFormat): number {
  return format === 'pcm16' ? 2 : format === 'pcm24' ? 3 : 4;
}

/** Largest chunk body: 2 s of 8 channels at 192 kHz in float32 is 12 MB, 2 s of stereo 48 kHz 24-bit 576 kB. */
export const MAX_CHUNK_BYTES = 8 * 1024 * 1024;
/** Highest chunk number accepted (a 10-minute soak sent each second needs 600). */
export const MAX_CHUNK_SEQ = 100_000;

export const recordingOpenSchema = z
  .object({
    jobId: z.number().int().positive(),
    testPointId: z.number().int().positive().nullable().default(null),
    phase: capturePhaseSchema,
    stimulus: stimulusSchema,
    /** 0-based channel carrying the test tone; null = let the engine find it. */
    drivenChannel: z.number().int().min(0).max(7).nullable().default(null),
    selectedInput: captureInputSchema,
    drivenInput: captureInputSchema,
    calibrationId: z.number().int().positive().nullable().default(null),
    loadOhms: z.number().positive().max(100_000).nullable().default(null),
    sampleRate: z.number().int().min(8000, 'At least 8000 Hz').max(384_000, 'At most 384 kHz'),
    channels: z.number().int().min(1).max(8),
    format: recordingFormatSchema.default('pcm24'),
    /** What the technician set the soak test to run for, for the record. */
    plannedSeconds: z.number().positive().max(24 * 3600).nullable().default(null),
    notes: z.string().trim().max(2000).default(''),
  })
  .strict()
  .refine((o) => o.drivenChannel === null || o.drivenChannel < o.channels, {
    path: ['drivenChannel'],
    message: 'That channel is not part of the recording',
  });
export type RecordingOpen = z.infer<typeof recordingOpenSchema>;
export type RecordingOpenInput = z.input<typeof recordingOpenSchema>;

export const recordingListQuerySchema = z
  .object({
    jobId: z.coerce.number().int().positive().optional(),
    state: z.enum(RECORDING_STATES).default('open'),
  })
  .strict();
export type RecordingListQuery = z.infer<typeof recordingListQuerySchema>;

export const chunkSeqSchema = z.coerce.number().int().min(0).max(MAX_CHUNK_SEQ);

export const recordingSummarySchema = z.object({
  id: z.number().int(),
  jobId: z.number().int(),
  jobTitle: z.string(),
  testPointId: z.number().int().nullable(),
  testPointName: z.string().nullable(),
  phase: capturePhaseSchema,
  stimulus: stimulusSchema,
  drivenChannel: z.number().int().nullable(),
  selectedInput: z.string().nullable(),
  drivenInput: z.string().nullable(),
  calibrationId: z.number().int().nullable(),
  loadOhms: z.number().nullable(),
  sampleRate: z.number().int(),
  channels: z.number().int(),
  format: recordingFormatSchema,
  plannedSeconds: z.number().nullable(),
  notes: z.string(),
  /** Chunks received; the next chunk to send has this number. */
  chunkCount: z.number().int(),
  bytesReceived: z.number().int(),
  durationS: z.number(),
  state: z.enum(RECORDING_STATES),
  captureId: z.number().int().nullable(),
  createdByName: z.string().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type RecordingSummary = z.infer<typeof recordingSummarySchema>;

export const chunkReceiptSchema = z.object({
  seq: z.number().int(),
  /** True when this chunk had already arrived with the same bytes (a retry); nothing changed. */
  repeated: z.boolean(),
  chunkCount: z.number().int(),
  bytesReceived: z.number().int(),
  durationS: z.number(),
});
export type ChunkReceipt = z.infer<typeof chunkReceiptSchema>;

export const recordingFinishedSchema = z.object({
  recording: recordingSummarySchema,
  capture: captureSummarySchema,
});
export type RecordingFinished = z.infer<typeof recordingFinishedSchema>;

/** Seconds of audio in a number of received bytes. */
export function recordingSeconds(bytes: number, o: { sampleRate: number; channels: number; format: RecordingFormat }): number {
  return bytes / (o.channels * recordingBytesPerSample(o.format)) / o.sampleRate;
}

// Calibration from a live reading. The reference (say 1.000 V RMS from a calibrator) is applied at
// the probe tip; a probe or divider of ratio a passes V_ref / a to the sound card, which reads
// L dBFS (AES17: a full-scale sine reads 0 dBFS). The card's full scale is then
//   voltsAtFullScale = (V_ref / a) / 10^(L/20)
// in volts RMS at the card input, which is what a calibration profile stores beside a (its
// dBV at the probe tip for 0 dBFS is 20·log10(voltsAtFullScale · a) = 20·log10(V_ref) − L).

export const liveCalibrationSchema = z
  .object({
    referenceVoltsRms: z.number().positive('Must be more than 0 V').max(1000, 'At most 1000 V'),
    probeAttenuation: z.number().positive('Must be more than 0').max(1000, 'At most 1000:1'),
    /** The live RMS level of the reference, AES17 dBFS. */
    measuredDbfs: z.number().min(-120, 'The reading is too low to calibrate from').max(3.02, 'The reading is above full scale'),
  })
  .strict();
export type LiveCalibration = z.infer<typeof liveCalibrationSchema>;

export function voltsAtFullScaleFrom(c: LiveCalibration): number {
  return c.referenceVoltsRms / c.probeAttenuation / 10 ** (c.measuredDbfs / 20);
}
