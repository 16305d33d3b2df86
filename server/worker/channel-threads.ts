import { createHash } from 'node:crypto';
import { mkdir, mkdtemp, open, readdir, rename, rm, stat, writeFile } from 'node:fs/promises';
import { availableParallelism, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import { build } from 'esbuild';
import {
  analyzeWavStream,
  channelGroups,
  encodeSamples,
  encodeWavHeader,
  ENGINE_VERSION,
  MAX_HEADER_BYTES,
  parseAnalyzeOptions,
  resultFromShares,
  seededGaussian,
  type AnalysisResult,
  type AnalyzeOptions,
  type ChannelShare,
  type WavInfo,
} from '../../analysis/index';
import { shareErrorFromData } from '../../analysis/share-errors';
import { parseWavHeader } from '../../analysis/wav-header';
import { measureShare, type ThreadReply, type ThreadTask } from './channel-thread';
import { readFileChunks } from './file-chunks';

// A capture's analysis split across worker threads by channel (analysis/channel-split.ts says why
// by channel): each thread reads the file and measures its channels; the parts are joined into
// the result one thread would give, number for number. Mono captures, and captures too short to
// repay starting a thread (when no warm one is idle), are analysed in the calling thread.

/**
 * Below this many samples (frames × channels) one thread is quicker than starting threads. One
 * thread measuring both channels of a stereo capture shares the reading and the word-wise
 * decoding between them, and pays the fixed costs once: V8 compiling the hot loops as they first
 * run, the FFT tables and first transforms, about 0.2–0.3 s in a fresh process. Every new thread
 * pays those again and reads and decodes the whole file. `npm run bench -- --break-even`, 96 kHz
 * 24-bit stereo, fresh processes, load 1.7–2.0 on this 2-core machine, 2 threads against 1, three
 * runs: 60 s 0.94–1.31×, 3 min 1.00–1.15×, 5 min 0.85–1.05×, 10 min 0.61–0.77×. They meet between
 * 3 and 5 minutes; 4 minutes is taken. Threads already started and warm are another matter
 * (WARM_THREADS_PAY_ANY_LENGTH below).
 */
export const THREAD_BREAK_EVEN_SAMPLES = 2 * 96_000 * 240;

/*
 * WARM_THREADS_PAY_ANY_LENGTH. Threads a server warmed up at start (warmAnalysis) take captures of
 * any length. Measured on this shared 2-core machine (load 2.5–6) with `npm run bench:api --
 * --upload-to-result`, a 60 s 96 kHz 24-bit stereo capture, whose analysis the server used to run
 * in its own thread in 256 kB reads:
 *  - the database and queue work around the analysis is small: the job is fetched 25–60 ms after
 *    the upload's transaction began (7–40 ms after its response), the capture row read and marked
 *    running in 5–15 ms, the result checked (zod) in 3–5 ms (20–30 ms cold), stored in 10–40 ms
 *    (107 kB of JSON), and read back through the API in 4–8 ms;
 *  - the time went to the engine: its first capture in a new process took 1.5–2.5× the CPU of
 *    later ones (V8 compiles the hot loops as they run, in every thread anew), and in the server's
 *    own thread it shared the event loop with the HTTP requests served between its reads
 *    (0.34–0.47 s against 0.20–0.30 s in a quiet process; the read size made no difference);
 *  - a 10 s synthetic capture at start-up (about 1.3 s of CPU, off any request's path) brings the
 *    first capture to within 1.3× of a warm one, and two warm threads (each reads and decodes the
 *    file and measures one channel: about 20 % more CPU in all) take 0.13–0.25 s at load 2.5.
 * Per round, (queue wait + analysis) / the command line's analysis of the same file went from a
 * median of about 1.45 without the warm-up to about 1.05 with it (60 s capture, two runs each).
 */

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
   * compiling), and use idle ones whatever the capture's length. They end after 30 s unused
   * (those warmAnalysis started stay) and never keep the process alive. Threads that failed
   * are never kept.
   */
  keepThreads?: boolean;
}

