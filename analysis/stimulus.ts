import type { Stimulus } from '../shared/analysis-result';
import type { LevelFigures } from './levels';
import { localNoisePerBin } from './noise';
import { sumBins, type AveragedSpectrum } from './spectrum';
import { findPeakBin } from './thd';
import { meanSquareToDbfs } from './units';

// What was the stimulus, when the caller does not say? Rules of our own, in this order:
// - sweep: the zero-crossing rate of the loud segments rises almost monotonically over ≥ 3 octaves;
// - tone: the highest spectral peak holds ≥ 10× (10 dB) the power of everything else, unless it
//   sits on a mains harmonic below −40 dBFS (then it is hum on an otherwise quiet capture). When
//   the caller names the tone's frequency, the peak found there need only stand 10 dB above the
//   noise around it (other signals may be louder);
// - silence: RMS below −40 dBFS in every channel (no stimulus, or a terminated input);
// - programme: anything else (music, speech).

export interface ToneCandidate {
  channel: number;
  peakBin: number;
  lobePower: number;
  /** Lobe power over the power of the rest of the spectrum. */
  prominence: number;
  /** Lobe power over the noise expected in the lobe from its neighbourhood. */
  localProminence: number;
  /** True when searched near a frequency the caller gave. */
  expected: boolean;
}

export function toneCandidates(
  spectrum: AveragedSpectrum,
  halfWidth: number,
  sampleRate: number,
  toneHz: number | undefined,
): ToneCandidate[] {
  const { binHz } = spectrum;
  const low = toneHz ? toneHz * 0.95 : Math.max(10, (halfWidth + 2) * binHz);
  const high = toneHz ? toneHz * 1.05 : sampleRate / 2 - (halfWidth + 2) * binHz;
  return spectrum.power.map((p, channel) => {
    const peak = findPeakBin(p, binHz, low, high);
    const lobePower = sumBins(p, peak - halfWidth, peak + halfWidth);
    const all = sumBins(p, 1, p.length - 1);
    const rest = all - lobePower;
    const noise = localNoisePerBin(p, peak, halfWidth, []) * (2 * halfWidth + 1);
    // Nothing but the lobe (or nothing at all): prominent only if the lobe holds something.
    const ratio = (a: number, b: number): number => (b > 0 ? a / b : a > 0 ? Infinity : 0);
    return {
      channel,
      peakBin: peak,
      lobePower,
      prominence: ratio(lobePower, rest),
      localProminence: ratio(lobePower, noise),
      expected: toneHz !== undefined,
    };
  });
}

function onMainsHarmonic(frequencyHz: number): boolean {
  for (const mains of [50, 60]) for (let k = 1; k <= 6; k++) if (Math.abs(frequencyHz - k * mains) <= 1.5) return true;
  return false;
}

export function isTone(candidate: ToneCandidate, binHz: number): boolean {
  if (!((candidate.expected ? candidate.localProminence : candidate.prominence) >= 10)) return false;
  const level = meanSquareToDbfs(candidate.lobePower) ?? -Infinity;
  return !(onMainsHarmonic(candidate.peakBin * binHz) && level < -40);
}

export function looksLikeSweep(segments: LevelFigures['segments'], sampleRate: number): boolean {
  const loudest = Math.max(...segments.map((s) => s.meanSquare));
  if (!(loudest > 0)) return false;
  const active = segments.filter((s) => s.samples > 0 && s.meanSquare >= loudest / 100);
  if (active.length < 8) return false;
  const freqs = active.map((s) => s.crossings / 2 / (s.samples / sampleRate));
  let rises = 0;
  for (let i = 1; i < freqs.length; i++) if (freqs[i]! > freqs[i - 1]!) rises++;
  return rises >= 0.8 * (freqs.length - 1) && freqs[freqs.length - 1]! >= 8 * freqs[0]!;
}

export function detectStimulus(options: {
  levels: readonly LevelFigures[];
  sampleRate: number;
  tone: ToneCandidate | null;
  binHz: number;
  sweepPossible: boolean;
}): Stimulus {
  const { levels, sampleRate, tone, binHz, sweepPossible } = options;
  const loudest = levels.reduce((a, b) => (b.meanSquare > a.meanSquare ? b : a));
  if (sweepPossible && looksLikeSweep(loudest.segments, sampleRate)) return 'sweep';
  if (tone && isTone(tone, binHz)) return 'tone';
  if ((meanSquareToDbfs(loudest.meanSquare) ?? -Infinity) < -40) return 'silence';
  return 'programme';
}
