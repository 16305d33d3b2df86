import { z } from 'zod';

// The measurement engine's options and result: one schema, used by analysis/, the server and web.
// Conventions (see DESIGN.md "Measurement conventions"):
// - dBFS per AES17: a full-scale sine reads 0 dBFS, i.e. dBFS = 20·log10(RMS·√2); sample peaks are
//   20·log10(|x|) with full scale = 1.
// - A figure that does not apply (THD on silence) or has no dB value (a level of exactly zero) is
//   null, never NaN or Infinity, so the JSON round-trips (zod 4 numbers reject both).

export const stimulusSchema = z.enum(['tone', 'silence', 'sweep', 'programme']);
export type Stimulus = z.infer<typeof stimulusSchema>;

export const mainsHzSchema = z.union([z.literal(50), z.literal(60)], { error: 'mains frequency must be 50 or 60 Hz' });

export const analyzeOptionsSchema = z
  .object({
    /** 0-based channel carrying the test tone; detected when absent. */
    drivenChannel: z.number().int().min(0).max(7).optional(),
    mainsHz: mainsHzSchema.optional(),
    /** Volts RMS at the probe input that read 0 dBFS (a full-scale sine). */
    voltsAtFullScale: z.number().positive().max(1e6).optional(),
    /** Probe or divider attenuation as a ratio (10 for 10:1); needs voltsAtFullScale. */
    probeAttenuation: z.number().positive().max(1e6).optional(),
    /** Level that SNR is quoted against (rated output or a given level); 0 dBFS when absent. */
    referenceDbfs: z.number().min(-300).max(100).optional(),
    stimulus: stimulusSchema.optional(),
    /** Expected test-tone frequency: the fundamental is searched within ±5 % of it. */
    toneHz: z.number().min(1).max(200_000).optional(),
    /** Range of a log-sweep stimulus; 20 Hz and 20 kHz (or 0.45·fs) when absent. */
    sweepStartHz: z.number().min(1).max(200_000).optional(),
    sweepEndHz: z.number().min(1).max(200_000).optional(),
  })
  .strict();
export type AnalyzeOptions = z.infer<typeof analyzeOptionsSchema>;

export const wavEncodingSchema = z.enum(['pcm', 'float', 'alaw', 'mulaw']);

/** What a WAV header says, after validation (readWavInfo). */
export const wavInfoSchema = z.object({
  container: z.enum(['RIFF', 'RF64']),
  format: wavEncodingSchema,
  formatTag: z.number().int(),
  extensible: z.boolean(),
  sampleRate: z.number().int(),
  bitsPerSample: z.number().int(),
  validBitsPerSample: z.number().int(),
  channels: z.number().int(),
  blockAlign: z.number().int(),
  frames: z.number().int(),
  durationS: z.number(),
  dataOffset: z.number().int(),
  dataBytes: z.number().int(),
});
export type WavInfo = z.infer<typeof wavInfoSchema>;

const dbOrNull = z.number().nullable();

export const harmonicSchema = z.object({
  order: z.number().int(),
  frequencyHz: z.number(),
  levelDbfs: dbOrNull,
  /** Level relative to the fundamental (dBc). */
  relativeDb: dbOrNull,
});

export const humSchema = z.object({
  mainsHz: mainsHzSchema,
  /** True when the mains fundamental or its 2nd harmonic stands ≥ 6 dB above the local noise. */
  detected: z.boolean(),
  harmonics: z.array(
    z.object({
      order: z.number().int(),
      frequencyHz: z.number(),
      levelDbfs: dbOrNull,
      aboveNoiseDb: dbOrNull,
    }),
  ),
});

export const clickEventSchema = z.object({
  timeS: z.number(),
  peakDbfs: dbOrNull,
  durationMs: z.number(),
});

export const clicksSchema = z.object({
  count: z.number().int(),
  perMinute: z.number(),
  events: z.array(clickEventSchema),
  /** True when more events were found than are listed (count is still the full count). */
  eventsTruncated: z.boolean(),
});

export const spectrumMarkerSchema = z.object({
  kind: z.enum(['fundamental', 'harmonic', 'hum']),
  order: z.number().int(),
  frequencyHz: z.number(),
  levelDbfs: dbOrNull,
});

/** Log-spaced plot data: the highest bin in each band, scaled so a sine's peak reads its dBFS. */
export const spectrumSummarySchema = z.object({
  frequencyHz: z.array(z.number()),
  levelDbfs: z.array(z.number()),
  floorDbfs: z.number(),
  markers: z.array(spectrumMarkerSchema),
});

/** Min/max envelope for an overview chart; point i covers [i·pointSeconds, (i+1)·pointSeconds). */
export const waveformSchema = z.object({
  pointSeconds: z.number(),
  min: z.array(z.number()),
  max: z.array(z.number()),
});

