import { peakBin, sumBins } from './spectrum';

// Tone figures from an averaged power spectrum (see spectrum.ts for its normalisation).
// - THD (IEC 60268-3 "THD_F" form, as DESIGN.md sets it): √(Σ P_h, h = 2…10 below Nyquist) / √P_1.
// - THD+N (AES17): RMS of everything in the band except the fundamental (a notch of ± the lobe
//   half-width) over the total RMS in the band; SINAD = −THD+N in dB.
// Each component's power is the sum of p over its main lobe, which removes scalloping error.

export const MAX_HARMONIC = 10;

export type BinRange = readonly [number, number];

export interface ToneFigures {
  fundamentalHz: number;
  fundamentalPower: number;
  harmonics: { order: number; frequencyHz: number; power: number }[];
  thdRatio: number | null;
  thdnRatio: number | null;
  /** Bin ranges of the fundamental and harmonics, removed when measuring noise. */
  excluded: BinRange[];
}

/** Highest bin between two frequencies: the candidate fundamental. */
export function findPeakBin(p: Float64Array, binHz: number, lowHz: number, highHz: number): number {
  return peakBin(p, Math.max(1, Math.ceil(lowHz / binHz)), Math.floor(highHz / binHz));
}

/** Power-weighted centroid of a lobe: exact for one sine and a symmetric window. */
export function lobeCentroidHz(p: Float64Array, binHz: number, centre: number, halfWidth: number): number {
  let num = 0;
  let den = 0;
  for (let k = Math.max(0, centre - halfWidth), end = Math.min(p.length - 1, centre + halfWidth); k <= end; k++) {
    num += k * p[k]!;
    den += p[k]!;
  }
  return den > 0 ? (num / den) * binHz : centre * binHz;
}

export function bandBins(binHz: number, length: number, lowHz: number, highHz: number): BinRange {
  return [Math.max(1, Math.ceil(lowHz / binHz)), Math.min(length - 1, Math.floor(highHz / binHz))];
}

export function measureTone(options: {
  power: Float64Array;
  binHz: number;
  sampleRate: number;
  /** Refined fundamental (lobeCentroidHz of the reference channel), shared by all channels. */
  fundamentalHz: number;
  halfWidth: number;
  band: BinRange;
}): ToneFigures {
  const { power: p, binHz, sampleRate, fundamentalHz, halfWidth, band } = options;
  const centre = Math.round(fundamentalHz / binHz);
  const fundamentalLobe: BinRange = [centre - halfWidth, centre + halfWidth];
  const fundamentalPower = sumBins(p, fundamentalLobe[0], fundamentalLobe[1]);
  // Harmonic lobes must not overlap each other: spacing is f0 in bins.
  const spacing = fundamentalHz / binHz;
  const hw = Math.min(halfWidth, Math.floor((spacing - 1) / 2));
  const harmonics: ToneFigures['harmonics'] = [];
  const excluded: BinRange[] = [fundamentalLobe];
  for (let h = 2; h <= MAX_HARMONIC; h++) {
    const f = h * fundamentalHz;
    if (f >= sampleRate / 2) break;
    const c = Math.round(f / binHz);
    harmonics.push({ order: h, frequencyHz: f, power: sumBins(p, c - hw, c + hw) });
    excluded.push([c - hw, c + hw]);
  }
  // Lobes narrower than the window's main lobe would leak the fundamental into its harmonics.
  const resolvable = hw >= halfWidth - 1;
  const harmonicPower = harmonics.reduce((s, h) => s + h.power, 0);
  const thdRatio = resolvable && fundamentalPower > 0 ? Math.sqrt(harmonicPower / fundamentalPower) : null;

  let total = 0;
  let residual = 0;
  for (let k = band[0]; k <= band[1]; k++) {
    total += p[k]!;
    // Summed directly rather than as total − fundamental, which would cancel away a −150 dB residual.
    if (k < fundamentalLobe[0] || k > fundamentalLobe[1]) residual += p[k]!;
  }
  const thdnRatio = total > 0 ? Math.sqrt(residual / total) : null;
  return { fundamentalHz, fundamentalPower, harmonics, thdRatio, thdnRatio, excluded };
}
