import type { AnalysisResult, AnalyzeOptions, Spectrogram, WavInfo } from '../shared/analysis-result';
import type { ClickFigures } from './clicks';
import type { LevelFigures } from './levels';
import { buildResult } from './report';
import type { AveragedSpectrum } from './spectrum';

// Splitting one analysis across threads by channel, and joining the parts. Every figure the
// streaming pass gathers — levels, clicks, the averaged spectra — is computed per channel from
// that channel's samples alone, so a thread given some of the channels does for them exactly the
// arithmetic, in the same order, that one thread does for all: the joined result is the same
// number for number. (Splitting by time instead would change the order of the sums, or need the
// single-thread pass itself to sum in fixed segments.) Figures across channels (separation, the
// stimulus, the tone's reference channel) are made after the join, from the joined parts.

/** What one thread measured: the per-channel figures of the channels it was given. */
export interface ChannelShare {
  channels: number[];
  levels: LevelFigures[];
  clicks: ClickFigures[];
  spectrum: AveragedSpectrum | null;
  sweepSpectrum: AveragedSpectrum | null;
  /** Each channel's own picture (one channel each), in the order of `channels`; empty for an empty capture. */
  spectrograms: (Spectrogram | null)[];
}

/**
 * Splits channels 0…n−1 into at most `threads` runs of neighbouring channels, sizes differing by
 * at most one (each channel costs the same).
 */
export function channelGroups(channels: number, threads: number): number[][] {
  if (!Number.isInteger(channels) || channels < 1) throw new RangeError(`channels must be a positive integer, got ${channels}`);
  if (!Number.isInteger(threads) || threads < 1) throw new RangeError(`threads must be a positive integer, got ${threads}`);
  const parts = Math.min(channels, threads);
  const groups: number[][] = [];
  for (let g = 0, next = 0; g < parts; g++) {
    const size = Math.floor(channels / parts) + (g < channels % parts ? 1 : 0);
    groups.push(Array.from({ length: size }, (_, k) => next + k));
    next += size;
  }
  return groups;
}

function joinSpectra(parts: (AveragedSpectrum | null)[], order: number[][], channels: number, what: string): AveragedSpectrum | null {
  const first = parts[0] ?? null;
  if (!first) {
    if (parts.some((p) => p !== null)) throw new Error(`channel shares disagree: ${what} missing in some`);
    return null;
  }
  const power: Float64Array[] = new Array<Float64Array>(channels);
  parts.forEach((p, i) => {
    if (!p || p.fftSize !== first.fftSize || p.frames !== first.frames || p.binHz !== first.binHz || p.window !== first.window) {
      throw new Error(`channel shares disagree on the ${what} frames`);
    }
    order[i]!.forEach((c, k) => {
      power[c] = p.power[k]!;
    });
  });
  return { ...first, power };
}

/** Joins the shares of every channel (in any order) and builds the result as one thread would. */
export function resultFromShares(options: {
  engineVersion: string;
  info: WavInfo;
  options: AnalyzeOptions;
  shares: ChannelShare[];
}): AnalysisResult {
  const { info, shares } = options;
  const n = info.channels;
  const seen = new Array<boolean>(n).fill(false);
  const levels = new Array<LevelFigures>(n);
  const clicks = new Array<ClickFigures>(n);
  const pictures = new Array<Spectrogram | null>(n).fill(null);
  for (const share of shares) {
    share.channels.forEach((c, k) => {
      if (!(c >= 0 && c < n) || seen[c]) throw new Error(`channel ${c} is missing from or repeated in the shares`);
      seen[c] = true;
      levels[c] = share.levels[k]!;
      clicks[c] = share.clicks[k]!;
      pictures[c] = share.spectrograms[k] ?? null;
    });
  }
  const missing = seen.indexOf(false);
  if (missing >= 0) throw new Error(`channel ${missing} is missing from the shares`);
  const order = shares.map((s) => s.channels);
  return buildResult({
    engineVersion: options.engineVersion,
    info,
    options: options.options,
    levels,
    clicks,
    spectrum: joinSpectra(
      shares.map((s) => s.spectrum),
      order,
      n,
      'spectrum',
    ),
    sweepSpectrum: joinSpectra(
      shares.map((s) => s.sweepSpectrum),
      order,
      n,
      'sweep',
    ),
    spectrogram: joinSpectrograms(pictures),
  });
}

/** One picture of every channel from each channel's own one-channel picture (all alike in shape). */
function joinSpectrograms(perChannel: (Spectrogram | null)[]): Spectrogram | null {
  const first = perChannel[0] ?? null;
  if (!first) {
    if (perChannel.some((p) => p !== null)) throw new Error('channel shares disagree: spectrogram missing in some');
    return null;
  }
  const channels = perChannel.map((p, index) => {
    if (!p || p.columns !== first.columns || p.rows !== first.rows || p.frameSize !== first.frameSize || p.channels.length !== 1) {
      throw new Error('channel shares disagree on the spectrogram grid');
    }
    return { index, levels: p.channels[0]!.levels };
  });
  return { ...first, channels };
}
