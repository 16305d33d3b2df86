import { localNoisePerBin } from './noise';
import type { BinRange } from './thd';
import { powerRatioDb } from './units';

// Hum: power at the mains frequency and its harmonics (k·50 or k·60 Hz, k = 1…6 — our choice: a
// rectifier's ripple lives mostly at 2× and 3× mains), each summed over a window main lobe.
// Mains is recognised from where the low peaks sit, not from their width: at 0.75 Hz bins the
// 7-term window's lobe at 50 Hz is ~180 dB down by 60 Hz, so the peak bins tell the two apart.

export const HUM_HARMONICS = 6;

/** 50 or 60 when one family of peaks clearly dominates and stands above the noise; else null. */
export function detectMains(powers: readonly Float64Array[], binHz: number): 50 | 60 | null {
  const len = powers[0]!.length;
  const summed = new Float64Array(len);
  for (const p of powers) for (let k = 0; k < len; k++) summed[k]! += p[k]!;
  const score = (mains: number): number => {
    let s = 0;
    // k = 1…4 keeps the two families apart (300 Hz is common to both).
    for (let k = 1; k <= 4; k++) {
      const c = Math.round((k * mains) / binHz);
      let best = 0;
      for (let j = c - 1; j <= c + 1; j++) if (j > 0 && j < len && summed[j]! > best) best = summed[j]!;
      s += best;
    }
    return s;
  };
  const lo = Math.max(1, Math.ceil(20 / binHz));
  const hi = Math.min(len - 1, Math.floor(400 / binHz));
  if (hi - lo < 8) return null;
  const floor = Array.from(summed.subarray(lo, hi + 1)).sort((a, b) => a - b)[Math.floor((hi - lo) / 2)]!;
  const s50 = score(50);
  const s60 = score(60);
  // 6 dB between families and 10 dB over the median bin: thresholds of our choosing.
  if (s50 >= 4 * s60 && s50 > 10 * floor) return 50;
  if (s60 >= 4 * s50 && s60 > 10 * floor) return 60;
  return null;
}

export interface HumFigures {
  harmonics: { order: number; frequencyHz: number; power: number | null; aboveNoiseDb: number | null }[];
  totalPower: number;
  detected: boolean;
}

export function measureHum(options: {
  power: Float64Array;
  binHz: number;
  mainsHz: number;
  halfWidth: number;
  /** Tone lobes: a hum harmonic overlapping one cannot be told from it and is left out (null). */
  excluded: readonly BinRange[];
}): HumFigures {
  const { power: p, binHz, mainsHz, halfWidth, excluded } = options;
  const harmonics: HumFigures['harmonics'] = [];
  let totalPower = 0;
  let detected = false;
  for (let k = 1; k <= HUM_HARMONICS; k++) {
    const f = k * mainsHz;
    const c = Math.round(f / binHz);
    const lo = c - halfWidth;
    const hi = c + halfWidth;
    const clash = excluded.some(([a, b]) => hi >= a && lo <= b);
    if (lo < 1 || hi >= p.length || clash) {
      harmonics.push({ order: k, frequencyHz: f, power: null, aboveNoiseDb: null });
      continue;
    }
    let power = 0;
    for (let j = lo; j <= hi; j++) power += p[j]!;
    const noise = localNoisePerBin(p, c, halfWidth, excluded) * (hi - lo + 1);
    const aboveNoiseDb = noise > 0 ? powerRatioDb(power / noise) : null;
    if (k <= 2 && aboveNoiseDb !== null && aboveNoiseDb >= 6) detected = true;
    harmonics.push({ order: k, frequencyHz: f, power, aboveNoiseDb });
    totalPower += power;
  }
  return { harmonics, totalPower, detected };
}
