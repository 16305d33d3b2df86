import type { AnalyzeOptions, WavInfo } from '../shared/analysis-result';
import type { ChannelShare } from './channel-split';
import { clickLookBack, ClickDetector } from './clicks';
import { LevelMeter } from './levels';
import { ChannelPass } from './pass';
import { MEASUREMENT_WINDOW } from './report';
import { SampleHistory } from './sample-history';
import { SpectrogramAccumulator, spectrogramLookBack } from './spectrogram';
import { planWelch, SpectrumAccumulator } from './spectrum';
import { planSweepFrames, SWEEP_WINDOW } from './sweep';
import { DECODER_BLOCK_FRAMES, FrameDecoder, fullScaleOf } from './wav-decode';
import { MAX_HEADER_BYTES, parseWavHeader, WavFormatError } from './wav-header';

// One streaming pass over a WAV file: bytes in (any chunking), a channel share's figures out.
// Memory is bounded by the block size, the FFT frames in flight and the fixed-size summaries —
// not by the file length. Options arrive already checked (analyze.ts checks them with the shared
// schema), so an analysis thread loads this without the schema library.

/** Sweep energy needs every frame; when the stimulus is not given it is gathered only this far. */
const AUTO_SWEEP_MAX_SECONDS = 30;

export class AnalyzeOptionsError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'AnalyzeOptionsError';
  }
}

interface Pipeline {
  info: WavInfo;
  keep: number[];
  decoder: FrameDecoder;
  meters: LevelMeter[];
  clicks: ClickDetector[];
  spectrum: SpectrumAccumulator | null;
  sweep: SpectrumAccumulator | null;
  /** One per measured channel (none for an empty capture). */
  spectrograms: SpectrogramAccumulator[];
}

/**
 * Push-based analyser of a share of a capture's channels: feed it the file's bytes in order, then
 * call finishShare(). Given `channels`, it measures only those (one thread's share, see
 * channel-split.ts); without, all of them.
 */
export class ShareAnalyzer {
  protected readonly options: AnalyzeOptions;
  private readonly channels: readonly number[] | null;
  private head: Uint8Array = new Uint8Array(0);
  private pipeline: Pipeline | null = null;
  private bytesSeen = 0;
  private done = false;

  /** `options` as checked by parseAnalyzeOptions (analyze.ts). */
  constructor(options: AnalyzeOptions, channels?: readonly number[]) {
    this.options = options;
    this.channels = channels ?? null;
  }

  /** Header information once the header has been read, else null. */
  get info(): WavInfo | null {
    return this.pipeline?.info ?? null;
  }

  push(chunk: Uint8Array): void {
    if (this.done) throw new Error('ShareAnalyzer: push after finish');
    // A plain Uint8Array view of a subclass (Node's Buffer): the decoder's loops then see one
    // array shape, carried partial frames included, and stay monomorphic and fast.
    const bytes = Object.getPrototypeOf(chunk) === Uint8Array.prototype ? chunk : new Uint8Array(chunk.buffer, chunk.byteOffset, chunk.byteLength);
    this.bytesSeen += bytes.length;
    if (this.pipeline) {
      this.pipeline.decoder.push(bytes);
      return;
    }
    const head = this.head.length === 0 ? bytes : concat(this.head, bytes);
    const info = parseWavHeader(head);
    if (!info) {
      if (head.length > MAX_HEADER_BYTES) {
        throw new WavFormatError('header-too-large', `no data chunk within the first ${MAX_HEADER_BYTES} bytes`);
      }
      // Copy: the caller may reuse its buffer.
      this.head = head === bytes ? bytes.slice() : head;
      return;
    }
    this.head = new Uint8Array(0);
    this.pipeline = this.start(info);
    if (head.length > info.dataOffset) this.pipeline.decoder.push(head.subarray(info.dataOffset));
  }

