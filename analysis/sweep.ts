import { fftSizeFor, type FramePlan } from './spectrum';
import { roundTo } from './units';

// Frequency response from an exponential (log) sine sweep, without aligning the capture to the
// stimulus: an exponential sweep spends time ∝ 1/f at each frequency, so its energy per
// log-frequency band is constant (dt/df = T / (f·ln(f2/f1))). The captured energy per band of
// equal log width is therefore proportional to |H(f)|². Energy is gathered with sine-window frames
// (w² = Hann) at a hop of N/2 across the whole capture — Σ w² is then constant over time, so every
// sample counts equally, which a sweep (each frequency visited once) needs.

export const SWEEP_WINDOW = 'sine' as const;
export const SWEEP_BANDS_PER_OCTAVE = 24;
/** Bands this close to the sweep's ends are dropped: its start and end ripple live there. */
const END_MARGIN_OCTAVES = 1 / 6;

export function planSweepFrames(sampleRate: number, frames: number): FramePlan | null {
  const n = fftSizeFor(sampleRate, frames);
  if (n === 0) return null;
  const hop = n / 2;
  const starts: number[] = [];
  for (let s = -hop; s < frames; s += hop) starts.push(s);
  return { fftSize: n, starts };
}

export interface SweepResponse {
  frequencyHz: number[];
  responseDb: number[];
  referenceHz: number;
  lowMinus3dbHz: number | null;
  highMinus3dbHz: number | null;
}

export function sweepResponse(options: {
  /** Energy per bin (any constant scale). */
  power: Float64Array;
  binHz: number;
  startHz: number;
  endHz: number;
}): SweepResponse | null {
  const { power: p, binHz } = options;
  const lowHz = options.startHz * 2 ** END_MARGIN_OCTAVES;
  const highHz = Math.min(options.endHz * 2 ** -END_MARGIN_OCTAVES, (p.length - 1) * binHz);
  if (!(highHz > lowHz * 1.5)) return null;
  const ratio = 2 ** (1 / SWEEP_BANDS_PER_OCTAVE);
  const freqs: number[] = [];
  const levels: number[] = [];
  let next = Math.max(1, Math.ceil(lowHz / binHz));
  for (let edge = lowHz; edge < highHz; edge *= ratio) {
    const top = Math.min(highHz, edge * ratio);
    const kLo = next;
    const kHi = Math.ceil(top / binHz) - 1;
    if (kHi < kLo) continue;
    next = kHi + 1;
    let energy = 0;
    for (let k = kLo; k <= kHi; k++) energy += p[k]!;
    // Each bin spans [k − ½, k + ½]: divide by the log-width the chosen bins really cover.
    const coverage = Math.log((kHi + 0.5) / (kLo - 0.5));
    freqs.push(Math.sqrt((kLo - 0.5) * (kHi + 0.5)) * binHz);
    levels.push(energy / coverage);
  }
  if (freqs.length < 3) return null;
  let ref = freqs.findIndex((f, i) => f >= 1000 || i === freqs.length - 1);
  if (freqs[0]! > 1000 || freqs[freqs.length - 1]! < 1000) ref = levels.indexOf(Math.max(...levels));
  if (!(levels[ref]! > 0)) return null;
  const db = levels.map((l) => (l > 0 ? 10 * Math.log10(l / levels[ref]!) : -300));
  const crossing = (from: number, step: number): number | null => {
    for (let i = from + step; i >= 0 && i < db.length; i += step) {
      if (db[i]! <= -3) {
        const j = i - step;
        const t = (-3 - db[j]!) / (db[i]! - db[j]!);
        return Math.exp(Math.log(freqs[j]!) + t * (Math.log(freqs[i]!) - Math.log(freqs[j]!)));
      }
    }
    return null;
  };
  const low = crossing(ref, -1);
  const high = crossing(ref, 1);
  return {
    frequencyHz: freqs.map((f) => roundTo(f, 2)),
    responseDb: db.map((d) => roundTo(d, 3)),
    referenceHz: roundTo(freqs[ref]!, 2),
    lowMinus3dbHz: low === null ? null : roundTo(low, 2),
    highMinus3dbHz: high === null ? null : roundTo(high, 2),
  };
}