export const channelResultSchema = z.object({
  index: z.number().int(),
  rmsDbfs: dbOrNull,
  peakDbfs: dbOrNull,
  crestFactorDb: dbOrNull,
  dcOffset: z.number(),
  clippedSamples: z.number().int(),
  fundamentalHz: z.number().nullable(),
  fundamentalDbfs: dbOrNull,
  /** Noise expected under the fundamental's lobe, from the bins around it: what a tone level
   *  there can be told apart from. Optional: results made before it was added lack it. */
  toneNoiseDbfs: dbOrNull.optional(),
  thdPct: z.number().nullable(),
  thdDb: dbOrNull,
  thdnPct: z.number().nullable(),
  thdnDb: dbOrNull,
  sinadDb: dbOrNull,
  harmonics: z.array(harmonicSchema),
  noiseDbfs: dbOrNull,
  noiseDbfsA: dbOrNull,
  snrDb: dbOrNull,
  snrDbA: dbOrNull,
  levelDbv: dbOrNull,
  levelDbu: dbOrNull,
  fundamentalDbv: dbOrNull,
  fundamentalDbu: dbOrNull,
  noiseDbv: dbOrNull,
  noiseDbu: dbOrNull,
  noiseDbvA: dbOrNull,
  noiseDbuA: dbOrNull,
  humDbfs: dbOrNull,
  hum: humSchema,
  clicks: clicksSchema,
  spectrum: spectrumSummarySchema,
  waveform: waveformSchema,
});
export type ChannelResult = z.infer<typeof channelResultSchema>;

export const separationSchema = z.object({
  driven: z.number().int(),
  other: z.number().int(),
  frequencyHz: z.number(),
  drivenDbfs: dbOrNull,
  otherDbfs: dbOrNull,
  db: dbOrNull,
  /** True when the tone in the other channel does not stand 6 dB above its noise: db is a lower bound. */
  noiseLimited: z.boolean(),
});
export type Separation = z.infer<typeof separationSchema>;

export const sweepChannelSchema = z.object({
  channel: z.number().int(),
  frequencyHz: z.array(z.number()),
  responseDb: z.array(z.number()),
  lowMinus3dbHz: z.number().nullable(),
  highMinus3dbHz: z.number().nullable(),
});

export const sweepResultSchema = z.object({
  startHz: z.number(),
  endHz: z.number(),
  /** Response is relative to the band at this frequency (1 kHz when inside the sweep). */
  referenceHz: z.number(),
  channels: z.array(sweepChannelSchema),
});

/**
 * Time × frequency picture of the capture, the same size whatever its length. Cell (column t, row f)
 * of channel c is byte t·rows + f of that channel's `levels` (base64): the highest level seen in
 * that time slice and frequency band, in dBFS (a sine's peak reads its own level, as in the
 * spectrum summary) = floorDb + byte·stepDb; byte 0 means at or below floorDb.
 */
export const spectrogramSchema = z.object({
  columns: z.number().int().positive(),
  rows: z.number().int().positive(),
  /** Column t covers [t·columnSeconds, (t+1)·columnSeconds). */
  columnSeconds: z.number().positive(),
  /** Row f covers [lowHz·r^f, lowHz·r^(f+1)) with r = (highHz/lowHz)^(1/rows). */
  lowHz: z.number().positive(),
  highHz: z.number().positive(),
  floorDb: z.number(),
  stepDb: z.number().positive(),
  frameSize: z.number().int(),
  window: z.string(),
  channels: z.array(z.object({ index: z.number().int(), levels: z.string() })),
});
export type Spectrogram = z.infer<typeof spectrogramSchema>;

export const analysisResultSchema = z.object({
  engineVersion: z.string(),
  file: wavInfoSchema.pick({
    container: true,
    format: true,
    extensible: true,
    sampleRate: true,
    bitsPerSample: true,
    validBitsPerSample: true,
    channels: true,
    frames: true,
    durationS: true,
  }),
  stimulus: stimulusSchema,
  stimulusSource: z.enum(['given', 'detected']),
  drivenChannel: z.number().int().nullable(),
  drivenSource: z.enum(['given', 'detected']).nullable(),
  mainsHz: mainsHzSchema,
  mainsSource: z.enum(['given', 'detected', 'default']),
  calibration: z
    .object({ voltsAtFullScale: z.number(), probeAttenuation: z.number(), dbvAtFullScale: z.number() })
    .nullable(),
  snrReferenceDbfs: z.number(),
  measurement: z.object({
    bandLowHz: z.number(),
    bandHighHz: z.number(),
    window: z.string(),
    fftSize: z.number().int(),
    binHz: z.number(),
    fftFrames: z.number().int(),
  }),
  channels: z.array(channelResultSchema),
  separation: z.array(separationSchema),
  sweep: sweepResultSchema.nullable(),
  /** Null when the capture is too short; absent from results stored by engines before 1.1.0. */
  spectrogram: spectrogramSchema.nullable().optional(),
  warnings: z.array(z.string()),
});
export type AnalysisResult = z.infer<typeof analysisResultSchema>;