  private start(info: WavInfo): Pipeline {
    const o = this.options;
    if (o.drivenChannel !== undefined && o.drivenChannel >= info.channels) {
      throw new AnalyzeOptionsError(`drivenChannel ${o.drivenChannel} does not exist in a ${info.channels}-channel capture`);
    }
    const keep = this.channels ? [...this.channels] : Array.from({ length: info.channels }, (_, c) => c);
    if (keep.some((c, k) => !Number.isInteger(c) || c < 0 || c >= info.channels || (k > 0 && c <= keep[k - 1]!))) {
      throw new AnalyzeOptionsError(`channels ${keep.join(', ')} are not increasing channel numbers of a ${info.channels}-channel capture`);
    }
    const { hi, lo } = fullScaleOf(info);
    const wantSweep = o.stimulus === 'sweep' || (o.stimulus === undefined && info.durationS <= AUTO_SWEEP_MAX_SECONDS);
    const meters = keep.map(
      () =>
        new LevelMeter({
          sampleRate: info.sampleRate,
          totalFrames: info.frames,
          clipHi: hi,
          clipLo: lo,
          countCrossings: wantSweep && o.stimulus === undefined,
        }),
    );
    // Every sample is decoded once into its channel's history, where the click check and the
    // spectrogram's transient frames look back into it.
    const lookBack = Math.max(clickLookBack(info.sampleRate), spectrogramLookBack(info.sampleRate));
    const histories = keep.map(() => new SampleHistory(lookBack, DECODER_BLOCK_FRAMES));
    // One picture per channel, each from its own samples only, so a thread's share is the same
    // as in a single-thread pass (channel-split.ts).
    const spectrograms =
      info.frames > 0
        ? keep.map((_, c) => new SpectrogramAccumulator({ sampleRate: info.sampleRate, channels: 1, totalFrames: info.frames, histories: [histories[c]!] }))
        : [];
    // The spectrogram's transient frames go where the click screen found the sharpest sub-block.
    const clicks = keep.map((_, c) => {
      const g = spectrograms[c];
      return new ClickDetector(info.sampleRate, info.frames, histories[c]!, g ? (start, length, maxAbs) => g.noteSubBlock(start, length, maxAbs) : undefined);
    });
    const passes = meters.map((m, c) => new ChannelPass(m, clicks[c]!));
    const welch = planWelch(info.sampleRate, info.frames);
    const spectrum = welch ? new SpectrumAccumulator(welch, keep.length, info.sampleRate, MEASUREMENT_WINDOW) : null;
    const sweepPlan = wantSweep ? planSweepFrames(info.sampleRate, info.frames) : null;
    const sweep = sweepPlan ? new SpectrumAccumulator(sweepPlan, keep.length, info.sampleRate, SWEEP_WINDOW) : null;
    const decoder = new FrameDecoder(
      info,
      (block, start, length) => {
        for (let c = 0; c < block.length; c++) passes[c]!.process(block[c]!, length);
        spectrum?.collector.push(block, start, length);
        sweep?.collector.push(block, start, length);
        for (let c = 0; c < spectrograms.length; c++) spectrograms[c]!.push([block[c]!], start, length);
      },
      DECODER_BLOCK_FRAMES,
      keep,
      histories,
    );
    return { info, keep, decoder, meters, clicks, spectrum, sweep, spectrograms };
  }

  /** The figures of the channels this analyser measures (all, unless given a share). */
  finishShare(): ChannelShare {
    if (this.done) throw new Error('ShareAnalyzer: finish called twice');
    this.done = true;
    const p = this.pipeline;
    if (!p) {
      if (this.bytesSeen === 0) throw new WavFormatError('truncated', 'file is empty');
      const head = this.head;
      if (head.length < 12) throw new WavFormatError('truncated', `file is only ${head.length} bytes long`);
      throw new WavFormatError('truncated', `file ends after ${head.length} bytes, before the samples start`);
    }
    p.decoder.finish();
    p.spectrum?.collector.finish(p.info.frames);
    p.sweep?.collector.finish(p.info.frames);
    // Clicks before spectrograms: closing the last sub-block tells the spectrogram its sharpness.
    return {
      channels: p.keep,
      levels: p.meters.map((m) => m.result()),
      clicks: p.clicks.map((c) => c.finish()),
      spectrum: p.spectrum?.result() ?? null,
      sweepSpectrum: p.sweep?.result() ?? null,
      spectrograms: p.spectrograms.map((g) => g.result()),
    };
  }
}

function concat(a: Uint8Array, b: Uint8Array): Uint8Array {
  const out = new Uint8Array(a.length + b.length);
  out.set(a);
  out.set(b, a.length);
  return out;
}

