import { amplitudeToDbfs } from './units';

// Click (crackle) detection in the streaming pass. There is no standard metric, so this is ours:
// 1. Detector signal d[n] = 4th difference of x ([1, −4, 6, −4, 1]). It removes a test tone
//    (−71 dB for 997 Hz at 48 kHz: (2·sin(π·f/fs))⁴) and hum, and keeps impulses (a unit impulse
//    gives a peak of 6, the centre tap, so the click's own amplitude is max|d| / 6).
// 2. Robust noise estimate: the median of the mean squares of 5 ms sub-blocks over ±100 ms around
//    each sub-block. A click touches one or two sub-blocks, so it does not move the median.
// 3. A click is |d| above 8 σ (Gaussian noise passes 8 σ about once in 10^15 samples) and above
//    −120 dBFS; crossings closer than 3 ms are one event.
// 4. Events peaking in the first or last 2 ms are not counted: that is where a recorder's start and
//    stop transients and a generator's onset sit (sox's synth, for one, starts slightly off its sine),
//    and they say nothing about the unit.

const SUBBLOCK_SECONDS = 0.005;
const CONTEXT_SUBBLOCKS = 20;
const THRESHOLD_SIGMA = 8;
const FLOOR_DBFS = -120;
const MERGE_SECONDS = 0.003;
const EDGE_GUARD_SECONDS = 0.002;
const DETECTOR_GAIN = 6;
/** The 4th difference at n is centred on sample n − 2. */
const DETECTOR_DELAY = 2;
export const MAX_LISTED_CLICKS = 200;

export interface ClickEvent {
  timeS: number;
  peakDbfs: number | null;
  durationMs: number;
}

export interface ClickFigures {
  count: number;
  perMinute: number;
  events: ClickEvent[];
  eventsTruncated: boolean;
}

interface OpenEvent {
  first: number;
  last: number;
  peak: number;
  peakAt: number;
}

/** Runs the detector over x[from, to) into buf[fill…]: Σd² and max|d| accumulate in st[4], st[5]. */
export function fourthDifference(
  x: Float64Array,
  from: number,
  to: number,
  buf: Float64Array,
  fill: number,
  st: Float64Array,
  accumulate: boolean,
): number {
  // Four cascaded first differences equal the [1, −4, 6, −4, 1] filter, without multiplies.
  let x1 = st[0]!;
  let e1p = st[1]!;
  let e2p = st[2]!;
  let e3p = st[3]!;
  let sq = st[4]!;
  let mx = st[5]!;
  for (let k = from; k < to; k++) {
    const v = x[k]!;
    const e1 = v - x1;
    const e2 = e1 - e1p;
    const e3 = e2 - e2p;
    const d = accumulate ? e3 - e3p : 0;
    x1 = v;
    e1p = e1;
    e2p = e2;
    e3p = e3;
    buf[fill++] = d;
    sq += d * d;
    // Math.abs is branch-free; a `d < 0` test mispredicts half the time on noise.
    const a = Math.abs(d);
    if (a > mx) mx = a;
  }
  st[0] = x1;
  st[1] = e1p;
  st[2] = e2p;
  st[3] = e3p;
  st[4] = sq;
  st[5] = mx;
  return fill;
}

export class ClickDetector {
  private readonly sampleRate: number;
  private readonly subLen: number;
  private readonly ringSize = 2 * CONTEXT_SUBBLOCKS + 2;
  private readonly ring: Float64Array[];
  private readonly ms: Float64Array;
  private readonly maxAbs: Float64Array;
  private readonly lens: Float64Array;
  private readonly scratch = new Float64Array(2 * CONTEXT_SUBBLOCKS + 1);
  private readonly floor = DETECTOR_GAIN * 10 ** (FLOOR_DBFS / 20);
  private readonly mergeGap: number;
  private readonly edgeGuard: number;
  private readonly totalFrames: number;
  /** Detector state carried between runs: x[n−1], the last 1st/2nd/3rd differences, Σd², max|d|. */
  private readonly runState = new Float64Array(6);
  private n = 0;
  private cur = 0;
  private filled = 0;
  private decided = 0;
  private open: OpenEvent | null = null;
  private count = 0;
  private readonly events: ClickEvent[] = [];

  constructor(sampleRate: number, totalFrames: number) {
    this.sampleRate = sampleRate;
    this.totalFrames = totalFrames;
    this.edgeGuard = Math.round(sampleRate * EDGE_GUARD_SECONDS);
    this.subLen = Math.max(32, Math.round(sampleRate * SUBBLOCK_SECONDS));
    this.mergeGap = Math.round(sampleRate * MERGE_SECONDS);
    this.ring = Array.from({ length: this.ringSize }, () => new Float64Array(this.subLen));
    this.ms = new Float64Array(this.ringSize);
    this.maxAbs = new Float64Array(this.ringSize);
    this.lens = new Float64Array(this.ringSize);
  }

