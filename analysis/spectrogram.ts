import type { Spectrogram } from '../shared/analysis-result';
import { bytesToBase64 } from '../shared/byte-text';
import { ceilPowerOfTwo, RealFft } from './fft';
import { FrameCollector } from './spectrum';
import { makeWindow } from './window';

// A time × frequency picture of a capture at a fixed size (columns × log-spaced rows), whatever
// its length, built in one streaming pass.
//
// Cost is bounded too: each column gets at most a few evenly spaced FFT frames (the steady
// picture: tone, harmonics, hum, noise floor) plus one frame centred on the column's sharpest
// transient, found by a cheap per-sample scan of the second difference x[k] − 2x[k−1] + x[k−2]
// (a high-pass that lets an impulse through and keeps a low tone down). Without that frame a
// click between two steady frames, or at their tapered edges, would not show. A column keeps the
// highest level each row reached in any of its frames (max-hold), so short events stay visible.
//
// Levels: dB = 10·lg(4·|X[k]|² / (Σw)²), so a sine's peak bin reads its dBFS (AES17: full-scale
// sine = 0 dBFS) when it falls on a bin centre; scalloping of the 4-term Blackman-Harris window
// is below 1 dB (Harris 1978, Table 1).

export const SPECTROGRAM_COLUMNS = 240;
/** About a ninth of an octave per row from 20 Hz to 24 kHz: 23 kB of cells per channel at most. */
export const SPECTROGRAM_ROWS = 96;
export const SPECTROGRAM_LOW_HZ = 20;
/** Byte b stands for FLOOR + b·STEP dB: 0.6 dB steps from −153 to 0 dBFS. */
export const SPECTROGRAM_FLOOR_DB = -153;
export const SPECTROGRAM_STEP_DB = 0.6;
const STEADY_FRAMES_PER_COLUMN = 1;
const WINDOW = 'blackman-harris-4' as const;
const RECORD_MARGIN = 1.5;
/** A transient frame is analysed when its point is this much sharper (6 dB) than the steady frame's middle. */
const TRANSIENT_OVER_STEADY = 2;

/**
 * About 43 ms per frame (bins near 23 Hz): short enough to place an event in time, and the FFTs,
 * the main cost here, stay small. Rows below a few hundred hertz are narrower than a bin and repeat it.
 */
export function spectrogramFrameSize(sampleRate: number): number {
  return ceilPowerOfTwo(sampleRate / 24);
}

export interface SpectrogramOptions {
  sampleRate: number;
  channels: number;
  /** Frames in the whole capture (from the header): fixes the columns before the data arrives. */
  totalFrames: number;
  columns?: number;
  rows?: number;
}

interface OpenColumn {
  column: number;
  /** Largest |second difference| so far and where it was (absolute frame); -1 when snapped. */
  peak: number;
  centre: number;
  snapshot: Float64Array[] | null;
  /** The scan's figure for the point the snapshot is centred on. */
  snapPeak: number;
  closed: boolean;
}

/**
 * Max |x[k] − 2x[k−1] + x[k−2]| over every third k in [from, to), with st = [x[from−1], x[from−2]]
 * carried across calls. Every third sample is enough: an impulse of size a gives a, −2a, a on three
 * consecutive samples, so exactly one of them is looked at and reads at least a. Reading each
 * sample once keeps this scan, which sees every sample of the capture, cheap.
 */
function sharpestPoint(x: Float64Array, from: number, to: number, st: Float64Array, out: Float64Array): void {
  let best = -1;
  let at = from;
  const n = to - from;
  if (n >= 1) {
    best = Math.abs(x[from]! - 2 * st[0]! + st[1]!);
  }
  if (n >= 2) {
    const d = Math.abs(x[from + 1]! - 2 * x[from]! + st[0]!);
    if (d > best) {
      best = d;
      at = from + 1;
    }
  }
  for (let k = from + 4; k < to; k += 3) {
    const d = Math.abs(x[k]! - 2 * x[k - 1]! + x[k - 2]!);
    if (d > best) {
      best = d;
      at = k;
    }
  }
  if (n >= 2) {
    st[0] = x[to - 1]!;
    st[1] = x[to - 2]!;
  } else if (n === 1) {
    st[1] = st[0]!;
    st[0] = x[from]!;
  }
  out[0] = best;
  out[1] = at;
}

