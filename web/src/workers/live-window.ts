// Relative imports, not the @analysis/@shared aliases, so the pure tests (plain vitest and the
// server's tsconfig, neither with Vite's aliases) can load this file.
import { encodeSamples, type SampleFormat } from '../../../analysis/index';
import type { RecordingFormat } from '../../../shared/recordings';

// The live bench's bookkeeping in the worker, kept apart from messaging so each piece is plain:
// - SlidingWindow: the last W frames of every channel, and how many frames came in overall;
// - ClickTally: counts each click of the overlapping analysis windows exactly once;
// - ChunkRecorder: turns the incoming samples of a soak test into numbered PCM chunks.

export class SlidingWindow {
  readonly frames: number;
  private readonly rings: Float32Array[];
  /** Frames received since the start. */
  total = 0;

  constructor(channels: number, frames: number) {
    this.frames = frames;
    this.rings = Array.from({ length: channels }, () => new Float32Array(frames));
  }

  push(block: Float32Array[]): void {
    const n = block[0]?.length ?? 0;
    for (let c = 0; c < this.rings.length; c++) {
      const ring = this.rings[c]!;
      // A missing channel (the device fell back to mono) is recorded as silence.
      const src = block[c] ?? new Float32Array(n);
      let at = this.total % this.frames;
      let from = Math.max(0, n - this.frames);
      while (from < n) {
        const take = Math.min(n - from, this.frames - at);
        ring.set(src.subarray(from, from + take), at);
        from += take;
        at = (at + take) % this.frames;
      }
    }
    this.total += n;
  }

  /** The window in time order: frames [start, total), at most `frames` long. */
  snapshot(): { start: number; channels: Float32Array[] } {
    const length = Math.min(this.total, this.frames);
    const start = this.total - length;
    const head = start % this.frames;
    const channels = this.rings.map((ring) => {
      const out = new Float32Array(length);
      const first = Math.min(length, this.frames - head);
      out.set(ring.subarray(head, head + first));
      if (first < length) out.set(ring.subarray(0, length - first), first);
      return out;
    });
    return { start, channels };
  }
}

/**
 * Overlapping windows see the same click several times. Each analysis counts only the clicks whose
 * peak lies in [countedUpTo, windowEnd − guard): a stretch that has its full context on both
 * sides (the engine's detector looks ±100 ms around each block) and that no earlier window counted.
 */
export class ClickTally {
  private countedUpTo = 0;
  readonly totals: number[];
  private span: { from: number; to: number; clicks: number[] } | null = null;
  /** True once a stretch went uncounted (windows skipped) or a window listed fewer clicks than it found. */
  incomplete = false;

  constructor(
    channels: number,
    private readonly sampleRate: number,
    private readonly guardFrames: number,
  ) {
    this.totals = new Array<number>(channels).fill(0);
  }

  get countedFrames(): number {
    return this.countedUpTo;
  }

  reset(): void {
    this.totals.fill(0);
    this.incomplete = false;
  }

  /** Starts a separate count over frames [from, to) (a soak test), alongside the running totals. */
  startSpan(from: number, to: number): void {
    this.span = { from, to, clicks: this.totals.map(() => 0) };
  }

  endSpanAt(to: number): void {
    if (this.span) this.span.to = Math.min(this.span.to, to);
  }

  spanClicks(): number[] | null {
    return this.span ? [...this.span.clicks] : null;
  }

  /** True when every frame of the span has been counted. */
  spanComplete(): boolean {
    return this.span !== null && this.countedUpTo >= this.span.to;
  }

  clearSpan(): void {
    this.span = null;
  }

  /**
   * Takes the clicks of one analysed window [start, end). `final` counts up to the end (the input
   * has stopped, no later window will come).
   */
  take(start: number, end: number, channels: { events: { timeS: number }[]; eventsTruncated: boolean }[], final = false): void {
    const leftEdge = start > 0 ? start + this.guardFrames : 0;
    if (this.countedUpTo < leftEdge) {
      this.incomplete = true;
      this.countedUpTo = leftEdge;
    }
    const lower = this.countedUpTo;
    const upper = final ? end : end - this.guardFrames;
    if (upper <= lower) return;
    channels.forEach((ch, c) => {
      if (ch.eventsTruncated) this.incomplete = true;
      for (const e of ch.events) {
        const at = start + Math.round(e.timeS * this.sampleRate);
        if (at < lower || at >= upper) continue;
        this.totals[c]!++;
        if (this.span && at >= this.span.from && at < this.span.to) this.span.clicks[c]!++;
      }
    });
    this.countedUpTo = upper;
  }
}

const FORMATS: Record<RecordingFormat, SampleFormat> = { pcm16: 16, pcm24: 24, float32: 'float32' };

/** Frames [startFrame, startFrame + frames) of the stream as interleaved PCM chunks of chunkFrames. */
export class ChunkRecorder {
  private readonly format: SampleFormat;
  private pending: Uint8Array[] = [];
  private pendingFrames = 0;
  private seq = 0;
  /** Frames recorded so far. */
  recorded = 0;

  constructor(
    readonly startFrame: number,
    public endFrame: number,
    format: RecordingFormat,
    private readonly chunkFrames: number,
    private readonly emit: (seq: number, bytes: Uint8Array, frames: number) => void,
  ) {
    this.format = FORMATS[format];
  }

  get done(): boolean {
    return this.startFrame + this.recorded >= this.endFrame;
  }

  get chunks(): number {
    return this.seq;
  }

  /** Takes a block that starts at stream frame `at`; keeps the part inside the recording. */
  push(block: Float32Array[], at: number): void {
    const n = block[0]?.length ?? 0;
    const from = Math.max(0, this.startFrame + this.recorded - at);
    const to = Math.min(n, this.endFrame - at);
    if (to <= from) return;
    this.pending.push(encodeSamples(block, this.format, from, to - from));
    this.pendingFrames += to - from;
    this.recorded += to - from;
    if (this.pendingFrames >= this.chunkFrames || this.done) this.flush();
  }

  /** Ends the recording where it has got to and sends what is pending. */
  stop(): void {
    this.endFrame = this.startFrame + this.recorded;
    this.flush();
  }

  private flush(): void {
    if (this.pendingFrames === 0) return;
    const size = this.pending.reduce((s, p) => s + p.byteLength, 0);
    const bytes = new Uint8Array(size);
    let at = 0;
    for (const p of this.pending) {
      bytes.set(p, at);
      at += p.byteLength;
    }
    this.emit(this.seq++, bytes, this.pendingFrames);
    this.pending = [];
    this.pendingFrames = 0;
  }
}
