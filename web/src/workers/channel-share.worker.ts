// Relative imports, not the @analysis alias, so a page built outside the app (the browser test's
// harness) can bundle the pool and this worker with a plain Vite config.
import { CaptureAnalyzer, type AnalysisResult, type AnalyzeOptions, type ChannelShare } from '../../../analysis/index';
import { shareErrorData, type ShareErrorData } from '../../../analysis/share-errors';

// One worker of the analysis pool (analysis-pool.ts): measures its share of a WAV file's channels
// and posts the figures back. Errors go back as plain data so the pool can rebuild the engine's
// own error classes; a worker handles one task at a time.

export interface ShareTask {
  /** The whole WAV file: its samples are interleaved, so every share needs all of the data. */
  bytes: Uint8Array;
  /** Already parsed by the pool (parseAnalyzeOptions). */
  options: AnalyzeOptions;
  /** The channels to measure, increasing; null measures every channel and finishes the result here. */
  channels: number[] | null;
}

export type ShareReply =
  | { ok: true; share: ChannelShare }
  | { ok: true; result: AnalysisResult }
  | { ok: false; error: ShareErrorData };

/** The parts of the worker's global scope used here (the DOM lib types `self` as a window). */
interface WorkerScope {
  postMessage(message: ShareReply): void;
  onmessage: ((e: MessageEvent<ShareTask>) => void) | null;
}
const scope = self as unknown as WorkerScope;

function measure(task: ShareTask): ShareReply {
  const analyzer = new CaptureAnalyzer(task.options, task.channels ?? undefined);
  analyzer.push(task.bytes);
  // Alone on the file: the figures across channels are made here too, leaving the page nothing to do.
  if (!task.channels) return { ok: true, result: analyzer.finish() };
  return { ok: true, share: analyzer.finishShare() };
}

scope.onmessage = (e) => {
  let reply: ShareReply;
  try {
    reply = measure(e.data);
  } catch (err) {
    reply = { ok: false, error: shareErrorData(err) };
  }
  scope.postMessage(reply);
};
