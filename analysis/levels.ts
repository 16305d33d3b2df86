import { amplitudeToDbfs, meanSquareToDbfs, powerRatioDb } from './units';

// Streaming per-channel levels: RMS (AES17 dBFS, DC included, as a true-RMS meter reads), sample
// peak, crest factor, DC offset, clipped samples, a min/max waveform envelope, and zero-crossing
// counts per segment (used to recognise a sweep). Fed in runs by pass.ts; constant memory.

export const WAVEFORM_POINTS = 1000;
export const ZCR_SEGMENTS = 32;

export interface LevelFigures {
  rmsDbfs: number | null;
  peakDbfs: number | null;
  crestFactorDb: number | null;
  dcOffset: number;
  meanSquare: number;
  clippedSamples: number;
  waveform: { pointSeconds: number; min: number[]; max: number[] };
  /** Per segment: zero crossings, mean square, sample count. */
  segments: { crossings: number; meanSquare: number; samples: number }[];
}

export class LevelMeter {
  private readonly sampleRate: number;
  private readonly totalFrames: number;
  private readonly clipHi: number;
  private readonly clipLo: number;
  private readonly countCrossings: boolean;
  private n = 0;
  private sum = 0;
  private sumSquares = 0;
  private min = Infinity;
  private max = -Infinity;
  private clipped = 0;
  private previous = 0;
  private readonly points: number;
  private readonly waveMin: Float64Array;
  private readonly waveMax: Float64Array;
  private readonly segCrossings: Float64Array;
  private readonly segSquares: Float64Array;
  private readonly segCounts: Float64Array;
  private readonly scratch = new Float64Array(4);
  private readonly pointEdges: Float64Array;
  private readonly segEdges: Float64Array;
  /** Waveform point and zero-crossing segment of the next frame. */
  private point = 0;
  private seg = 0;

  /** countCrossings: only sweep recognition needs them. */
  constructor(options: { sampleRate: number; totalFrames: number; clipHi: number; clipLo: number; countCrossings: boolean }) {
    this.sampleRate = options.sampleRate;
    this.countCrossings = options.countCrossings;
    this.totalFrames = options.totalFrames;
    this.clipHi = options.clipHi;
    this.clipLo = options.clipLo;
    this.points = Math.max(1, Math.min(WAVEFORM_POINTS, options.totalFrames));
    this.waveMin = new Float64Array(this.points).fill(Infinity);
    this.waveMax = new Float64Array(this.points).fill(-Infinity);
    this.segCrossings = new Float64Array(ZCR_SEGMENTS);
    this.segSquares = new Float64Array(ZCR_SEGMENTS);
    this.segCounts = new Float64Array(ZCR_SEGMENTS);
    this.pointEdges = LevelMeter.edges(this.points, this.totalFrames);
    this.segEdges = LevelMeter.edges(ZCR_SEGMENTS, this.totalFrames);
    this.advance();
  }

  /**
   * First frame of each waveform point and zero-crossing segment (p·T/P rounded down; the last
   * edge is T). Computed once here: products like p·T pass 2^31 on long captures, and doing them
   * per run made the optimised pass loop fall back to slower code mid-capture.
   */
  private static edges(parts: number, totalFrames: number): Float64Array {
    const e = new Float64Array(parts + 1);
    for (let p = 0; p <= parts; p++) e[p] = Math.floor((p * totalFrames) / parts);
    return e;
  }

  /** Moves to the last point and segment that start at or before the next frame (skipping empty ones). */
  private advance(): void {
    while (this.point < this.points - 1 && this.n >= this.pointEdges[this.point + 1]!) this.point++;
    while (this.seg < ZCR_SEGMENTS - 1 && this.n >= this.segEdges[this.seg + 1]!) this.seg++;
  }

  /** Frames that can be taken as one run: up to the next waveform point or segment. */
  room(): number {
    return Math.max(1, Math.min(this.pointEdges[this.point + 1]!, this.segEdges[this.seg + 1]!) - this.n);
  }

  /** True when zero crossings are wanted: runs must then go through scanRun. */
  get wantsCrossings(): boolean {
    return this.countCrossings;
  }

  /**
   * Adds a run x[from, to) (within room()) whose sums were taken elsewhere — by the fused loop in
   * pass.ts: sums = [Σx, Σx², min, max].
   */
  addRun(x: Float64Array, from: number, to: number, sums: Float64Array, crossings = 0): void {
    const { point, seg } = this;
    const sum = sums[0]!;
    const sq = sums[1]!;
    const lo = sums[2]!;
    const hi = sums[3]!;
    // Clipped samples are rare: count them only in runs that reach full scale.
    if (hi >= this.clipHi || lo <= this.clipLo) {
      for (let k = from; k < to; k++) if (x[k]! >= this.clipHi || x[k]! <= this.clipLo) this.clipped++;
    }
    this.sum += sum;
    this.sumSquares += sq;
    if (lo < this.min) this.min = lo;
    if (hi > this.max) this.max = hi;
    if (lo < this.waveMin[point]!) this.waveMin[point] = lo;
    if (hi > this.waveMax[point]!) this.waveMax[point] = hi;
    this.segCrossings[seg]! += crossings;
    this.segSquares[seg]! += sq;
    this.segCounts[seg]! += to - from;
    this.n += to - from;
    this.advance();
  }

  /** Measures a run itself, zero crossings included (a separate loop: they cost as much as the rest). */
  scanRun(x: Float64Array, from: number, to: number): void {
    let sum = 0;
    let sq = 0;
    let lo = Infinity;
    let hi = -Infinity;
    let crossings = 0;
    let prev = this.previous;
    for (let k = from; k < to; k++) {
      const v = x[k]!;
      sum += v;
      sq += v * v;
      if (v < lo) lo = v;
      if (v > hi) hi = v;
      crossings += (v < 0 ? 1 : 0) ^ (prev < 0 ? 1 : 0);
      prev = v;
    }
    this.previous = prev;
    this.scratch.set([sum, sq, lo, hi]);
    this.addRun(x, from, to, this.scratch, crossings);
  }

  result(): LevelFigures {
    const n = Math.max(1, this.n);
    const meanSquare = this.sumSquares / n;
    const peak = Math.max(Math.abs(this.min), Math.abs(this.max));
    const rms = Math.sqrt(meanSquare);
    const compact = (v: number): number => (Number.isFinite(v) ? Number(v.toPrecision(5)) : 0);
    return {
      rmsDbfs: meanSquareToDbfs(meanSquare),
      peakDbfs: this.n > 0 ? amplitudeToDbfs(peak) : null,
      crestFactorDb: rms > 0 ? powerRatioDb((peak * peak) / meanSquare) : null,
      dcOffset: this.sum / n,
      meanSquare,
      clippedSamples: this.clipped,
      waveform: {
        pointSeconds: this.totalFrames / this.points / this.sampleRate,
        min: Array.from(this.waveMin, compact),
        max: Array.from(this.waveMax, compact),
      },
      segments: Array.from({ length: ZCR_SEGMENTS }, (_, s) => ({
        crossings: this.segCrossings[s]!,
        meanSquare: this.segCounts[s]! > 0 ? this.segSquares[s]! / this.segCounts[s]! : 0,
        samples: this.segCounts[s]!,
      })),
    };
  }
}