export class SpectrogramAccumulator {
  readonly frameSize: number;
  readonly columns: number;
  readonly rows: number;
  private readonly sampleRate: number;
  private readonly channels: number;
  private readonly totalFrames: number;
  private readonly fft: RealFft;
  private readonly window: Float64Array;
  private readonly windowSum: number;
  /** Per row, the bin range [lo, hi] whose highest power the row shows. */
  private readonly rowLo: Int32Array;
  private readonly rowHi: Int32Array;
  /** Max-held |X|² per channel, column-major: [channel][column·rows + row]. */
  private readonly cells: Float64Array[];
  private readonly steady: FrameCollector;
  private readonly steadyColumn: Int32Array;
  private steadyDone = 0;
  /** Per column, the largest |second difference| in the central quarter of its steady frames; −1 until seen. */
  private readonly steadySharpness: Float64Array;
  private readonly scratch: Float64Array;
  private readonly power: Float64Array;
  /** The last 2·frameSize samples of each channel, indexed by absolute frame mod 2·frameSize. */
  private readonly ring: Float64Array[];
  private readonly diffState: Float64Array[];
  private readonly found = new Float64Array(2);
  private readonly open: OpenColumn[] = [];
  private column = -1;
  private position = 0;
  private finished = false;

  constructor(o: SpectrogramOptions) {
    this.sampleRate = o.sampleRate;
    this.channels = o.channels;
    this.totalFrames = Math.max(0, o.totalFrames);
    const n = spectrogramFrameSize(o.sampleRate);
    this.frameSize = n;
    this.rows = o.rows ?? SPECTROGRAM_ROWS;
    // At least half a frame per column: finer columns would only repeat the same frames.
    this.columns = Math.max(1, Math.min(o.columns ?? SPECTROGRAM_COLUMNS, Math.floor(this.totalFrames / (n / 2))));
    this.fft = new RealFft(n);
    this.window = makeWindow(WINDOW, n);
    this.windowSum = this.window.reduce((a, b) => a + b, 0);
    this.scratch = new Float64Array(n);
    this.power = new Float64Array(n / 2 + 1);
    this.cells = Array.from({ length: o.channels }, () => new Float64Array(this.columns * this.rows));
    this.ring = Array.from({ length: o.channels }, () => new Float64Array(2 * n));
    this.diffState = Array.from({ length: o.channels }, () => new Float64Array(2));

    const binHz = o.sampleRate / n;
    const ratio = (this.highHz / SPECTROGRAM_LOW_HZ) ** (1 / this.rows);
    this.rowLo = new Int32Array(this.rows);
    this.rowHi = new Int32Array(this.rows);
    for (let f = 0; f < this.rows; f++) {
      const lo = SPECTROGRAM_LOW_HZ * ratio ** f;
      const hi = lo * ratio;
      let a = Math.ceil(lo / binHz);
      let b = Math.min(n / 2, Math.ceil(hi / binHz) - 1);
      // A row narrower than a bin shows the bin its centre falls in.
      if (b < a) a = b = Math.min(n / 2, Math.round(Math.sqrt(lo * hi) / binHz));
      this.rowLo[f] = a;
      this.rowHi[f] = b;
    }

    const starts: number[] = [];
    const owners: number[] = [];
    for (let c = 0; c < this.columns; c++) {
      const from = this.edge(c);
      const length = this.edge(c + 1) - from;
      const k = Math.min(STEADY_FRAMES_PER_COLUMN, Math.max(1, Math.round(length / n)));
      for (let j = 0; j < k; j++) {
        starts.push(this.frameStartNear(Math.round(from + ((j + 0.5) * length) / k)));
        owners.push(c);
      }
    }
    this.steadyColumn = Int32Array.from(owners);
    this.steadySharpness = new Float64Array(this.columns).fill(-1);
    this.steady = new FrameCollector(n, starts, o.channels, (frame) => {
      const column = this.steadyColumn[this.steadyDone++]!;
      this.noteSteadySharpness(column, frame);
      this.addFrame(column, frame);
    });
  }

