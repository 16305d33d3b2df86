import { ceilPowerOfTwo, floorPowerOfTwo, RealFft } from './fft';
import { roundTo } from './units';
import { makeWindow, windowProperties, type WindowKind } from './window';

// Averaged power spectra (Welch's method) over a bounded number of frames, so a long capture costs
// no more FFTs than a short one. Power is normalised per bin as mean square ("one-sided"):
//   p[k] = c·|X[k]|² / (N·Σw²),  c = 2 except at DC and N/2,
// so Σ p[k] ≈ mean square of the signal (Parseval with the window's ENBW), and the power of a
// sine equals the sum of p over its main lobe, independent of where it falls between bins.

/** Frequency resolution aimed for: fine enough to part 50 Hz hum from 60 Hz and from 20 Hz. */
export const TARGET_BIN_HZ = 0.75;
export const MAX_FFT_SIZE = 1 << 18;
export const MIN_FFT_SIZE = 64;
/**
 * Upper bound on averaged frames per channel, so a long capture costs no more FFTs than a short
 * one: 8 frames of ~1.4 s, spread over the capture. Noise figures sum thousands of bins, so their
 * spread stays small; a single bin's spread with 8 averages is about ±1.5 dB.
 */
export const MAX_WELCH_FRAMES = 8;

export interface FramePlan {
  fftSize: number;
  starts: number[];
}

export function fftSizeFor(sampleRate: number, frames: number): number {
  if (frames < MIN_FFT_SIZE) return 0;
  return Math.min(MAX_FFT_SIZE, ceilPowerOfTwo(sampleRate / TARGET_BIN_HZ), floorPowerOfTwo(frames));
}

/** Frames spread evenly over the capture, overlapping by at most half when the capture is short. */
export function planWelch(sampleRate: number, frames: number, maxFrames = MAX_WELCH_FRAMES): FramePlan | null {
  const n = fftSizeFor(sampleRate, frames);
  if (n === 0) return null;
  const count = Math.max(1, Math.min(maxFrames, 1 + Math.floor((frames - n) / (n / 2))));
  const span = frames - n;
  const starts = count === 1 ? [Math.floor(span / 2)] : Array.from({ length: count }, (_, i) => Math.round((i * span) / (count - 1)));
  return { fftSize: n, starts };
}

/**
 * Collects fixed-size frames at given start positions from a stream of blocks. Starts may be
 * negative or run past the end: those parts of the frame stay zero.
 */
export class FrameCollector {
  private readonly size: number;
  private readonly starts: readonly number[];
  private readonly channels: number;
  private readonly onFrame: (frame: readonly Float64Array[]) => void;
  private next = 0;
  private readonly active: { start: number; buffers: Float64Array[] }[] = [];
  private readonly pool: Float64Array[][] = [];

  constructor(size: number, starts: readonly number[], channels: number, onFrame: (frame: readonly Float64Array[]) => void) {
    this.size = size;
    this.starts = starts;
    this.channels = channels;
    this.onFrame = onFrame;
  }

  private acquire(): Float64Array[] {
    const b = this.pool.pop();
    if (!b) return Array.from({ length: this.channels }, () => new Float64Array(this.size));
    for (const c of b) c.fill(0);
    return b;
  }

  push(block: readonly Float64Array[], blockStart: number, length: number): void {
    const blockEnd = blockStart + length;
    while (this.next < this.starts.length && this.starts[this.next]! < blockEnd) {
      this.active.push({ start: this.starts[this.next]!, buffers: this.acquire() });
      this.next++;
    }
    for (let i = 0; i < this.active.length; ) {
      const f = this.active[i]!;
      const from = Math.max(f.start, blockStart);
      const to = Math.min(f.start + this.size, blockEnd);
      if (to > from) {
        for (let c = 0; c < this.channels; c++) {
          f.buffers[c]!.set(block[c]!.subarray(from - blockStart, to - blockStart), from - f.start);
        }
      }
      if (f.start + this.size <= blockEnd) {
        this.onFrame(f.buffers);
        this.pool.push(f.buffers);
        this.active.splice(i, 1);
      } else i++;
    }
  }

  /** Emits frames still open (zero-padded past the end) and any starting before `totalFrames`. */
  finish(totalFrames: number): void {
    while (this.next < this.starts.length && this.starts[this.next]! < totalFrames) {
      this.active.push({ start: this.starts[this.next]!, buffers: this.acquire() });
      this.next++;
    }
    for (const f of this.active) this.onFrame(f.buffers);
    this.active.length = 0;
  }
}

