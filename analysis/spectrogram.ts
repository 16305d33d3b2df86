import type { Spectrogram } from '../shared/analysis-result';
import { bytesToBase64 } from '../shared/byte-text';
import { screenSubBlockFrames } from './clicks';
import { fourthDifference } from './click-screen';
import { ceilPowerOfTwo, RealFft } from './fft';
import { SampleHistory } from './sample-history';
import { FrameCollector } from './spectrum';
import { makeWindow } from './window';

// A time × frequency picture of a capture at a fixed size (columns × log-spaced rows), whatever
// its length, built in one streaming pass.
//
// Cost is bounded too: each column gets one FFT frame at its middle (the steady picture: tone,
// harmonics, hum, noise floor) plus, when the column holds a clearly sharper moment than its
// middle, one frame centred on the sharpest 5 ms sub-block. Sharpness is the click screen's
// figure, the largest |4th difference| per sub-block (clicks.ts), which the pass computes anyway:
// a high-pass that lets an impulse through and keeps a low tone down. Without that frame a click
// between two steady frames, or at their tapered edges, would not show. A column keeps the
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
const WINDOW = 'blackman-harris-4' as const;
/** A new transient frame only for a clearly sharper sub-block (3.5 dB): a steady tone sets small records all the time, and each would cost a copy. */
const RECORD_MARGIN = 1.5;
/** A transient frame is analysed when its sub-block is this much sharper (6 dB) than the sharpest one in the middle of the steady frame. */
const TRANSIENT_OVER_STEADY = 2;

/**
 * About 43 ms per frame (bins near 23 Hz): short enough to place an event in time, and the FFTs,
 * the main cost here, stay small. Rows below a few hundred hertz are narrower than a bin and repeat it.
 */
export function spectrogramFrameSize(sampleRate: number): number {
  return ceilPowerOfTwo(sampleRate / 24);
}

/** Frames of samples the spectrogram needs kept behind the newest one (see SampleHistory). */
export function spectrogramLookBack(sampleRate: number): number {
  return spectrogramFrameSize(sampleRate);
}

export interface SpectrogramOptions {
  sampleRate: number;
  channels: number;
  /** Frames in the whole capture (from the header): fixes the columns before the data arrives. */
  totalFrames: number;
  columns?: number;
  rows?: number;
  /**
   * Given by the analysis pass: one per channel, holding the samples pushed (the decoder writes
   * them there), and the sub-blocks' sharpness then comes from the pass through noteSubBlock().
   * Without them the accumulator keeps its own copies and runs the screen itself.
   */
  histories?: readonly SampleHistory[];
}

interface OpenColumn {
  column: number;
  /** Sharpest sub-block so far and the frame at its centre; centre −1 once snapped. */
  peak: number;
  centre: number;
  snapshot: Float64Array[] | null;
  /** The sharpness of the sub-block the snapshot is centred on. */
  snapPeak: number;
  closed: boolean;
}

/** The screen run by a stand-alone accumulator, per channel: the same arithmetic as the pass's. */
interface OwnScreen {
  state: Float64Array[];
  /** Frames screened so far, and in the current sub-block. */
  screened: number;
  filled: number;
  subLen: number;
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
  /** First frame of each column, and the end: see edge(). */
  private readonly edges: Float64Array;
  /** Per column, the middle quarter [from, to) of its steady frame, and the sharpest sub-block touching it (−1 until seen). */
  private readonly middleFrom: Float64Array;
  private readonly middleTo: Float64Array;
  private readonly middleSharpness: Float64Array;
  private readonly power: Float64Array;
  private readonly histories: readonly SampleHistory[];
  private readonly own: OwnScreen | null;
  private readonly open: OpenColumn[] = [];
  private column = -1;
  /** Frames pushed so far, and the end of the last sub-block noted. */
  private position = 0;
  private notedTo = 0;
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
    this.power = new Float64Array(n / 2 + 1);
    this.cells = Array.from({ length: o.channels }, () => new Float64Array(this.columns * this.rows));
    if (o.histories) {
      if (o.histories.length !== o.channels) throw new RangeError(`${o.histories.length} histories for ${o.channels} channels`);
      this.histories = o.histories;
      this.own = null;
    } else {
      // Stand-alone pushes come in pieces of at most a frame, so a ring of two frames is enough.
      this.histories = Array.from({ length: o.channels }, () => new SampleHistory(n, n));
      this.own = { state: Array.from({ length: o.channels }, () => new Float64Array(6)), screened: 0, filled: 0, subLen: screenSubBlockFrames(o.sampleRate) };
    }

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

