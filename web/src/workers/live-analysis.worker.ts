import { analyzeWavBytes, encodeWav } from '@analysis/index';
import type { AnalysisResult, AnalyzeOptions } from '@shared/analysis-result';
import type { CaptureBlock } from './capture.worklet';
import type { FromWorker, LiveFigures, LiveSettings, ToWorker } from './live-protocol';
import { ChunkRecorder, ClickTally, SlidingWindow } from './live-window';

// The live bench's measuring worker. Blocks arrive from the AudioWorklet over a MessagePort; every
// hop (a quarter second, longer when the machine is slow) the last second is measured by the same
// engine that measures uploads, and the figures go to the page. A soak test's samples leave here
// as numbered PCM chunks for the page to upload.

const WINDOW_SECONDS = 1;
const HOP_SECONDS = 0.25;
/** Context kept on each side of a counted stretch: the click detector looks ±100 ms around. */
const GUARD_SECONDS = 0.2;
/** Longest hop: the window must still overlap the last counted stretch by a guard, and a hop can
 * overshoot by one worklet block (46 ms), so 0.5 s of the 0.6 s that would just fit. */
const MAX_HOP_SECONDS = 0.5;

/** The parts of the worker's global scope used here (the DOM lib types `self` as a window). */
interface WorkerScope {
  postMessage(message: unknown, transfer: Transferable[]): void;
  onmessage: ((e: MessageEvent<ToWorker>) => void) | null;
}
const scope = self as unknown as WorkerScope;
const send = (msg: FromWorker, transfer: Transferable[] = []) => scope.postMessage(msg, transfer);

interface Session {
  port: MessagePort;
  sampleRate: number;
  channels: number;
  settings: LiveSettings;
  window: SlidingWindow;
  tally: ClickTally;
  hopFrames: number;
  sinceAnalysis: number;
  recorder: ChunkRecorder | null;
  level: { want: number; got: number; buffers: Float32Array[][] } | null;
}

let session: Session | null = null;

function options(s: LiveSettings): AnalyzeOptions {
  const o: AnalyzeOptions = {};
  if (s.stimulus) o.stimulus = s.stimulus;
  if (s.toneHz) o.toneHz = s.toneHz;
  if (s.mainsHz) o.mainsHz = s.mainsHz;
  return o;
}

// Measured here rather than split across workers nested in this one (analysis-pool.ts): for a
// one-second stereo window that is no quicker — 16 ms here, 17 ms in one nested worker, 20 ms
// split across two in `npm run bench:browser` — and each hop would then wait on messages.
function analyse(channels: Float32Array[], sampleRate: number, s: LiveSettings): AnalysisResult {
  return analyzeWavBytes(encodeWav(channels, sampleRate, 'float32'), options(s));
}

function figuresOf(r: AnalysisResult, atS: number, analysisMs: number, fellBehind: boolean, clicks: number[]): LiveFigures {
  const first = r.channels[0]?.spectrum;
  return {
    atS,
    windowS: r.file.durationS,
    sampleRate: r.file.sampleRate,
    stimulus: r.stimulus,
    drivenChannel: r.drivenChannel,
    channels: r.channels.map((c) => ({
      index: c.index,
      rmsDbfs: c.rmsDbfs,
      peakDbfs: c.peakDbfs,
      fundamentalHz: c.fundamentalHz,
      fundamentalDbfs: c.fundamentalDbfs,
      thdPct: c.thdPct,
      thdnDb: c.thdnDb,
      noiseDbfs: c.noiseDbfs,
      noiseDbfsA: c.noiseDbfsA,
      humDbfs: c.humDbfs,
      clippedSamples: c.clippedSamples,
      clicks: clicks[c.index] ?? 0,
    })),
    separation: r.separation.map((s) => ({ driven: s.driven, other: s.other, db: s.db, noiseLimited: s.noiseLimited })),
    spectrum: {
      frequencyHz: first?.frequencyHz ?? [],
      levelDbfs: r.channels.map((c) => c.spectrum.levelDbfs),
      markers: r.channels.flatMap((c) => c.spectrum.markers.map((m) => ({ channel: c.index, kind: m.kind, frequencyHz: m.frequencyHz, levelDbfs: m.levelDbfs }))),
    },
    warnings: r.warnings,
    analysisMs,
    fellBehind,
  };
}

