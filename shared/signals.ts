import { z } from 'zod';
import { encodeWav, generateLogSweep, generateSilence, generateSine, type SampleFormat } from '../analysis/index';

// Test signals (stimulus files) for the bench: the browser page and GET /api/signals build them
// with this one function and the analysis module's generators, so a file from either is the same
// file, and the tests measure exactly what a technician plays.
// Levels are AES17 dBFS: a sine of peak amplitude A reads 20·log10(A) dBFS (full-scale sine = 0).

/** AES17 test frequency: 997 Hz is prime to the usual sample rates, so every code is exercised. */
export const AES17_TEST_HZ = 997;

export const SIGNAL_KINDS = ['sine', 'sweep', 'silence'] as const;
export type SignalKind = (typeof SIGNAL_KINDS)[number];
export const SIGNAL_KIND_LABELS: Record<SignalKind, string> = {
  sine: 'Sine tone',
  sweep: 'Log sweep',
  silence: 'Digital silence',
};

export const SIGNAL_ROUTINGS = ['both', 'left', 'right'] as const;
export type SignalRouting = (typeof SIGNAL_ROUTINGS)[number];
export const SIGNAL_ROUTING_LABELS: Record<SignalRouting, string> = {
  both: 'Both channels',
  left: 'Left only (right silent)',
  right: 'Right only (left silent)',
};

export const SIGNAL_SAMPLE_RATES = [44100, 48000, 88200, 96000, 192000] as const;
export const SIGNAL_FORMATS = ['16', '24', 'float32'] as const;
export type SignalFormat = (typeof SIGNAL_FORMATS)[number];
export const SIGNAL_FORMAT_LABELS: Record<SignalFormat, string> = {
  '16': '16-bit PCM',
  '24': '24-bit PCM',
  float32: '32-bit float',
};

/** Longest file: a soak test plays a shorter file on repeat (see loopsCleanly). */
export const MAX_SIGNAL_SECONDS = 120;
/** Largest file, so a request cannot make the server or the tab build gigabytes. */
export const MAX_SIGNAL_BYTES = 64 * 1024 * 1024;

// Query strings arrive as text; z.coerce turns "997" into 997 and leaves numbers as they are.
export const signalRequestSchema = z
  .object({
    kind: z.enum(SIGNAL_KINDS).default('sine'),
    channels: z.enum(SIGNAL_ROUTINGS).default('both'),
    frequencyHz: z.coerce.number().min(10, 'At least 10 Hz').max(96_000).default(AES17_TEST_HZ),
    levelDbfs: z.coerce.number().min(-140, 'At least −140 dBFS').max(0, 'At most 0 dBFS (full scale)').default(-20),
    seconds: z.coerce.number().min(0.1, 'At least 0.1 s').max(MAX_SIGNAL_SECONDS, `At most ${MAX_SIGNAL_SECONDS} s`).default(10),
    sampleRate: z.coerce
      .number()
      .int()
      .refine((v) => (SIGNAL_SAMPLE_RATES as readonly number[]).includes(v), `One of ${SIGNAL_SAMPLE_RATES.join(', ')} Hz`)
      .default(48000),
    format: z.enum(SIGNAL_FORMATS).default('24'),
    /** TPDF dither (±1 LSB) before rounding, for integer formats; it keeps low tones free of quantisation distortion. */
    dither: z.enum(['tpdf', 'none']).default('tpdf'),
    startHz: z.coerce.number().min(1).max(96_000).default(20),
    endHz: z.coerce.number().min(1).max(96_000).default(20_000),
  })
  .strict()
  .superRefine((s, ctx) => {
    const nyquist = s.sampleRate / 2;
    if (s.kind === 'sine' && s.frequencyHz >= nyquist) {
      ctx.addIssue({ code: 'custom', path: ['frequencyHz'], message: `Must be below half the sample rate (${nyquist} Hz)` });
    }
    if (s.kind === 'sweep' && !(s.startHz < s.endHz && s.endHz <= nyquist)) {
      ctx.addIssue({ code: 'custom', path: ['endHz'], message: `The sweep must rise, and end at or below ${nyquist} Hz` });
    }
    if (signalBytes(s) > MAX_SIGNAL_BYTES) {
      ctx.addIssue({ code: 'custom', path: ['seconds'], message: `That file would exceed ${MAX_SIGNAL_BYTES / 1024 / 1024} MB; make it shorter and play it on repeat` });
    }
  });
