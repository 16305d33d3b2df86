// Test-signal generators. Levels follow AES17 dBFS: a sine of peak amplitude A reads 20·log10(A)
// dBFS; noise of RMS σ reads 20·log10(σ·√2) dBFS. Output is planar, one Float64Array per channel.

export interface SignalShape {
  sampleRate: number;
  seconds: number;
  /** Number of channels (default 1). */
  channels?: number;
  /** 0-based channels carrying the signal; the rest stay silent (default: all). */
  drivenChannels?: readonly number[];
}

function check(shape: SignalShape): { frames: number; channels: number; driven: Set<number> } {
  const channels = shape.channels ?? 1;
  if (!Number.isInteger(channels) || channels < 1 || channels > 8) throw new RangeError(`channels must be 1–8, got ${channels}`);
  if (!(shape.sampleRate > 0) || !(shape.seconds > 0)) throw new RangeError('sampleRate and seconds must be positive');
  const frames = Math.round(shape.sampleRate * shape.seconds);
  const driven = new Set(shape.drivenChannels ?? Array.from({ length: channels }, (_, c) => c));
  for (const c of driven) if (!(c >= 0 && c < channels)) throw new RangeError(`driven channel ${c} outside 0–${channels - 1}`);
  return { frames, channels, driven };
}

function planar(channels: number, frames: number): Float64Array[] {
  return Array.from({ length: channels }, () => new Float64Array(frames));
}

export function generateSilence(shape: SignalShape): Float64Array[] {
  const { frames, channels } = check(shape);
  return planar(channels, frames);
}

export interface SineOptions extends SignalShape {
  frequencyHz: number;
  levelDbfs: number;
  /** Harmonics as amplitude ratios to the fundamental, e.g. { order: 2, ratio: 0.01 } for 1 %. */
  harmonics?: readonly { order: number; ratio: number }[];
  phaseRad?: number;
}

export function generateSine(o: SineOptions): Float64Array[] {
  const { frames, channels, driven } = check(o);
  const amplitude = 10 ** (o.levelDbfs / 20);
  const w = (2 * Math.PI * o.frequencyHz) / o.sampleRate;
  const phase = o.phaseRad ?? 0;
  const tone = new Float64Array(frames);
  for (let n = 0; n < frames; n++) {
    let v = Math.sin(w * n + phase);
    for (const h of o.harmonics ?? []) v += h.ratio * Math.sin(h.order * (w * n + phase));
    tone[n] = amplitude * v;
  }
  return Array.from({ length: channels }, (_, c) => (driven.has(c) ? tone.slice() : new Float64Array(frames)));
}

export interface SweepOptions extends SignalShape {
  startHz: number;
  endHz: number;
  levelDbfs: number;
  /** Raised-cosine fade at each end, seconds (default 10 ms) — an abrupt start would be a click. */
  fadeSeconds?: number;
}

/** Exponential sweep: φ(t) = 2π·f1·T/ln(f2/f1)·(e^(t·ln(f2/f1)/T) − 1). */
export function generateLogSweep(o: SweepOptions): Float64Array[] {
  const { frames, channels, driven } = check(o);
  if (!(o.startHz > 0 && o.endHz > o.startHz && o.endHz <= o.sampleRate / 2)) {
    throw new RangeError('sweep needs 0 < startHz < endHz ≤ sampleRate/2');
  }
  const amplitude = 10 ** (o.levelDbfs / 20);
  const T = frames / o.sampleRate;
  const rate = Math.log(o.endHz / o.startHz);
  const k = (2 * Math.PI * o.startHz * T) / rate;
  const fade = Math.max(1, Math.round((o.fadeSeconds ?? 0.01) * o.sampleRate));
  const sweep = new Float64Array(frames);
  for (let n = 0; n < frames; n++) {
    const t = n / o.sampleRate;
    let g = amplitude;
    const edge = Math.min(n, frames - 1 - n);
    if (edge < fade) g *= 0.5 - 0.5 * Math.cos((Math.PI * edge) / fade);
    sweep[n] = g * Math.sin(k * (Math.exp((t * rate) / T) - 1));
  }
  return Array.from({ length: channels }, (_, c) => (driven.has(c) ? sweep.slice() : new Float64Array(frames)));
}

/** Seeded uniform generator in [0, 1) (mulberry32): reproducible data for samples and tests. */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal deviates by the Box–Muller transform. */
export function seededGaussian(seed: number): () => number {
  const u = seededRandom(seed);
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    const r = Math.sqrt(-2 * Math.log(1 - u()));
    const a = 2 * Math.PI * u();
    spare = r * Math.sin(a);
    return r * Math.cos(a);
  };
}

export interface NoiseOptions extends SignalShape {
  levelDbfs: number;
  seed?: number;
}

/** White Gaussian noise, independent per channel. */
export function generateNoise(o: NoiseOptions): Float64Array[] {
  const { frames, channels, driven } = check(o);
  const sigma = 10 ** (o.levelDbfs / 20) / Math.SQRT2;
  return Array.from({ length: channels }, (_, c) => {
    const x = new Float64Array(frames);
    if (!driven.has(c)) return x;
    const g = seededGaussian((o.seed ?? 1) * 7919 + c);
    for (let n = 0; n < frames; n++) x[n] = sigma * g();
    return x;
  });
}

/** Adds b into a, sample by sample (for building captures out of parts). */
export function mixInto(a: Float64Array, b: Float64Array, gain = 1): Float64Array {
  for (let n = 0, end = Math.min(a.length, b.length); n < end; n++) a[n]! += gain * b[n]!;
  return a;
}

export interface ClickShape {
  /** Frame index of the click. */
  frame: number;
  /** Peak amplitude, full scale = 1. */
  amplitude: number;
  /** 'impulse': one sample; 'burst': a 0.5 ms decaying oscillation, like a dirty contact. */
  shape?: 'impulse' | 'burst';
}

export function addClick(target: Float64Array, sampleRate: number, click: ClickShape): void {
  if (click.shape !== 'burst') {
    if (click.frame >= 0 && click.frame < target.length) target[click.frame]! += click.amplitude;
    return;
  }
  const length = Math.max(4, Math.round(sampleRate * 0.0005));
  const w = (2 * Math.PI * 7000) / sampleRate;
  for (let i = 0; i < length && click.frame + i < target.length; i++) {
    target[click.frame + i]! += click.amplitude * Math.exp((-4 * i) / length) * Math.cos(w * i);
  }
}
