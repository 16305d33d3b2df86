import { parentPort, workerData } from 'node:worker_threads';
import type { ChannelShare } from '../../analysis/channel-split';
import { ShareAnalyzer } from '../../analysis/share-analyzer';
import { shareErrorData, type ShareErrorData } from '../../analysis/share-errors';
import type { AnalyzeOptions } from '../../shared/analysis-result';
import { readFileChunksBlocking } from './file-chunks';

// One analysis thread: measures its share of a capture's channels and posts the figures back
// (channel-threads.ts starts it). Errors go back as plain data, so the caller can rebuild them.

export interface ThreadTask {
  /** A stored file, or a capture held in memory (the synthetic one that warms a thread up). */
  source: { path: string } | { bytes: Uint8Array };
  options: AnalyzeOptions;
  channels: number[];
}

export type ThreadReply =
  | { ok: true; share: ChannelShare }
  | { ok: false; error: ShareErrorData };

/**
 * Measures one share, reading a file with blocking reads: used by the thread below and, for its
 * own share, by a calling thread that has nothing else to do (a command-line run).
 */
export function measureShare(task: ThreadTask): ChannelShare {
  // The options were checked by the caller (parseAnalyzeOptions): the thread loads no schema code.
  const analyzer = new ShareAnalyzer(task.options, task.channels);
  const chunks = 'path' in task.source ? readFileChunksBlocking(task.source.path) : bytesInChunks(task.source.bytes);
  for (const chunk of chunks) analyzer.push(chunk);
  return analyzer.finishShare();
}

/** A capture in memory, handed out in read-sized pieces as a file would be. */
export function* bytesInChunks(bytes: Uint8Array, chunkBytes = 1 << 20): Generator<Uint8Array> {
  for (let at = 0; at < bytes.length; at += chunkBytes) yield bytes.subarray(at, at + chunkBytes);
}

if (parentPort && (workerData as { channelThread?: boolean } | null)?.channelThread) {
  const port = parentPort;
  // One task at a time: the caller sends the next only after this one's reply.
  port.on('message', (task: ThreadTask) => {
    new Promise<ChannelShare>((resolve) => resolve(measureShare(task))).then(
      (share) => port.postMessage({ ok: true, share } satisfies ThreadReply),
      (err: unknown) => port.postMessage({ ok: false, error: shareErrorData(err) } satisfies ThreadReply),
    );
  });
}