/** Measures the current window, counts its clicks and reports; `final` when no more audio comes. */
function measure(s: Session, final = false): void {
  const { start, channels } = s.window.snapshot();
  if (channels[0]!.length < 64) return;
  const began = performance.now();
  let result: AnalysisResult;
  try {
    result = analyse(channels, s.sampleRate, s.settings);
  } catch (err) {
    send({ type: 'error', message: err instanceof Error ? err.message : String(err) });
    return;
  }
  const ms = performance.now() - began;
  // A slow machine measures less often rather than falling further and further behind.
  const hopSeconds = Math.min(MAX_HOP_SECONDS, Math.max(HOP_SECONDS, (2 * ms) / 1000));
  s.hopFrames = Math.round(hopSeconds * s.sampleRate);
  s.tally.take(start, s.window.total, result.channels.map((c) => c.clicks), final);
  const rec = s.recorder;
  const recording = rec
    ? { frames: rec.recorded, seconds: rec.recorded / s.sampleRate, clicks: s.tally.spanClicks() ?? [] }
    : null;
  send({ type: 'figures', figures: figuresOf(result, s.window.total / s.sampleRate, ms, s.tally.incomplete, s.tally.totals), recording });
  finishRecordingIfCounted(s);
}

function finishRecordingIfCounted(s: Session): void {
  const rec = s.recorder;
  if (!rec || !rec.done || !s.tally.spanComplete()) return;
  send({ type: 'record-done', frames: rec.recorded, chunks: rec.chunks, clicks: s.tally.spanClicks() ?? [] });
  s.recorder = null;
  s.tally.clearSpan();
}

function onBlock(s: Session, block: Float32Array[]): void {
  const at = s.window.total;
  s.window.push(block);
  const n = block[0]?.length ?? 0;
  s.recorder?.push(block, at);
  if (s.level) {
    s.level.buffers.push(block.map((b) => b.slice()));
    s.level.got += n;
    if (s.level.got >= s.level.want) reportLevel(s);
  }
  s.sinceAnalysis += n;
  if (s.sinceAnalysis >= s.hopFrames) {
    s.sinceAnalysis = 0;
    measure(s);
  }
}

function reportLevel(s: Session): void {
  const level = s.level!;
  s.level = null;
  const channels = Array.from({ length: s.channels }, (_, c) => {
    const out = new Float32Array(level.got);
    let at = 0;
    for (const b of level.buffers) {
      out.set(b[c] ?? new Float32Array(b[0]!.length), at);
      at += b[0]!.length;
    }
    return out;
  });
  try {
    const r = analyse(channels, s.sampleRate, s.settings);
    send({ type: 'level', rmsDbfs: r.channels.map((c) => c.rmsDbfs), seconds: level.got / s.sampleRate });
  } catch (err) {
    send({ type: 'error', message: err instanceof Error ? err.message : String(err) });
  }
}

function start(msg: Extract<ToWorker, { type: 'start' }>): void {
  stop();
  const windowFrames = Math.round(WINDOW_SECONDS * msg.sampleRate);
  const s: Session = {
    port: msg.port,
    sampleRate: msg.sampleRate,
    channels: msg.channels,
    settings: msg.settings,
    window: new SlidingWindow(msg.channels, windowFrames),
    tally: new ClickTally(msg.channels, msg.sampleRate, Math.round(GUARD_SECONDS * msg.sampleRate)),
    hopFrames: Math.round(HOP_SECONDS * msg.sampleRate),
    sinceAnalysis: 0,
    recorder: null,
    level: null,
  };
  msg.port.onmessage = (e: MessageEvent<CaptureBlock>) => {
    if (session === s && e.data.type === 'block') onBlock(s, e.data.channels);
  };
  session = s;
}

function stop(): void {
  const s = session;
  if (!s) return;
  session = null;
  s.port.onmessage = null;
  s.port.close();
  if (s.recorder) {
    // The input stopped: what arrived is the recording; count its clicks to the very end.
    s.recorder.stop();
    s.tally.endSpanAt(s.window.total);
    measure(s, true);
    finishRecordingIfCounted(s);
  }
}

scope.onmessage = (e: MessageEvent<ToWorker>) => {
  const msg = e.data;
  const s = session;
  switch (msg.type) {
    case 'start':
      return start(msg);
    case 'stop':
      return stop();
    case 'settings':
      if (s) s.settings = msg.settings;
      return;
    case 'reset-clicks':
      s?.tally.reset();
      return;
    case 'record-start': {
      if (!s) return send({ type: 'error', message: 'Start the input before recording' });
      const from = s.window.total;
      const to = from + Math.round(msg.seconds * s.sampleRate);
      s.recorder = new ChunkRecorder(from, to, msg.format, Math.round(msg.chunkSeconds * s.sampleRate), (seq, bytes, frames) =>
        send({ type: 'chunk', seq, bytes: bytes.buffer as ArrayBuffer, frames }, [bytes.buffer as ArrayBuffer]),
      );
      s.tally.startSpan(from, to);
      return;
    }
    case 'record-stop':
      if (s?.recorder) {
        s.recorder.stop();
        s.tally.endSpanAt(s.window.total);
      }
      return;
    case 'measure-level':
      if (!s) return send({ type: 'error', message: 'Start the input before measuring' });
      s.level = { want: Math.round(msg.seconds * s.sampleRate), got: 0, buffers: [] };
      return;
  }
};