let liveThreads = 0;
let threadTasks = 0;

/** Analysis threads running now in this process (for tests and for shutting down cleanly). */
export function activeAnalysisThreads(): number {
  return liveThreads;
}

/** Shares of captures measured on analysis threads so far in this process (tests: which way a capture went). */
export function analysisThreadTasks(): number {
  return threadTasks;
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
  /** Started by warmAnalysis: kept, warm, until endIdleAnalysisThreads rather than for IDLE_MS. */
  pinned: boolean;
}

const idle: Thread[] = [];
/** A kept thread idle this long ends: a server between captures holds no threads for long. */
const IDLE_MS = 30_000;

function spawn(code: URL, pinned = false): Thread {
  const worker = new Worker(code, {
    workerData: { channelThread: true },
    // Plain JavaScript: none of the parent's loader flags (a test runner's, for one).
    execArgv: [],
  });
  liveThreads++;
  const thread: Thread = { worker, gone: Promise.resolve(), exited: false, idleTimer: null, pinned };
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
  if (!t.pinned) {
    t.idleTimer = setTimeout(() => void stop(t), IDLE_MS);
    t.idleTimer.unref();
  }
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
      else reject(shareErrorFromData(reply.error, where));
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
    threadTasks++;
    w.postMessage(task);
  });
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
  const inCallingThread = () => analyzeWavStream(readFileChunks(path, how.chunkBytes), parsed);
  if (!info || threads < 2) return inCallingThread();

  const shareCalling = how.shareCallingThread ?? true;
  const groups = channelGroups(info.channels, threads);
  const tasks: ThreadTask[] = groups.map((channels) => ({ source: { path }, options: parsed, channels }));
  const own = shareCalling ? tasks.shift()! : null;
  // A mono capture is one share: the calling thread's, unless it only waits (a server), when a
  // warm thread takes it below.
  if (tasks.length === 0) return inCallingThread();
  // Threads already running and warm cost nothing to start: they pay on any length (see
  // WARM_THREADS_PAY_ANY_LENGTH); the break-even is for threads that must be started.
  const warmAndFree = how.keepThreads === true && idle.length >= tasks.length;
  const worth = how.ignoreBreakEven || warmAndFree || info.frames * info.channels >= THREAD_BREAK_EVEN_SAMPLES;
  if (!worth) return inCallingThread();

  const code = await threadModule();
  const pooled = idle.slice(-tasks.length);
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
    // A thread taken from the idle ones goes back after a success whoever borrowed it: another
    // caller kept it (a server's, warmed up at start), and ending it would undo that.
    const back = running.filter((t) => ok && (how.keepThreads || pooled.includes(t)));
    back.forEach(keep);
    await Promise.all(running.filter((t) => !back.includes(t)).map(stop));
  }
}

export interface WarmUp {
  /** Threads started and warmed (0: the calling thread only). */
  threads: number;
  ms: number;
  /** The synthetic capture's result, for warming what the caller does with results. */
  result: AnalysisResult;
}

/** Passes each warmed thread makes over the synthetic capture (see warmAnalysis). */
export const WARM_UP_ROUNDS = 3;

/**
 * Writes the warm-up capture to `path`: a −10 dBFS tone in channel 0 over −100 dBFS noise in
 * both, with a click every 1.3 s, so the tone, noise, crosstalk and click-check paths all run.
 * Made and written a second at a time: the warm-up never holds the whole capture.
 */
