import { fourthDifference } from './click-screen';
import { TwoSidedPredictor } from './linear-prediction';
import type { SampleHistory } from './sample-history';
import { amplitudeToDbfs } from './units';

// Click (crackle) detection in the streaming pass. There is no standard metric, so this is ours.
//
// The rule: a sample is crackle when NEITHER the signal before it NOR the signal after it
// predicts it. A click is broadband and short: it is foreign to both sides. A change in the
// signal — a level step of a stepped attenuator or relay, a volume pot turned, a tone burst
// starting or stopping, the edge of a low-frequency square-ish wave — is a change point: up to it
// the past predicts the samples, from it on the future does, so no sample is foreign to both.
//
// 1. Screen (every sample, cheap, fused with the level meter in pass.ts): d[n] = 4th difference
//    of x ([1, −4, 6, −4, 1]), which removes a low-frequency tone (−71 dB for 997 Hz at 48 kHz:
//    (2·sin(π·f/fs))⁴) and hum. Per 5 ms sub-block, Σd² and max|d|; noise σd = √(median of the
//    sub-blocks' mean squares over ±100 ms), robust to a click touching a sub-block or two. A
//    sub-block whose max|d| passes 5 σd is a candidate; nothing else is looked at again.
// 2. Check (candidate sub-blocks only, from the raw samples kept for ±100 ms): order-8 linear
//    predictors, one forward and one backward, fitted by least squares (linear-prediction.ts);
//    forward error e_f[n] (x[n] predicted from the 8 samples before) and backward error e_b[n]
//    (from the 8 after). Prediction does not depend on the level, so the same predictors fit
//    both sides of a level step: e_f is disturbed only just after the change and e_b only just
//    before it. A crackle sample has |e_f[n]| > 7 σf AND |e_b[n]| > 7 σb, and lies above
//    −120 dBFS. One fit serves a 20 ms group of sub-blocks (a fixed grid), made on the group and
//    10 ms either side, then again without the samples whose error passed 5 σ (so a click does not
//    steer the predictor meant to expose it). σf, σb = √(median of the errors' mean squares in
//    every 4th sub-block over ±100 ms), so a burst up to ~100 ms long does not hide itself. An
//    impulse of size a gives both errors a plus noise: their mean is the reported peak.
// 3. Crackle samples closer than 10 ms are one event, reported with its start, its duration and
//    its peak: a dense crackle burst or a scratchy pot's noise is one event lasting as long as
//    the disturbance, not hundreds of clicks.
// 4. Events peaking in the first or last 2 ms are not counted: that is where a recorder's start and
//    stop transients and a generator's onset sit, and they say nothing about the unit.
//
// Limits (stated in the README too):
// - Sensitivity: an impulse must pass the screen (5 σd of the 4th difference) and stand 7 σ clear
//   of both prediction errors. On a −10 dBFS 997 Hz tone the tone's 4th-difference residue sets
//   σd, and impulses from about 14 times the noise's RMS are found. Tones above a few kHz pass
//   the 4th difference almost unattenuated, which raises σd and so the smallest click seen.
// - An edge whose shape is not the same read forwards and backwards counts: a square-ish wave
//   through a resistor-capacitor low-pass (its edge decays exponentially, which the backward
//   predictor does not follow) counts once per edge. Straight steps, clipped sines and
//   band-limited squares (ringing alike on both sides) do not count.
// - A change whose samples neither side predicts counts: a step that comes with a short
//   broadband disturbance (a relay's contact bounce) — which is crackle in fact.
// - Noise lasting more than about half of any 200 ms stretch raises σ with it: such steady noise
//   belongs in the noise figures, and only its strongest peaks count as crackle.
// - Two clicks closer than 10 ms are one event; a click within 8 samples of a level step can be
//   hidden by it. The predictors model up to four tones (two coefficients each); further tones
//   and harmonics stay in the errors, raising σ rather than making false events.
// - Cost: the check runs once per 20 ms group that holds a candidate, so a capture full of
//   crackle costs more to analyse than a clean one (about 0.5 ms per group at 96 kHz).

const SUBBLOCK_SECONDS = 0.005;
const CONTEXT_SUBBLOCKS = 20;
/** The predictor is fitted to its group and 10 ms either side (its noise level is taken over ±100 ms, so a long burst does not hide itself). */
const FIT_CONTEXT_SUBBLOCKS = 2;
const SIGMA_STRIDE = 4;
const SCRATCH_HALF = 2 * CONTEXT_SUBBLOCKS + 1;
const SCREEN_SIGMA = 5;
const THRESHOLD_SIGMA = 7;
const PREDICTOR_ORDER = 8;
const FLOOR_DBFS = -120;
const MERGE_SECONDS = 0.01;
/** Sub-blocks sharing one predictor fit (20 ms), and the error level above which a sample is left out of the refit. */
const FIT_GROUP_SUBBLOCKS = 4;
const DROP_SIGMA = 5;
const EDGE_GUARD_SECONDS = 0.002;
/** The 4th difference of a unit impulse peaks at 6 (its centre tap): the screen's floor scales by it. */
const DETECTOR_GAIN = 6;
export const MAX_LISTED_CLICKS = 200;