    // Once, here: c·T passes 2^31 on captures longer than a minute and a half at 96 kHz, and
    // computed per sub-block it threw the optimised pass back to slower code mid-capture.
    this.edges = new Float64Array(this.columns + 1);
    for (let c = 0; c <= this.columns; c++) this.edges[c] = Math.round((c * this.totalFrames) / this.columns);
    const starts: number[] = [];
    this.middleFrom = new Float64Array(this.columns);
    this.middleTo = new Float64Array(this.columns);
    this.middleSharpness = new Float64Array(this.columns).fill(-1);
    for (let c = 0; c < this.columns; c++) {
      const from = this.edge(c);
      const start = this.frameStartNear(Math.round(from + (this.edge(c + 1) - from) / 2));
      starts.push(start);
      // Where the steady frame's window is above −3 dB: an event there shows in that frame already.
      this.middleFrom[c] = start + (3 * n) / 8;
      this.middleTo[c] = start + (5 * n) / 8;
    }
    this.steadyColumn = Int32Array.from(starts, (_, c) => c);
    this.steady = new FrameCollector(n, starts, o.channels, (frame) => this.addFrame(this.steadyColumn[this.steadyDone++]!, frame));
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
    return this.edges[c]!;
  }

  /**
   * Feeds frames [startFrame, startFrame + length) of every channel, in order. With histories
   * given, call noteSubBlock() for the sub-blocks inside these frames first.
   */
  push(block: readonly Float64Array[], startFrame: number, length: number): void {
    if (this.finished) throw new Error('SpectrogramAccumulator: push after result');
    if (this.own) {
      for (let i = 0; i < length; i += this.frameSize) {
        const piece = Math.min(this.frameSize, length - i);
        const parts = block.map((x) => x.subarray(i, i + piece));
        for (let c = 0; c < this.channels; c++) this.histories[c]!.write(startFrame + i, parts[c]!, piece);
        this.screen(parts, piece);
        this.position = startFrame + i + piece;
        this.settle(false);
      }
    } else {
      this.position = startFrame + length;
      this.settle(false);
    }
    this.steady.push(block, startFrame, length);
  }

  /** The screen of a stand-alone accumulator, sub-block by sub-block as clicks.ts cuts them. */
  private screen(parts: readonly Float64Array[], length: number): void {
    const own = this.own!;
    for (let i = 0; i < length; ) {
      // The first four samples have no history: the screen holds d at zero there (as clicks.ts).
      const room = own.screened < 4 ? 4 - own.screened : own.subLen - own.filled;
      const to = Math.min(length, i + room);
      for (let c = 0; c < this.channels; c++) fourthDifference(parts[c]!, i, to, own.state[c]!, own.screened >= 4);
      own.screened += to - i;
      own.filled += to - i;
      if (own.filled === own.subLen) this.closeOwnSubBlock();
      i = to;
    }
  }

  private closeOwnSubBlock(): void {
    const own = this.own!;
    const start = own.screened - own.filled;
    for (let c = 0; c < this.channels; c++) {
      this.noteSubBlock(start, own.filled, own.state[c]![5]!);
      own.state[c]![4] = 0;
      own.state[c]![5] = 0;
    }
    own.filled = 0;
  }

  /** A screened sub-block of frames [start, start + length) and its largest |4th difference|. */
  noteSubBlock(start: number, length: number, maxAbs: number): void {
    const centre = start + (length >> 1);
    while (this.column < this.columns - 1 && centre >= this.edge(this.column + 1)) this.openColumn(this.column + 1);
    const current = this.open[this.open.length - 1]!;
    if (maxAbs > current.peak * RECORD_MARGIN) {
      current.peak = maxAbs;
      current.centre = centre;
    }
    const end = start + length;
    for (let c = Math.max(0, this.column - 1); c <= Math.min(this.columns - 1, this.column + 1); c++) {
      if (start < this.middleTo[c]! && end > this.middleFrom[c]! && maxAbs > this.middleSharpness[c]!) this.middleSharpness[c] = maxAbs;
    }
    this.notedTo = end;
  }

  private openColumn(c: number): void {
    const prev = this.open[this.open.length - 1];
    if (prev) prev.closed = true;
    this.column = c;
    this.open.push({ column: c, peak: -1, centre: -1, snapshot: null, snapPeak: -1, closed: false });
  }

  /**
   * Copies out transient frames whose samples have all arrived (or all there will be, at the end),
   * and adds those of closed columns whose middle has been screened.
   */
  private settle(atEnd: boolean): void {
    const n = this.frameSize;
    for (let k = 0; k < this.open.length; ) {
      const col = this.open[k]!;
      if (col.centre >= 0 && (atEnd || this.frameStartNear(col.centre) + n <= this.position)) {
        col.snapshot ??= Array.from({ length: this.channels }, () => new Float64Array(n));
        for (let c = 0; c < this.channels; c++) this.fromHistory(c, this.frameStartNear(col.centre), col.snapshot[c]!);
        col.snapPeak = col.peak;
        col.centre = -1;
      }
      if (col.closed && col.centre < 0 && (atEnd || this.notedTo >= this.middleTo[col.column]!)) {
        // The transient frame is only worth its FFT when its sub-block is clearly sharper than
        // anything in the middle of the column's steady frame.
        const middle = this.middleSharpness[col.column]!;
        if (col.snapshot && !(middle >= 0 && col.snapPeak <= TRANSIENT_OVER_STEADY * middle)) this.addFrame(col.column, col.snapshot);
        this.open.splice(k, 1);
      } else k++;
    }
  }

  /** Frames [from, from + frameSize) from the history; frames before 0 or not yet seen read as zero. */
  private fromHistory(c: number, from: number, out: Float64Array): void {
    const lo = Math.max(from, 0);
    const hi = Math.min(from + out.length, this.position);
    out.fill(0);
    if (hi > lo) this.histories[c]!.copy(lo, hi, out, lo - from);
  }

  private addFrame(column: number, frame: readonly Float64Array[]): void {
    const { window: w, power, rows, rowLo, rowHi } = this;
    for (let c = 0; c < this.channels; c++) {
      power.fill(0);
      this.fft.accumulateWindowedPower(frame[c]!, w, power);
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
    if (this.own && this.own.filled > 0) this.closeOwnSubBlock();
    // Columns the data never reached (a short file) still get their frames, all zero.
    while (this.column < this.columns - 1) this.openColumn(this.column + 1);
    const last = this.open[this.open.length - 1];
    if (last) last.closed = true;
    this.settle(true);
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