  get highHz(): number {
    return this.sampleRate / 2;
  }

  /**
   * Start of the frame centred on `centre`, moved inside the capture when it fits: a frame hanging
   * over either end would see the capture's own start or end as a step, painted as broadband.
   */
  private frameStartNear(centre: number): number {
    const start = centre - this.frameSize / 2;
    if (this.totalFrames < this.frameSize) return start;
    return Math.min(this.totalFrames - this.frameSize, Math.max(0, start));
  }

  /** First frame of column c (c = columns gives the end). */
  private edge(c: number): number {
    return Math.round((c * this.totalFrames) / this.columns);
  }

  /** Feeds frames [startFrame, startFrame + length) of every channel, in order. */
  push(block: readonly Float64Array[], startFrame: number, length: number): void {
    if (this.finished) throw new Error('SpectrogramAccumulator: push after result');
    const n = this.frameSize;
    const half = n / 2;
    const found = this.found;
    for (let i = 0; i < length; ) {
      const at = startFrame + i;
      while (this.column < this.columns - 1 && at >= this.edge(this.column + 1)) this.openColumn(this.column + 1);
      const current = this.open[this.open.length - 1]!;
      // Runs of at most half a frame keep a pending centre within the ring when its frame completes.
      const to = Math.min(length, i + half, this.column < this.columns - 1 ? this.edge(this.column + 1) - startFrame : length);
      for (let c = 0; c < this.channels; c++) {
        const x = block[c]!;
        const st = this.diffState[c]!;
        if (at === 0) st[0] = st[1] = x[0]!;
        sharpestPoint(x, i, to, st, found);
        // A new frame only for a clearly sharper point (3.5 dB): a steady tone sets small records
        // all the time, and each would cost a copy of the frame.
        if (found[0]! > current.peak * RECORD_MARGIN) {
          current.peak = found[0]!;
          current.centre = startFrame + found[1]!;
        }
        this.toRing(c, x, i, to, at);
      }
      this.position = startFrame + to;
      this.snapReady(false);
      i = to;
    }
    this.steady.push(block, startFrame, length);
  }

  private openColumn(c: number): void {
    const prev = this.open[this.open.length - 1];
    if (prev) prev.closed = true;
    this.column = c;
    this.open.push({ column: c, peak: -1, centre: -1, snapshot: null, snapPeak: -1, closed: false });
  }

  private toRing(c: number, x: Float64Array, from: number, to: number, at: number): void {
    const ring = this.ring[c]!;
    const size = ring.length;
    const r = at % size;
    const first = Math.min(to - from, size - r);
    ring.set(x.subarray(from, from + first), r);
    if (first < to - from) ring.set(x.subarray(from + first, to), 0);
  }

  /** Copies out transient frames whose samples have all arrived (or all there will be, at the end). */
  private snapReady(atEnd: boolean): void {
    const half = this.frameSize / 2;
    for (let k = 0; k < this.open.length; ) {
      const col = this.open[k]!;
      if (col.centre >= 0 && (atEnd || this.frameStartNear(col.centre) + 2 * half <= this.position)) {
        col.snapshot ??= Array.from({ length: this.channels }, () => new Float64Array(this.frameSize));
        for (let c = 0; c < this.channels; c++) this.fromRing(c, this.frameStartNear(col.centre), col.snapshot[c]!);
        col.snapPeak = col.peak;
        col.centre = -1;
      }
      if (col.closed && col.centre < 0) {
        // The transient frame is only worth its FFT when its point is clearly sharper than anything
        // in the middle of the column's steady frame (where that frame's window is above −3 dB).
        const steady = this.steadySharpness[col.column]!;
        if (col.snapshot && !(steady >= 0 && col.snapPeak <= TRANSIENT_OVER_STEADY * steady)) this.addFrame(col.column, col.snapshot);
        this.open.splice(k, 1);
      } else k++;
    }
  }