  /** Frames the next run may cover: to the end of the sub-block, or of the 4-sample warm-up. */
  room(): number {
    const left = this.subLen - this.filled;
    return this.n < 4 ? Math.min(left, 4 - this.n) : left;
  }

  /** True during the first four samples, which have no history (their output is held at zero). */
  get warming(): boolean {
    return this.n < 4;
  }

  /** Where the fused loop in pass.ts writes d[n]: the current sub-block, from `fill` on. */
  get buffer(): Float64Array {
    return this.ring[this.cur % this.ringSize]!;
  }

  get fill(): number {
    return this.filled;
  }

  /** The run's state, read and written by the loop: see fourthDifference. */
  get state(): Float64Array {
    return this.runState;
  }

  /** Accounts for a run of `count` samples written up to `fill`; decides sub-blocks now in context. */
  endRun(count: number, fill: number): void {
    this.filled = fill;
    this.n += count;
    if (this.filled === this.subLen) {
      this.closeSubBlock();
      while (this.decided + CONTEXT_SUBBLOCKS < this.cur) this.decide(this.decided++);
    }
  }

  /** Runs the detector by itself over x[from, to), within room(). */
  scanRun(x: Float64Array, from: number, to: number): void {
    this.endRun(to - from, fourthDifference(x, from, to, this.buffer, this.filled, this.runState, !this.warming));
  }

  private closeSubBlock(): void {
    const slot = this.cur % this.ringSize;
    this.ms[slot] = this.runState[4]! / this.filled;
    this.maxAbs[slot] = this.runState[5]!;
    this.lens[slot] = this.filled;
    this.cur++;
    this.filled = 0;
    this.runState[4] = 0;
    this.runState[5] = 0;
  }

  private decide(j: number): void {
    const from = Math.max(0, j - CONTEXT_SUBBLOCKS);
    const to = Math.min(this.cur - 1, j + CONTEXT_SUBBLOCKS);
    const m = to - from + 1;
    const slot = j % this.ringSize;
    const peak = this.maxAbs[slot]!;
    let threshold = this.floor;
    if (peak > threshold) {
      // The median is ≥ the smallest value: most sub-blocks are cleared without sorting.
      let least = Infinity;
      for (let t = 0, r = from % this.ringSize; t < m; t++, r = r + 1 === this.ringSize ? 0 : r + 1) {
        this.scratch[t] = this.ms[r]!;
        least = Math.min(least, this.scratch[t]!);
      }
      if (peak > THRESHOLD_SIGMA * Math.sqrt(least)) {
        const sorted = this.scratch.subarray(0, m).sort();
        const median = m % 2 ? sorted[(m - 1) / 2]! : (sorted[m / 2 - 1]! + sorted[m / 2]!) / 2;
        threshold = Math.max(THRESHOLD_SIGMA * Math.sqrt(median), this.floor);
      } else threshold = Infinity;
    }
    const base = j * this.subLen;
    if (peak > threshold) {
      const buf = this.ring[slot]!;
      for (let s = 0, len = this.lens[slot]!; s < len; s++) {
        const a = Math.abs(buf[s]!);
        if (a <= threshold) continue;
        const at = base + s;
        if (this.open && at - this.open.last <= this.mergeGap) {
          this.open.last = at;
          if (a > this.open.peak) {
            this.open.peak = a;
            this.open.peakAt = at;
          }
        } else {
          this.close();
          this.open = { first: at, last: at, peak: a, peakAt: at };
        }
      }
    }
    if (this.open && base + this.lens[slot]! - 1 - this.open.last > this.mergeGap) this.close();
  }

  private close(): void {
    const e = this.open;
    if (!e) return;
    this.open = null;
    const centre = e.peakAt - DETECTOR_DELAY;
    if (centre < this.edgeGuard || centre >= this.totalFrames - this.edgeGuard) return;
    this.count++;
    if (this.events.length < MAX_LISTED_CLICKS) {
      // The 4-tap detector spreads one sample over 5: remove that spread from the duration.
      const samples = Math.max(1, e.last - e.first + 1 - 4);
      this.events.push({
        timeS: centre / this.sampleRate,
        peakDbfs: amplitudeToDbfs(e.peak / DETECTOR_GAIN),
        durationMs: (samples / this.sampleRate) * 1000,
      });
    }
  }

  finish(): ClickFigures {
    if (this.filled > 0) this.closeSubBlock();
    while (this.decided < this.cur) this.decide(this.decided++);
    this.close();
    const minutes = this.n / this.sampleRate / 60;
    return {
      count: this.count,
      perMinute: minutes > 0 ? this.count / minutes : 0,
      events: this.events,
      eventsTruncated: this.count > this.events.length,
    };
  }
}