/** Length of the screen's sub-blocks (5 ms), on a fixed grid from frame 0. */
export function screenSubBlockFrames(sampleRate: number): number {
  return Math.max(32, Math.round(sampleRate * SUBBLOCK_SECONDS));
}

/** Sub-blocks the detector looks back over: a group's fit reaches CONTEXT_SUBBLOCKS behind its first sub-block, decisions that far ahead of its last. */
const RING_SUBBLOCKS = 2 * CONTEXT_SUBBLOCKS + FIT_GROUP_SUBBLOCKS + 1;

/** Frames of samples the detector needs kept behind the newest one (see SampleHistory). */
export function clickLookBack(sampleRate: number): number {
  return RING_SUBBLOCKS * screenSubBlockFrames(sampleRate);
}

/** Told of every finished sub-block: its first frame, its length and its largest |4th difference|. */
export type SubBlockListener = (start: number, length: number, maxAbs: number) => void;

export interface ClickEvent {
  /** Start of the event (its first crackle sample). */
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

function meanSquare(v: Float64Array, from: number, to: number): number {
  let s = 0;
  for (let i = from; i < to; i++) s += v[i]! * v[i]!;
  return s / (to - from);
}

/** Median of v[0, m) (sorts it in place). */
function median(v: Float64Array, m: number): number {
  const s = v.subarray(0, m).sort();
  return m % 2 ? s[(m - 1) / 2]! : (s[m / 2 - 1]! + s[m / 2]!) / 2;
}

export class ClickDetector {
  private readonly sampleRate: number;
  private readonly subLen: number;
  private readonly ringSize = RING_SUBBLOCKS;
  /** The raw samples, for the check: kept by the pass for clickLookBack() frames. */
  private readonly history: SampleHistory;
  private readonly onSubBlock: SubBlockListener | null;
  private readonly ms: Float64Array;
  private readonly maxAbs: Float64Array;
  private readonly lens: Float64Array;
  private readonly scratch = new Float64Array(2 * SCRATCH_HALF);
  private readonly span: Float64Array;
  private readonly errF: Float64Array;
  private readonly errB: Float64Array;
  private readonly predictor = new TwoSidedPredictor(PREDICTOR_ORDER);
  private fitGroupId = -1;
  private fitOk = false;
  private sigmaF = 0;
  private sigmaB = 0;
  private readonly screenFloor = DETECTOR_GAIN * 10 ** (FLOOR_DBFS / 20);
  private readonly floor = 10 ** (FLOOR_DBFS / 20);
  private readonly mergeGap: number;
  private readonly edgeGuard: number;
  private readonly totalFrames: number;
  /** Screen state carried between runs: see fourthDifference. */
  private readonly runState = new Float64Array(6);
  private n = 0;
  private cur = 0;
  private filled = 0;
  private decided = 0;
  private open: OpenEvent | null = null;
  private count = 0;
  private readonly events: ClickEvent[] = [];

  constructor(sampleRate: number, totalFrames: number, history: SampleHistory, onSubBlock?: SubBlockListener) {
    this.sampleRate = sampleRate;
    this.totalFrames = totalFrames;
    this.history = history;
    this.onSubBlock = onSubBlock ?? null;
    this.edgeGuard = Math.round(sampleRate * EDGE_GUARD_SECONDS);
    this.subLen = screenSubBlockFrames(sampleRate);
    this.mergeGap = Math.round(sampleRate * MERGE_SECONDS);
    this.ms = new Float64Array(this.ringSize);
    this.maxAbs = new Float64Array(this.ringSize);
    this.lens = new Float64Array(this.ringSize);
    this.span = new Float64Array((2 * CONTEXT_SUBBLOCKS + 1) * this.subLen);
    this.errF = new Float64Array(this.span.length);
    this.errB = new Float64Array(this.span.length);
  }

  /** Frames the next run may cover: to the end of the sub-block, or of the 4-sample warm-up. */
  room(): number {
    const left = this.subLen - this.filled;
    return this.n < 4 ? Math.min(left, 4 - this.n) : left;
  }