  /** Frames [from, from + frameSize) from the ring; frames before 0 or not yet seen read as zero. */
  private fromRing(c: number, from: number, out: Float64Array): void {
    const ring = this.ring[c]!;
    const size = ring.length;
    // Only frames seen and still held in the ring are copied; the rest (before 0, past the end) is zero.
    const lo = Math.max(from, 0, this.position - size);
    const hi = Math.min(from + out.length, this.position);
    out.fill(0);
    for (let q = lo; q < hi; ) {
      const r = q % size;
      const take = Math.min(hi - q, size - r);
      out.set(ring.subarray(r, r + take), q - from);
      q += take;
    }
  }

  private noteSteadySharpness(column: number, frame: readonly Float64Array[]): void {
    const n = this.frameSize;
    let best = this.steadySharpness[column]!;
    for (const x of frame) {
      for (let k = (3 * n) / 8, end = (5 * n) / 8; k < end; k++) {
        const d = Math.abs(x[k]! - 2 * x[k - 1]! + x[k - 2]!);
        if (d > best) best = d;
      }
    }
    this.steadySharpness[column] = best;
  }

  private addFrame(column: number, frame: readonly Float64Array[]): void {
    const { scratch: s, window: w, power, rows, rowLo, rowHi } = this;
    for (let c = 0; c < this.channels; c++) {
      const x = frame[c]!;
      for (let i = 0; i < s.length; i++) s[i] = x[i]! * w[i]!;
      power.fill(0);
      this.fft.accumulatePower(s, power);
      const cells = this.cells[c]!;
      const base = column * rows;
      for (let f = 0; f < rows; f++) {
        let m = 0;
        for (let k = rowLo[f]!, end = rowHi[f]!; k <= end; k++) if (power[k]! > m) m = power[k]!;
        if (m > cells[base + f]!) cells[base + f] = m;
      }
    }
  }

  private finish(): void {
    if (this.finished) return;
    this.finished = true;
    // Columns the data never reached (a short file) still get their frames, all zero.
    while (this.column < this.columns - 1) this.openColumn(this.column + 1);
    const last = this.open[this.open.length - 1];
    if (last) last.closed = true;
    this.snapReady(true);
    this.steady.finish(this.totalFrames);
  }

  /** The picture, quantised; null for an empty capture. Ends the accumulation. */
  result(): Spectrogram | null {
    this.finish();
    if (this.totalFrames === 0) return null;
    const scale = 4 / (this.windowSum * this.windowSum);
    const channels = this.cells.map((cells, index) => {
      const bytes = new Uint8Array(cells.length);
      for (let i = 0; i < cells.length; i++) {
        const p = cells[i]! * scale;
        if (p <= 0) continue;
        const q = Math.round((10 * Math.log10(p) - SPECTROGRAM_FLOOR_DB) / SPECTROGRAM_STEP_DB);
        bytes[i] = q < 0 ? 0 : q > 255 ? 255 : q;
      }
      return { index, levels: bytesToBase64(bytes) };
    });
    return {
      columns: this.columns,
      rows: this.rows,
      columnSeconds: this.totalFrames / this.columns / this.sampleRate,
      lowHz: SPECTROGRAM_LOW_HZ,
      highHz: this.highHz,
      floorDb: SPECTROGRAM_FLOOR_DB,
      stepDb: SPECTROGRAM_STEP_DB,
      frameSize: this.frameSize,
      window: WINDOW,
      channels,
    };
  }
}