export interface AveragedSpectrum {
  /** Mean square per bin, k = 0 … N/2, averaged over frames. */
  power: Float64Array[];
  fftSize: number;
  binHz: number;
  frames: number;
  enbwBins: number;
  window: WindowKind;
}

/**
 * Windowed, averaged power spectra of every channel over a frame plan. The FFT tables and window
 * are built when the first frame completes, so a file found truncated early costs nothing here.
 */
export class SpectrumAccumulator {
  readonly collector: FrameCollector;
  private readonly size: number;
  private readonly channels: number;
  private readonly kind: WindowKind;
  private readonly sampleRate: number;
  private state: { fft: RealFft; window: Float64Array; sums: Float64Array[] } | null = null;
  private frames = 0;

  constructor(plan: FramePlan, channels: number, sampleRate: number, kind: WindowKind) {
    this.size = plan.fftSize;
    this.channels = channels;
    this.kind = kind;
    this.sampleRate = sampleRate;
    this.collector = new FrameCollector(plan.fftSize, plan.starts, channels, (frame) => this.addFrame(frame));
  }

  private ready(): NonNullable<SpectrumAccumulator['state']> {
    this.state ??= {
      fft: new RealFft(this.size),
      window: makeWindow(this.kind, this.size),
      sums: Array.from({ length: this.channels }, () => new Float64Array(this.size / 2 + 1)),
    };
    return this.state;
  }

  private addFrame(frame: readonly Float64Array[]): void {
    const { fft, window: w, sums } = this.ready();
    for (let c = 0; c < frame.length; c++) fft.accumulateWindowedPower(frame[c]!, w, sums[c]!);
    this.frames++;
  }

  result(): AveragedSpectrum {
    const { window, sums } = this.ready();
    const n = this.size;
    const props = windowProperties(window);
    const scale = 1 / (Math.max(1, this.frames) * n * props.sumSquares);
    const power = sums.map((sum) => {
      const p = new Float64Array(sum.length);
      for (let k = 0; k < sum.length; k++) p[k] = sum[k]! * scale * (k === 0 || k === n / 2 ? 1 : 2);
      return p;
    });
    return { power, fftSize: n, binHz: this.sampleRate / n, frames: this.frames, enbwBins: props.enbwBins, window: this.kind };
  }
}

/** Σ p[k] for lo ≤ k ≤ hi, clamped to the spectrum. */
export function sumBins(p: Float64Array, lo: number, hi: number): number {
  let s = 0;
  for (let k = Math.max(0, lo), end = Math.min(p.length - 1, hi); k <= end; k++) s += p[k]!;
  return s;
}

export function peakBin(p: Float64Array, lo: number, hi: number): number {
  let best = Math.max(0, lo);
  for (let k = best, end = Math.min(p.length - 1, hi); k <= end; k++) if (p[k]! > p[best]!) best = k;
  return best;
}

export const SPECTRUM_POINTS = 400;
export const SPECTRUM_FLOOR_DBFS = -200;

/**
 * Log-spaced plot summary: in each of `points` bands the highest bin, scaled by the ENBW so that
 * a sine's peak reads its own dBFS (scalloping aside). Bands narrower than a bin are skipped.
 */
export function summarizeSpectrum(
  spectrum: Pick<AveragedSpectrum, 'binHz' | 'enbwBins'>,
  p: Float64Array,
  lowHz: number,
  highHz: number,
  points = SPECTRUM_POINTS,
): { frequencyHz: number[]; levelDbfs: number[]; floorDbfs: number } {
  const frequencyHz: number[] = [];
  const levelDbfs: number[] = [];
  const ratio = (highHz / lowHz) ** (1 / points);
  let lastBin = -1;
  for (let b = 0; b < points; b++) {
    const lo = Math.max(lastBin + 1, Math.ceil((lowHz * ratio ** b) / spectrum.binHz));
    const hi = Math.min(p.length - 1, Math.ceil((lowHz * ratio ** (b + 1)) / spectrum.binHz) - 1);
    if (hi < lo) continue;
    const k = peakBin(p, lo, hi);
    lastBin = hi;
    const level = 10 * Math.log10(2 * p[k]! * spectrum.enbwBins);
    frequencyHz.push(roundTo(k * spectrum.binHz, 2));
    levelDbfs.push(roundTo(Number.isFinite(level) ? Math.max(SPECTRUM_FLOOR_DBFS, level) : SPECTRUM_FLOOR_DBFS, 2));
  }
  return { frequencyHz, levelDbfs, floorDbfs: SPECTRUM_FLOOR_DBFS };
}