  /** True during the first four samples, which have no history (the screen holds d at zero). */
  get warming(): boolean {
    return this.n < 4;
  }

  /** The screen's state, read and written by the fused loop in pass.ts: see fourthDifference. */
  get state(): Float64Array {
    return this.runState;
  }

  /** Accounts for a run of `count` samples screened into state; decides sub-blocks now in context. */
  endRun(count: number): void {
    this.filled += count;
    this.n += count;
    if (this.filled === this.subLen) {
      this.closeSubBlock();
      while (this.decided + CONTEXT_SUBBLOCKS < this.cur) this.decide(this.decided++);
    }
  }

  /** Runs the screen by itself over x[from, to), within room(). */
  scanRun(x: Float64Array, from: number, to: number): void {
    fourthDifference(x, from, to, this.runState, !this.warming);
    this.endRun(to - from);
  }

  private closeSubBlock(): void {
    const slot = this.cur % this.ringSize;
    this.ms[slot] = this.runState[4]! / this.filled;
    this.maxAbs[slot] = this.runState[5]!;
    this.lens[slot] = this.filled;
    this.onSubBlock?.(this.cur * this.subLen, this.filled, this.runState[5]!);
    this.cur++;
    this.filled = 0;
    this.runState[4] = 0;
    this.runState[5] = 0;
  }

  private decide(j: number): void {
    const from = Math.max(0, j - CONTEXT_SUBBLOCKS);
    const to = Math.min(this.cur - 1, j + CONTEXT_SUBBLOCKS);
    const slot = j % this.ringSize;
    const peak = this.maxAbs[slot]!;
    if (peak > this.screenFloor) {
      // The median is ≥ the smallest value: most sub-blocks are cleared without sorting.
      let least = Infinity;
      for (let s = from; s <= to; s++) least = Math.min(least, this.ms[s % this.ringSize]!);
      if (peak > SCREEN_SIGMA * Math.sqrt(least)) {
        const m = to - from + 1;
        for (let t = 0; t < m; t++) this.scratch[t] = this.ms[(from + t) % this.ringSize]!;
        if (peak > Math.max(SCREEN_SIGMA * Math.sqrt(median(this.scratch, m)), this.screenFloor)) this.check(j);
      }
    }
    const end = j * this.subLen + this.lens[slot]! - 1;
    if (this.open && end - this.open.last > this.mergeGap) this.close();
  }

  /**
   * The predictor fit for group g (sub-blocks gR … gR+R−1), anchored to a fixed grid so it does
   * not depend on which sub-blocks were candidates before: least squares on the group and 10 ms
   * either side of it, then again without the equations whose error passed DROP_SIGMA (the samples a
   * click or an edge disturbs). The noise levels σf, σb come from the errors in every
   * SIGMA_STRIDE-th sub-block over ±100 ms of gR (a median needs a spread, not every sub-block).
   */
  private fitGroup(g: number): void {
    const { span, predictor, errF, errB } = this;
    const p = PREDICTOR_ORDER;
    this.fitGroupId = g;
    this.fitOk = false;
    const anchor = g * FIT_GROUP_SUBBLOCKS;
    const from = Math.max(0, anchor - CONTEXT_SUBBLOCKS);
    const to = Math.min(this.cur - 1, anchor + CONTEXT_SUBBLOCKS);
    let len = 0;
    let fitFrom = -1;
    let fitTo = 0;
    const sampled: number[] = [];
    const fitBlocks: number[] = [];
    for (let s = from; s <= to; s++) {
      const slot = s % this.ringSize;
      const start = len;
      this.history.copy(s * this.subLen, s * this.subLen + this.lens[slot]!, span, len);
      len += this.lens[slot]!;
      if ((s - anchor) % SIGMA_STRIDE === 0) sampled.push(start, len);
      if (s >= anchor - FIT_CONTEXT_SUBBLOCKS && s < anchor + FIT_GROUP_SUBBLOCKS + FIT_CONTEXT_SUBBLOCKS) {
        if (fitFrom < 0) fitFrom = start;
        fitTo = len;
        fitBlocks.push(start, len);
      }
    }
    if (fitFrom < 0) return;
    const fitSpan = span.subarray(fitFrom, fitTo);
    const fitLen = fitTo - fitFrom;
    if (!predictor.fit(fitSpan, fitLen)) return;
    const fitF = errF.subarray(fitFrom);
    const fitB = errB.subarray(fitFrom);
    this.measureErrors(
      fitSpan,
      fitLen,
      fitBlocks.map((e) => e - fitFrom),
      fitF,
      fitB,
    );
    let dropped = 0;
    for (let i = p; i < fitLen; i++) {
      if (Math.abs(fitF[i]!) > DROP_SIGMA * this.sigmaF) {
        predictor.dropForward(fitSpan, i);
        dropped++;
      }
    }
    for (let i = 0; i + p < fitLen; i++) {
      if (Math.abs(fitB[i]!) > DROP_SIGMA * this.sigmaB) {
        predictor.dropBackward(fitSpan, i);
        dropped++;
      }
    }
    if (dropped > 0 && !predictor.solve()) return;
    this.measureErrors(span, len, sampled, errF, errB);
    this.fitOk = this.sigmaF > 0 && this.sigmaB > 0;
  }