async function writeWarmUpCapture(path: string, seconds: number): Promise<WavInfo> {
  const sampleRate = 96_000;
  const frames = Math.round(seconds * sampleRate);
  const header = encodeWavHeader({ sampleRate, channels: 2, format: 24, frames });
  const gauss = seededGaussian(5);
  const tone = 10 ** (-10 / 20);
  const noise = 10 ** (-100 / 20);
  const w = (2 * Math.PI * 997) / sampleRate;
  const clickEvery = Math.round(1.3 * sampleRate);
  const block = [new Float64Array(sampleRate), new Float64Array(sampleRate)];
  const fh = await open(path, 'w');
  try {
    await fh.write(header);
    for (let start = 0; start < frames; start += sampleRate) {
      const n = Math.min(sampleRate, frames - start);
      for (let i = 0; i < n; i++) {
        const f = start + i;
        const click = f % clickEvery === clickEvery >> 2 ? 0.02 : 0;
        block[0]![i] = tone * Math.sin(w * f) + noise * gauss() + click;
        block[1]![i] = noise * gauss() + click;
      }
      await fh.write(encodeSamples(block, 24, 0, n));
    }
  } finally {
    await fh.close();
  }
  return parseWavHeader(header)!;
}

/**
 * Readies this process for the analyses to come, off any request's path. With threads (`threads`
 * ≥ 2), it starts them (kept, idle, until endIdleAnalysisThreads), has each measure a synthetic
 * capture of `seconds` `rounds` times, and joins their shares here, so the engine's hot loops and
 * the join are compiled before the first real capture; the calling thread then only waits for
 * threads (analyzeFileInThreads, shareCallingThread false). Without, the calling thread measures
 * the capture once, reading it asynchronously so a server's requests go on between its reads.
 *
 * Why this much (`npm run bench`, warm rows, 5-minute capture, this 2-core machine): V8 finishes
 * optimising on background threads, and two busy analysis threads leave it little room, so one
 * pass over 10 s left the first real capture at 1.5–2× the time of later ones. The threads read
 * the warm-up capture from a file, with the reads a stored capture gets, because V8 compiles for
 * the shapes it has seen. With three rounds, and two causes of mid-capture de-optimisation
 * removed from the engine (see SpectrogramAccumulator's column edges and FrameDecoder.flush), the
 * first capture came within about 1.2–1.3× of later ones. Two idle warm threads hold about 100 MB.
 */
export async function warmAnalysis(o: { seconds: number; threads?: number; rounds?: number }): Promise<WarmUp> {
  const started = performance.now();
  const options = parseAnalyzeOptions({ stimulus: 'tone' });
  const threads = Math.max(0, Math.floor(o.threads ?? Math.min(2, availableParallelism())));
  const rounds = Math.max(1, Math.floor(o.rounds ?? WARM_UP_ROUNDS));
  const dir = await mkdtemp(join(tmpdir(), 'quietpath-warm-up-'));
  try {
    const path = join(dir, 'synthetic.wav');
    const info = await writeWarmUpCapture(path, o.seconds);
    if (threads < 2) {
      // No threads (a server whose captures are in a bucket): the calling thread runs every
      // analysis, so it measures the capture itself, its reads letting requests in between.
      const result = await analyzeWavStream(readFileChunks(path, 256 * 1024), options);
      return { threads: 0, ms: performance.now() - started, result };
    }
    const code = await threadModule();
    const fresh = Array.from({ length: threads }, () => spawn(code, true));
    let ok = false;
    try {
      const groups = channelGroups(2, threads);
      // A thread beyond the channels measures channel 0 alone, as it would a mono capture.
      const tasks: ThreadTask[] = fresh.map((_, i) => ({ source: { path }, options, channels: groups[i] ?? [0] }));
      let shares: ChannelShare[] = [];
      for (let r = 0; r < rounds; r++) shares = await Promise.all(fresh.map((t, i) => run(t, tasks[i]!)));
      // The join runs here, in the calling thread: compile it too.
      const result = resultFromShares({ engineVersion: ENGINE_VERSION, info, options, shares: shares.slice(0, groups.length) });
      ok = true;
      return { threads: fresh.length, ms: performance.now() - started, result };
    } finally {
      if (ok) fresh.forEach(keep);
      else await Promise.all(fresh.map(stop));
    }
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
