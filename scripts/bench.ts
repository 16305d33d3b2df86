// Benchmark of the streaming analysis against `sox FILE -n stats` on the same capture.
//   npm run bench                 5- and 20-minute captures, 1 thread and all cores
//   npm run bench -- --break-even where threads start to pay, on shorter captures
// Makes (once) 5- and 20-minute 96 kHz 24-bit stereo captures in bench-data/ — tone, crosstalk,
// noise and a known number of clicks — then times sox and the analysis (in a child process, so
// its peak RSS is its own, worker threads included) on each, with one thread and with every core
// (server/worker/channel-threads.ts), two ways:
//   cold — a fresh process, as `npm run analyze` runs: thread start-up, compiling and the FFT
//          tables are all in the time;
//   warm — as the server's queue worker runs: it warms its threads at start (warmAnalysis, the
//          same call and length the server makes), then the timed capture goes to them.
// Targets: analysis on all cores ≤ 1.0× sox time on the 5-minute file (best of 3), peak RSS ≤
// 200 MB, and the same results with 1 and N threads, cold and warm. The speed target is met when
// either all-core row meets it, and the bench says which: warm is how a server analyses the
// captures a technician waits for, cold how `npm run analyze` does. Peak RSS is judged on the
// rows that met the speed target and on the cold rows.
import { spawnSync } from 'node:child_process';
import { closeSync, existsSync, mkdirSync, openSync, readSync, renameSync, statSync, writeSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { encodeSamples, encodeWavHeader, seededGaussian, seededRandom } from '../analysis/index';
import { analyzeFileInThreads, endIdleAnalysisThreads, warmAnalysis } from '../server/worker/channel-threads';
import { DEFAULT_WARM_UP_SECONDS } from '../server/worker/warm-up-length';

const FS = 96_000;
const DIR = join(import.meta.dirname, '..', 'bench-data');
const CLICKS_PER_MINUTE = 2;
const TARGET_RATIO = 1;
const TARGET_RSS_MB = 200;
const CORES = availableParallelism();
const ROUNDS = 3;
const secs = (ms: number): string => `${(ms / 1000).toFixed(2)} s`;

function benchFile(minutes: number): string {
  return join(DIR, `capture-${minutes}min-96k-24bit-stereo.wav`);
}

/** Writes the capture block by block: memory stays at one second of audio. */
function makeCapture(path: string, minutes: number): void {
  const seconds = Math.round(minutes * 60);
  const frames = seconds * FS;
  const fd = openSync(`${path}.part`, 'w');
  writeSync(fd, encodeWavHeader({ sampleRate: FS, channels: 2, format: 24, frames }));
  const gauss = seededGaussian(minutes);
  const dither = seededRandom(minutes + 1000);
  const noiseSigma = 10 ** (-100 / 20) / Math.SQRT2; // −100 dBFS white noise
  const w = (2 * Math.PI * 997) / FS;
  const left = new Float64Array(FS);
  const right = new Float64Array(FS);
  const clickEvery = Math.round(60 / CLICKS_PER_MINUTE);
  for (let s = 0; s < seconds; s++) {
    for (let i = 0; i < FS; i++) {
      const t = Math.sin(w * (s * FS + i));
      left[i] = 10 ** (-10 / 20) * t + noiseSigma * gauss();
      right[i] = 10 ** (-70 / 20) * t + noiseSigma * gauss();
    }
    // One click in each `clickEvery`-second slot, half-way through the second: count known by construction.
    if (s % clickEvery === clickEvery - 1) left[FS / 2]! += 0.05;
    writeSync(fd, encodeSamples([left, right], 24, 0, FS, dither));
  }
  closeSync(fd);
  renameSync(`${path}.part`, path);
}

function warmCache(path: string): void {
  const fd = openSync(path, 'r');
  const buf = Buffer.alloc(1 << 22);
  while (readSync(fd, buf, 0, buf.length, null) > 0);
  closeSync(fd);
}

/** Wall and CPU (user + system) seconds of `sox FILE -n stats`, timed by bash's `time`. */
function timeSox(path: string): { wallMs: number; cpuMs: number } {
  if (spawnSync('sox', ['--version']).error) throw new Error("sox is not installed: the bench compares with Debian's sox (apt-get install sox)");
  const r = spawnSync('bash', ['-c', 'TIMEFORMAT="%R %U %S"; time sox "$0" -n stats 2>/dev/null', path], { encoding: 'utf8' });
  const [wall, user, sys] = r.stderr.trim().split(/\s+/).slice(-3).map(Number);
  if (r.status !== 0 || ![wall, user, sys].every((v) => Number.isFinite(v))) throw new Error(`sox failed: ${r.stderr}`);
  return { wallMs: wall! * 1000, cpuMs: (user! + sys!) * 1000 };
}

interface ChildReport {
  analysisMs: number;
  cpuMs: number;
  maxRssMb: number;
  clicks: number[];
  separationDb: number | null;
  /** The whole result, to check that 1 and N threads agree. */
  json: string;
}

async function child(path: string, threads: number, ignoreBreakEven: boolean, warm: boolean): Promise<void> {
  // Warm: the server's way (analyse-capture.ts) — threads kept, the calling thread only waits.
  const how = warm ? { threads, ignoreBreakEven, keepThreads: true, shareCallingThread: threads < 2 } : { threads, ignoreBreakEven };
  if (warm) await warmAnalysis({ seconds: DEFAULT_WARM_UP_SECONDS, threads: threads >= 2 ? threads : 0 });
  const t0 = performance.now();
  const cpu0 = process.cpuUsage();
  // Cold: thread start-up (the bundle, the threads) is counted: a command-line run pays it every time.
  const r = await analyzeFileInThreads(path, {}, how);
  const cpu = process.cpuUsage(cpu0);
  await endIdleAnalysisThreads();
  const report: ChildReport = {
    analysisMs: performance.now() - t0,
    // Process-wide, so the threads' CPU is in it.
    cpuMs: (cpu.user + cpu.system) / 1000,
    // resourceUsage().maxRSS is in kilobytes.
    maxRssMb: process.resourceUsage().maxRSS / 1024,
    clicks: r.channels.map((c) => c.clicks.count),
    separationDb: r.separation[0]?.db ?? null,
    json: JSON.stringify(r),
  };
  process.stdout.write(JSON.stringify(report));
}

function runChild(path: string, threads: number, ignoreBreakEven = false, warm = false): ChildReport & { wallMs: number } {
  const t0 = performance.now();
  const args = ['--import', 'tsx', fileURLToPath(import.meta.url), '--child', path, String(threads), String(ignoreBreakEven), String(warm)];
  const r = spawnSync(process.execPath, args, {
    encoding: 'utf8',
    maxBuffer: 1 << 24,
  });
  const wallMs = performance.now() - t0;
  if (r.status !== 0) throw new Error(`analysis child failed: ${r.stderr}`);
  return { ...(JSON.parse(r.stdout) as ChildReport), wallMs };
}

type ChildRun = ChildReport & { wallMs: number };

/** The fastest of a row's runs, the lowest CPU, the highest RSS, and whether every run gave the same result. */
function summarise(runs: ChildRun[]) {
  const best = runs.reduce((b, x) => (x.analysisMs < b.analysisMs ? x : b));
  return {
    best,
    allMs: runs.map((x) => x.analysisMs),
    cpuMs: Math.min(...runs.map((x) => x.cpuMs)),
    rssMb: Math.max(...runs.map((x) => x.maxRssMb)),
    same: runs.every((x) => x.json === runs[0]!.json),
  };
}

/** Best-of-ROUNDS runs with the given threads. */
function bestOf(path: string, threads: number, ignoreBreakEven = false, warm = false) {
  return summarise(Array.from({ length: ROUNDS }, () => runChild(path, threads, ignoreBreakEven, warm)));
}

/** Where threads start to pay: 1 thread against all cores on captures of a few lengths. */
function breakEven(): void {
  process.stdout.write(`break-even, 96 kHz 24-bit stereo, best of ${ROUNDS}, threads forced on:\n`);
  for (const seconds of [10, 60, 180, 300, 600]) {
    const path = join(DIR, `capture-${seconds}s-96k-24bit-stereo.wav`);
    if (!existsSync(path)) makeCapture(path, seconds / 60);
    warmCache(path);
    const one = bestOf(path, 1);
    const all = bestOf(path, CORES, true);
    process.stdout.write(`${seconds} s: 1 thread ${secs(one.best.analysisMs)}, ${CORES} threads ${secs(all.best.analysisMs)} (${(all.best.analysisMs / one.best.analysisMs).toFixed(2)}×)\n`);
  }
}

async function main(): Promise<number> {
  if (process.argv[2] === '--child') {
    await child(process.argv[3]!, Number(process.argv[4]), process.argv[5] === 'true', process.argv[6] === 'true');
    return 0;
  }
  mkdirSync(DIR, { recursive: true });
  // Timings on a shared machine depend on what else runs: say so beside the figures.
  process.stdout.write(`load average ${loadavg()[0]!.toFixed(1)} on ${CORES} CPUs; best of ${ROUNDS} runs each\n`);
  if (process.argv.includes('--break-even')) {
    breakEven();
    return 0;
  }
  let ok = true;
  const metBy: string[] = [];
  for (const minutes of [5, 20]) {
    const path = benchFile(minutes);
    if (!existsSync(path)) {
      process.stdout.write(`generating ${path} …\n`);
      makeCapture(path, minutes);
    }
    warmCache(path);
    const mb = statSync(path).size / 1e6;
    // Best of three: the machine may be shared, and the best run is the least disturbed one. The
    // rounds interleave sox and every row, so a busy minute falls on both sides of the ratio
    // rather than on sox's runs alone or on one row's.
    const ways = [
      { label: 'cold, 1 thread ', threads: 1, forced: false, warm: false },
      // Threads forced on, so the row is what it says even below the break-even (where
      // `npm run analyze` keeps to one thread); warm threads take any length anyway.
      { label: `cold, ${CORES} threads`, threads: CORES, forced: true, warm: false },
      { label: 'warm, 1 thread ', threads: 1, forced: false, warm: true },
      { label: `warm, ${CORES} threads`, threads: CORES, forced: false, warm: true },
    ];
    const sox: { wallMs: number; cpuMs: number }[] = [];
    const runs: ChildRun[][] = ways.map(() => []);
    for (let round = 0; round < ROUNDS; round++) {
      sox.push(timeSox(path));
      ways.forEach((w, i) => runs[i]!.push(runChild(path, w.threads, w.forced, w.warm)));
    }
    const soxMs = Math.min(...sox.map((x) => x.wallMs));
    const soxCpuMs = Math.min(...sox.map((x) => x.cpuMs));
    const rows = ways.map((w, i) => ({ label: w.label, run: summarise(runs[i]!) }));
    const expectedClicks = minutes * CLICKS_PER_MINUTE;
    const fast = (r: (typeof rows)[number]) => r.run.best.analysisMs / soxMs <= TARGET_RATIO;
    const allCores = rows.filter((r) => r.label.includes(`${CORES} threads`));
    if (minutes === 5) metBy.push(...allCores.filter(fast).map((r) => r.label.trim()));
    // Memory: the cold rows, which hold the analysis alone, and any row that met the speed target,
    // so the time is not bought with memory. (A warm process also holds the server's two idle
    // threads, and every row's process the TypeScript loader the bench runs under, ~35 MB.)
    const judged = rows.filter((r) => r.label.startsWith('cold') || (minutes === 5 && allCores.includes(r) && fast(r)));
    const rssMb = Math.max(...judged.map((r) => r.run.rssMb));
    const same = rows.every((r) => r.run.same && r.run.best.json === rows[0]!.run.best.json);
    const clicksOk = rows.every((r) => r.run.best.clicks[0] === expectedClicks && r.run.best.clicks[1] === 0);
    const ms = (xs: number[]) => xs.map((x) => (x / 1000).toFixed(2)).join(' / ');
    process.stdout.write(`${minutes} min, ${mb.toFixed(0)} MB: sox stats ${secs(soxMs)} (CPU ${secs(soxCpuMs)}; runs ${ms(sox.map((x) => x.wallMs))} s)\n`);
    for (const { label, run } of rows) {
      const ratio = run.best.analysisMs / soxMs;
      const verdict = minutes === 5 ? ` (target ≤ ${TARGET_RATIO}×: ${ratio <= TARGET_RATIO ? 'met' : 'missed'})` : '';
      process.stdout.write(
        `  ${label}: ${secs(run.best.analysisMs)} (runs ${ms(run.allMs)} s; CPU ${secs(run.cpuMs)}; child incl. start-up ${secs(run.best.wallMs)}; ` +
          `peak RSS ${run.rssMb.toFixed(0)} MB) = ${ratio.toFixed(2)}× sox${verdict}\n`,
      );
    }
    const pass = rssMb <= TARGET_RSS_MB && same && clicksOk;
    ok &&= pass;
    process.stdout.write(
      `  peak RSS of the ${judged.map((r) => r.label.trim()).join(', ')} runs ${rssMb.toFixed(0)} MB (target ≤ ${TARGET_RSS_MB}); results of every row ${same ? 'identical' : 'DIFFER'}; ` +
        `clicks ${rows[1]!.run.best.clicks.join('/')} (built in ${expectedClicks}/0); separation ${rows[1]!.run.best.separationDb?.toFixed(2)} dB (built in 60)\n`,
    );
  }
  process.stdout.write(
    metBy.length > 0
      ? `speed target (all cores ≤ ${TARGET_RATIO}× sox on 5 minutes) met by: ${metBy.join(', ')}\n`
      : `speed target (all cores ≤ ${TARGET_RATIO}× sox on 5 minutes) missed\n`,
  );
  return ok && metBy.length > 0 ? 0 : 1;
}

process.exitCode = await main();
