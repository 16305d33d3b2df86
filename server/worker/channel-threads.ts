import { createHash } from 'node:crypto';
import { mkdir, open, readdir, rename, stat, writeFile } from 'node:fs/promises';
import { availableParallelism, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import { build } from 'esbuild';
import {
  AnalyzeOptionsError,
  analyzeWavStream,
  channelGroups,
  ENGINE_VERSION,
  MAX_HEADER_BYTES,
  parseAnalyzeOptions,
  resultFromShares,
  WavFormatError,
  type AnalysisResult,
  type AnalyzeOptions,
  type ChannelShare,
  type WavErrorCode,
} from '../../analysis/index';
import { parseWavHeader } from '../../analysis/wav-header';
import { measureShare, type ThreadReply, type ThreadTask } from './channel-thread';
import { readFileChunks } from './file-chunks';

// A capture's analysis split across worker threads by channel (analysis/channel-split.ts says why
// by channel): each thread reads the file and measures its channels; the parts are joined into
// the result one thread would give, number for number. Mono captures, and captures too short to
// repay starting a thread, are analysed in the calling thread.

/**
 * Below this many samples (frames × channels) one thread is quicker. The pass costs about 2.5 ms
 * of CPU per second of 96 kHz stereo (0.75 s for 5 minutes), so a second thread saves about
 * 1.25 ms per second of capture, while starting it — loading the bundle, a cold compiler, the
 * file read and decoded once more — cost about 0.24 s of CPU in `npm run bench` on this 2-core
 * machine. They meet near 3 minutes of 96 kHz stereo; `npm run bench -- --break-even` shows it.
 */
export const THREAD_BREAK_EVEN_SAMPLES = 2 * 96_000 * 180;

export interface ThreadOptions {
  /** Threads to use in all (default: the machine's cores). 1 analyses in the calling thread. */
  threads?: number;
  /**
   * Whether the calling thread measures a share itself (true, the default: a command-line run
   * has nothing else to do) or only waits (false: a server keeps its event loop free).
   */
  shareCallingThread?: boolean;
  /** Analyse in threads whatever the length (tests use it on short captures). */
  ignoreBreakEven?: boolean;
  /** Read size when the calling thread analyses alone (a server keeps it small: requests wait between reads). */
  chunkBytes?: number;
  /**
   * Keep the threads, idle, for the next analysis (a server: a warm thread skips start-up and
   * compiling). They end after 30 s unused and never keep the process alive. Threads that
   * failed are never kept.
   */
  keepThreads?: boolean;
}

let liveThreads = 0;

/** Analysis threads running now in this process (for tests and for shutting down cleanly). */
export function activeAnalysisThreads(): number {
  return liveThreads;
}

let threadCode: Promise<URL> | null = null;

/** The folders the thread's code comes from: a change in any of them makes a new bundle. */
const SOURCE_DIRS = ['../../analysis', '../../shared', '.'];

async function sourceStamp(): Promise<string> {
  const hash = createHash('sha256');
  for (const dir of SOURCE_DIRS) {
    const path = fileURLToPath(new URL(dir, import.meta.url));
    for (const name of (await readdir(path)).sort()) {
      if (!name.endsWith('.ts')) continue;
      const st = await stat(join(path, name));
      hash.update(`${path}/${name}:${st.size}:${st.mtimeMs}\n`);
    }
  }
  return hash.digest('hex').slice(0, 16);
}

/**
 * The thread's code as one minified plain-JavaScript module, bundled once and kept on disk until
 * its sources change. A thread that loaded the TypeScript sources through a loader spent about
 * 0.6 s of CPU compiling them, more than a 5-minute capture's share of the work; bundling takes
 * a few hundred ms, and loading the kept bundle a few tens.
 */
function threadModule(): Promise<URL> {
  threadCode ??= (async () => {
    const dir = join(tmpdir(), 'quietpath-analysis-threads');
    const file = join(dir, `channel-thread-${await sourceStamp()}.mjs`);
    const kept = await stat(file).catch(() => null);
    if (!kept) {
      const out = await build({
        entryPoints: [fileURLToPath(new URL('./channel-thread.ts', import.meta.url))],
        bundle: true,
        minify: true,
        format: 'esm',
        platform: 'node',
        target: 'node20',
        write: false,
        logLevel: 'silent',
      });
      await mkdir(dir, { recursive: true });
      // Written whole, then renamed: a thread started by another process never reads half a file.
      const part = `${file}.${process.pid}.part`;
      await writeFile(part, out.outputFiles[0]!.contents);
      await rename(part, file);
    }
    return pathToFileURL(file);
  })();
  threadCode.catch(() => {
    threadCode = null;
  });
  return threadCode;
}

/** Ends the threads kept idle (a server shutting down, a test cleaning up). */
export async function endIdleAnalysisThreads(): Promise<void> {
  await Promise.all([...idle].map(stop));
}

/** A running analysis thread; `kept` ones wait idle for the next capture (see keepThreads). */
interface Thread {
  worker: Worker;
  gone: Promise<void>;
  exited: boolean;
  idleTimer: NodeJS.Timeout | null;
}

const idle: Thread[] = [];
/** A kept thread idle this long ends: a server between captures holds no threads for long. */
const IDLE_MS = 30_000;

function spawn(code: URL): Thread {
  const worker = new Worker(code, {
    workerData: { channelThread: true },
    // Plain JavaScript: none of the parent's loader flags (a test runner's, for one).
    execArgv: [],
  });
  liveThreads++;
  const thread: Thread = { worker, gone: Promise.resolve(), exited: false, idleTimer: null };
  thread.gone = new Promise<void>((resolve) =>
    worker.once('exit', () => {
      thread.exited = true;
      liveThreads--;
      if (thread.idleTimer) clearTimeout(thread.idleTimer);
      const at = idle.indexOf(thread);
      if (at >= 0) idle.splice(at, 1);
      resolve();
    }),
  );
  return thread;
}

function take(code: URL): Thread {
  const t = idle.pop();
  if (!t) return spawn(code);
  if (t.idleTimer) clearTimeout(t.idleTimer);
  t.idleTimer = null;
  t.worker.ref();
  return t;
}

function keep(t: Thread): void {
  if (t.exited) return;
  t.worker.unref();
  t.idleTimer = setTimeout(() => void stop(t), IDLE_MS);
  t.idleTimer.unref();
  idle.push(t);
}

async function stop(t: Thread): Promise<void> {
  const at = idle.indexOf(t);
  if (at >= 0) idle.splice(at, 1);
  if (!t.exited) await t.worker.terminate();
  await t.gone;
}

/** Runs one task on a thread: its share, or the thread's error rebuilt here. */
function run(t: Thread, task: ThreadTask): Promise<ChannelShare> {
  const where = `analysis thread for channel${task.channels.length > 1 ? 's' : ''} ${task.channels.join(', ')}`;
  const w = t.worker;
  return new Promise<ChannelShare>((resolve, reject) => {
    const onMessage = (reply: ThreadReply) => {
      off();
      if (reply.ok) resolve(reply.share);
      else reject(rebuild(reply.error, where));
    };
    const onError = (err: Error) => {
      off();
      reject(new Error(`${where} failed: ${err.message}`));
    };
    const onExit = (code: number) => {
      off();
      reject(new Error(`${where} stopped (exit code ${code}) before it reported`));
    };
    const off = () => {
      w.off('message', onMessage);
      w.off('error', onError);
      w.off('exit', onExit);
    };
    w.on('message', onMessage);
    w.on('error', onError);
    w.on('exit', onExit);
    w.postMessage(task);
  });
}

/** The engine's own errors keep their class (callers treat a damaged file as final); others say where they came from. */
function rebuild(e: { name: string; message: string; code?: string }, where: string): Error {
  if (e.name === 'WavFormatError' && e.code) return new WavFormatError(e.code as WavErrorCode, e.message);
  if (e.name === 'AnalyzeOptionsError') return new AnalyzeOptionsError(e.message);
  return new Error(`${where} failed: ${e.message}`);
}

async function readHead(path: string): Promise<Uint8Array> {
  const fh = await open(path, 'r');
  try {
    const head = new Uint8Array(MAX_HEADER_BYTES + 1);
    const { bytesRead } = await fh.read(head, 0, head.length, 0);
    return head.subarray(0, bytesRead);
  } finally {
    await fh.close();
  }
}

/** Analyses a stored WAV file, across threads when it is long enough to gain from them. */
export async function analyzeFileInThreads(path: string, options: AnalyzeOptions = {}, how: ThreadOptions = {}): Promise<AnalysisResult> {
  const parsed = parseAnalyzeOptions(options);
  const threads = Math.max(1, Math.floor(how.threads ?? availableParallelism()));
  const info = parseWavHeader(await readHead(path));
  const worth = info !== null && (how.ignoreBreakEven || info.frames * info.channels >= THREAD_BREAK_EVEN_SAMPLES);
  if (!info || !worth || threads < 2 || info.channels < 2) return analyzeWavStream(readFileChunks(path, how.chunkBytes), parsed);

  const shareCalling = how.shareCallingThread ?? true;
  const groups = channelGroups(info.channels, threads);
  const tasks: ThreadTask[] = groups.map((channels) => ({ path, options: parsed, channels }));
  const own = shareCalling ? tasks.shift()! : null;
  const code = await threadModule();
  const running = tasks.map(() => take(code));
  let ok = false;
  try {
    // The threads get their tasks first; then this thread measures its own share, blocking, as a
    // command-line run has nothing else to do meanwhile.
    const theirs = running.map((t, i) => run(t, tasks[i]!));
    const mine = own ? [new Promise<ChannelShare>((resolve) => resolve(measureShare(own)))] : [];
    const parts = await Promise.all([...mine, ...theirs]);
    ok = true;
    return resultFromShares({ engineVersion: ENGINE_VERSION, info, options: parsed, shares: parts });
  } finally {
    // When this returns every thread has ended, or (keepThreads, after a success) waits idle.
    if (ok && how.keepThreads) running.forEach(keep);
    else await Promise.all(running.map(stop));
  }
}
