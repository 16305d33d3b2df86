// Relative imports (see channel-share.worker.ts): the test harness bundles this without the aliases.
import {
  channelGroups,
  ENGINE_VERSION,
  parseAnalyzeOptions,
  readWavInfo,
  resultFromShares,
  type AnalysisResult,
  type AnalyzeOptions,
  type WavInfo,
} from '../../../analysis/index';
import { shareErrorFromData } from '../../../analysis/share-errors';
import type { ShareReply, ShareTask } from './channel-share.worker';

// A pool of module Web Workers that analyse WAV files held in memory, off the page's thread.
// A short or mono file is analysed whole by one worker. A longer one is split by channel across
// the workers and the shares joined here with resultFromShares, which gives the single-thread
// result number for number (every figure the pass gathers is per channel;
// analysis/channel-split.ts); the join, the figures across channels, costs the calling thread a
// few ms. Workers start when first needed and stay warm for the next file; one that fails is
// terminated and replaced.

/** More workers than this rarely helps: captures have 1–8 channels and the page needs a core too. */
export const MAX_POOL_WORKERS = 4;

/**
 * Below this many samples (frames × channels) one worker measures the file whole. Splitting can
 * at best halve the per-channel work (about 16 ms per second of 48 kHz stereo in Chromium), and it
 * costs a message per worker and the join on the calling thread (3–15 ms in Node: the figures
 * across channels). Below about 2 s of 48 kHz stereo the saving would be a few ms, partly paid for on
 * the page's own thread. `npm run bench:browser` times both ways; on the shared 2-core machine
 * this was written on (load average 5–7) no length gave a steady gain — split ÷ one worker
 * ranged 0.6–1.5 over 0.5–10 s in three runs — so this is the estimate above, not a measured crossing.
 */
export const SPLIT_BREAK_EVEN_SAMPLES = 2 * 48_000 * 2;

/** Workers for this machine: one per core, at least 1, at most MAX_POOL_WORKERS. */
export function poolSize(cores: number | undefined = globalThis.navigator?.hardwareConcurrency): number {
  return Math.max(1, Math.min(MAX_POOL_WORKERS, Math.floor(cores || 1)));
}

export interface PoolRunOptions {
  /** 'auto' (default) splits files past SPLIT_BREAK_EVEN_SAMPLES; 'always' splits any multi-channel file. */
  split?: 'auto' | 'always' | 'never';
}

type Reply = Exclude<ShareReply, { ok: false }>;

interface Job {
  task: ShareTask;
  resolve(reply: Reply): void;
  reject(err: Error): void;
}

export class AnalysisPool {
  readonly size: number;
  private readonly idle: Worker[] = [];
  private readonly running = new Map<Worker, Job>();
  private readonly queue: Job[] = [];
  private disposed = false;
  private startedCount = 0;

  constructor(size: number = poolSize()) {
    this.size = Math.max(1, Math.floor(size));
  }

  /** Workers started so far (a failed worker's replacement counts too). */
  get started(): number {
    return this.startedCount;
  }

  /** Analyses a whole WAV file; the result equals analyzeWavBytes(bytes, options) field by field. */
  async analyse(bytes: Uint8Array, options: AnalyzeOptions = {}, how: PoolRunOptions = {}): Promise<AnalysisResult> {
    if (this.disposed) throw new Error('The analysis pool has been disposed');
    const parsed = parseAnalyzeOptions(options);
    const info = headerOf(bytes);
    const split = how.split ?? 'auto';
    const worth = split === 'always' || (split === 'auto' && info !== null && info.frames * info.channels >= SPLIT_BREAK_EVEN_SAMPLES);
    // A typed array is cloned with its whole buffer: send only the file's own bytes.
    const whole = bytes.byteOffset === 0 && bytes.byteLength === bytes.buffer.byteLength ? bytes : bytes.slice();
    if (!info || !worth || info.channels < 2 || this.size < 2) {
      const reply = await this.run({ bytes: whole, options: parsed, channels: null });
      if (!('result' in reply)) throw new Error('analysis worker sent a share where a whole result was asked for');
      return reply.result;
    }
    const replies = await Promise.all(channelGroups(info.channels, this.size).map((channels) => this.run({ bytes: whole, options: parsed, channels })));
    const shares = replies.map((r) => {
      if (!('share' in r)) throw new Error('analysis worker sent a whole result where a share was asked for');
      return r.share;
    });
    return resultFromShares({ engineVersion: ENGINE_VERSION, info, options: parsed, shares });
  }

  /** Terminates every worker; analyses still waiting or running fail. */
  dispose(): void {
    if (this.disposed) return;
    this.disposed = true;
    const gone = new Error('The analysis pool was disposed before the analysis finished');
    for (const [w, job] of this.running) {
      w.terminate();
      job.reject(gone);
    }
    this.running.clear();
    for (const w of this.idle.splice(0)) w.terminate();
    for (const job of this.queue.splice(0)) job.reject(gone);
  }

  private run(task: ShareTask): Promise<Reply> {
    return new Promise((resolve, reject) => {
      this.queue.push({ task, resolve, reject });
      this.pump();
    });
  }

  private pump(): void {
    while (!this.disposed && this.queue.length > 0) {
      const w = this.idle.pop() ?? (this.running.size < this.size ? this.spawn() : null);
      if (!w) return;
      this.dispatch(w, this.queue.shift()!);
    }
  }

  private spawn(): Worker {
    this.startedCount++;
    return new Worker(new URL('./channel-share.worker.ts', import.meta.url), { type: 'module' });
  }

  private dispatch(w: Worker, job: Job): void {
    const channels = job.task.channels;
    const where = `analysis worker for ${channels ? `channel${channels.length > 1 ? 's' : ''} ${channels.join(', ')}` : 'every channel'}`;
    this.running.set(w, job);
    const settle = (ok: boolean) => {
      w.onmessage = w.onerror = w.onmessageerror = null;
      this.running.delete(w);
      // A worker that failed may be in any state (out of memory, half-loaded): never reuse it.
      if (ok) this.idle.push(w);
      else w.terminate();
      this.pump();
    };
    w.onmessage = (e: MessageEvent<ShareReply>) => {
      const reply = e.data;
      settle(reply.ok);
      if (reply.ok) job.resolve(reply);
      else job.reject(shareErrorFromData(reply.error, where));
    };
    w.onerror = (e) => {
      // Handled here: keeps the browser from also reporting it as uncaught.
      e.preventDefault();
      settle(false);
      job.reject(new Error(`${where} stopped: ${e.message || 'the worker failed to load or crashed'}`));
    };
    w.onmessageerror = () => {
      settle(false);
      job.reject(new Error(`${where} sent a reply that could not be read`));
    };
    w.postMessage(job.task);
  }
}

/** The header, or null when it is damaged or incomplete: a worker then analyses alone and reports the engine's own error. */
function headerOf(bytes: Uint8Array): WavInfo | null {
  try {
    return readWavInfo(bytes);
  } catch {
    return null;
  }
}