  /**
   * Errors over x[0, len) in the stretches given as [start, end) pairs, into ef and eb; σf and σb
   * from the median of the stretches' mean squares.
   */
  private measureErrors(x: Float64Array, len: number, stretches: number[], ef: Float64Array, eb: Float64Array): void {
    const { predictor, scratch } = this;
    const p = PREDICTOR_ORDER;
    let mf = 0;
    let mb = 0;
    for (let t = 0; t < stretches.length; t += 2) {
      const start = stretches[t]!;
      const end = stretches[t + 1]!;
      const f0 = Math.max(start, p);
      const b1 = Math.min(end, len - p);
      predictor.forwardErrors(x, f0, end, ef);
      predictor.backwardErrors(x, start, b1, eb);
      if (end > f0) scratch[mf++] = meanSquare(ef, f0, end);
      // Backward mean squares go in the second half of the scratch array.
      if (b1 > start) scratch[SCRATCH_HALF + mb++] = meanSquare(eb, start, b1);
    }
    this.sigmaF = mf > 0 ? Math.sqrt(median(scratch, mf)) : 0;
    this.sigmaB = mb > 0 ? Math.sqrt(median(scratch.subarray(SCRATCH_HALF), mb)) : 0;
  }

  /** The predictor check of sub-block j: its crackle samples go to the event being built. */
  private check(j: number): void {
    const g = Math.floor(j / FIT_GROUP_SUBBLOCKS);
    if (this.fitGroupId !== g) this.fitGroup(g);
    if (!this.fitOk) return;
    const { span, predictor } = this;
    const p = PREDICTOR_ORDER;
    // The sub-block with its neighbours: p samples of history and future are all the errors need.
    let len = 0;
    let offset = 0;
    for (let s = Math.max(0, j - 1); s <= Math.min(this.cur - 1, j + 1); s++) {
      const slot = s % this.ringSize;
      if (s === j) offset = len;
      this.history.copy(s * this.subLen, s * this.subLen + this.lens[slot]!, span, len);
      len += this.lens[slot]!;
    }
    const thrF = Math.max(THRESHOLD_SIGMA * this.sigmaF, this.floor);
    const thrB = Math.max(THRESHOLD_SIGMA * this.sigmaB, this.floor);
    const jLen = this.lens[j % this.ringSize]!;
    // Where one side is missing (the capture's first or last p samples) the other decides alone.
    const { errF, errB } = this;
    errF.fill(Infinity, offset, offset + jLen);
    errB.fill(Infinity, offset, offset + jLen);
    predictor.forwardErrors(span, Math.max(offset, p), offset + jLen, errF);
    predictor.backwardErrors(span, offset, Math.min(offset + jLen, len - p), errB);
    const base = j * this.subLen;
    for (let s = 0; s < jLen; s++) {
      const ef = Math.abs(errF[offset + s]!);
      const eb = Math.abs(errB[offset + s]!);
      if (ef <= thrF || eb <= thrB) continue;
      // Both errors of an impulse are its size plus noise: their mean halves the noise's share.
      const c = ef === Infinity ? eb : eb === Infinity ? ef : (ef + eb) / 2;
      if (c !== Infinity) this.add(base + s, c);
    }
  }

  private add(at: number, c: number): void {
    const e = this.open;
    if (e && at - e.last <= this.mergeGap) {
      e.last = at;
      if (c > e.peak) {
        e.peak = c;
        e.peakAt = at;
      }
      return;
    }
    this.close();
    this.open = { first: at, last: at, peak: c, peakAt: at };
  }

  private close(): void {
    const e = this.open;
    if (!e) return;
    this.open = null;
    if (e.peakAt < this.edgeGuard || e.peakAt >= this.totalFrames - this.edgeGuard) return;
    this.count++;
    if (this.events.length < MAX_LISTED_CLICKS) {
      this.events.push({
        timeS: e.first / this.sampleRate,
        peakDbfs: amplitudeToDbfs(e.peak),
        durationMs: ((e.last - e.first + 1) / this.sampleRate) * 1000,
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