export type SignalRequest = z.infer<typeof signalRequestSchema>;
export type SignalRequestInput = z.input<typeof signalRequestSchema>;

export const SIGNAL_CHANNELS = 2;

const sampleFormat = (f: SignalFormat): SampleFormat => (f === 'float32' ? 'float32' : f === '16' ? 16 : 24);

export function signalFrames(s: Pick<SignalRequest, 'seconds' | 'sampleRate'>): number {
  return Math.round(s.seconds * s.sampleRate);
}

/** Size of the WAV file's sample data in bytes (the header adds well under 100). */
export function signalBytes(s: Pick<SignalRequest, 'seconds' | 'sampleRate' | 'format'>): number {
  const bytes = s.format === '16' ? 2 : s.format === '24' ? 3 : 4;
  return signalFrames(s) * SIGNAL_CHANNELS * bytes;
}

/** 0-based channels that carry the signal: 0 = left, 1 = right. */
export function drivenChannelsOf(routing: SignalRouting): number[] {
  return routing === 'left' ? [0] : routing === 'right' ? [1] : [0, 1];
}

/**
 * True when the file holds a whole number of tone cycles, so a player repeating it makes no step
 * at the seam (a step would read as a click in a soak test). Sweeps fade in and out; silence is silent.
 */
export function loopsCleanly(s: SignalRequest): boolean {
  if (s.kind !== 'sine') return true;
  const cycles = (s.frequencyHz * signalFrames(s)) / s.sampleRate;
  return Math.abs(cycles - Math.round(cycles)) < 1e-6;
}

/** The stimulus as planar samples, full scale = 1. */
export function renderSignal(s: SignalRequest): Float64Array[] {
  const shape = { sampleRate: s.sampleRate, seconds: signalFrames(s) / s.sampleRate, channels: SIGNAL_CHANNELS, drivenChannels: drivenChannelsOf(s.channels) };
  switch (s.kind) {
    case 'sine':
      return generateSine({ ...shape, frequencyHz: s.frequencyHz, levelDbfs: s.levelDbfs });
    case 'sweep':
      return generateLogSweep({ ...shape, startHz: s.startHz, endHz: s.endHz, levelDbfs: s.levelDbfs });
    case 'silence':
      return generateSilence(shape);
  }
}

/** The complete WAV file. */
export function renderSignalWav(s: SignalRequest): Uint8Array {
  const format = sampleFormat(s.format);
  return encodeWav(renderSignal(s), s.sampleRate, format, { dither: s.format === 'float32' ? 'none' : s.dither });
}

const num = (v: number) => String(Number(v.toFixed(2))).replace('-', 'minus').replace('.', 'p');

/** A file name that says what is inside, e.g. sine-997Hz-minus20dBFS-left-48k-24bit-10s.wav. */
export function signalFileName(s: SignalRequest): string {
  const what =
    s.kind === 'sine'
      ? `sine-${num(s.frequencyHz)}Hz-${num(s.levelDbfs)}dBFS`
      : s.kind === 'sweep'
        ? `sweep-${num(s.startHz)}-${num(s.endHz)}Hz-${num(s.levelDbfs)}dBFS`
        : 'silence';
  const rate = s.sampleRate % 1000 === 0 ? `${s.sampleRate / 1000}k` : `${(s.sampleRate / 1000).toFixed(1)}k`;
  const bits = s.format === 'float32' ? 'float' : `${s.format}bit`;
  return `${what}-${s.channels}-${rate}-${bits}-${num(s.seconds)}s.wav`;
}
