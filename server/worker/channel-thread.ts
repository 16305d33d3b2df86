import { parentPort, workerData } from 'node:worker_threads';
import { CaptureAnalyzer, type ChannelShare } from '../../analysis/index';
import type { AnalyzeOptions } from '../../shared/analysis-result';
import { readFileChunks } from './file-chunks';

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
  | { ok: false; error: { name: string; message: string; code?: string } };

/** Measures one share; used by the thread below and, for its own share, by the calling thread. */
export async function measureShare(task: ThreadTask): Promise<ChannelShare> {
  const analyzer = new CaptureAnalyzer(task.options, task.channels);
  const chunks = 'path' in task.source ? readFileChunks(task.source.path) : bytesInChunks(task.source.bytes);
  for await (const chunk of chunks) analyzer.push(chunk);
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
    measureShare(task).then(
      (share) => port.postMessage({ ok: true, share } satisfies ThreadReply),
      (err: unknown) => {
        const e = err instanceof Error ? err : new Error(String(err));
        const code = (e as { code?: unknown }).code;
        port.postMessage({
          ok: false,
          error: { name: e.name, message: e.message, ...(typeof code === 'string' ? { code } : {}) },
        } satisfies ThreadReply);
      },
    );
  });
}
