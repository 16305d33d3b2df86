// Timing of the browser's analysis pool (web/src/workers/analysis-pool.ts) in headless Chromium.
//   npm run bench:browser              (BENCH_RUNS=N for more runs than 9 on a busy machine)
// For 48 kHz stereo and 6-channel files of several lengths, the best time (warm workers) of one
// worker measuring every channel against the channels split across the pool; and the live bench's
// case, a one-second 44.1 kHz stereo window, analysed inside a worker, by one worker nested in it
// and split across nested workers.
// Where split starts to beat one worker is the pool's break-even (SPLIT_BREAK_EVEN_SAMPLES).
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium } from 'playwright-core';
import { addClick, encodeWav, generateNoise, generateSine, mixInto } from '../analysis/index';
import { launchChromium } from '../tests/support/browser';
import { startPoolPage } from '../tests/support/pool-page';
import type { PoolHarness, SplitChoice } from '../tests/support/pool-page/harness';

const RUNS = Number(process.env.BENCH_RUNS) || 9;

function capture(sampleRate: number, channels: number, seconds: number): Uint8Array {
  const out = Array.from({ length: channels }, (_, c) => {
    const [x] = generateSine({ sampleRate, seconds, frequencyHz: 997, levelDbfs: -10 - 6 * c });
    mixInto(x!, generateNoise({ sampleRate, seconds, levelDbfs: -90, seed: c + 1 })[0]!);
    if (seconds >= 1) addClick(x!, sampleRate, { frame: Math.floor(sampleRate * seconds * 0.5), amplitude: 0.05, shape: 'burst' });
    return x!;
  });
  return encodeWav(out, sampleRate, 24);
}

const dir = mkdtempSync(join(tmpdir(), 'quietpath-bench-browser-'));
const page = await startPoolPage(join(dir, 'page'), dir);
const browser = await launchChromium(chromium);
try {
  const tab = await browser.newPage();
  await tab.goto(page.url);
  await tab.locator('#state', { hasText: 'ready' }).waitFor();
  const size = await tab.evaluate(() => (globalThis as unknown as { poolHarness: PoolHarness }).poolHarness.size);
  // Best of the runs: other work on a shared machine only ever adds time.
  const time = async (name: string, way: 'single' | SplitChoice) =>
    Math.min(...(await tab.evaluate(([n, w, r]) => (globalThis as unknown as { poolHarness: PoolHarness }).poolHarness.time(n, w, r), [name, way, RUNS] as const)));
  console.log(`Chromium, pool of ${size} workers, best of ${RUNS} runs, warm workers, load average ${loadavg()[0]!.toFixed(1)} on ${availableParallelism()} cores`);
  console.log('file                         one worker   split   split/one');
  for (const channels of [2, 6]) {
    for (const seconds of [0.5, 1, 2, 3, 5, 10]) {
      const name = `c${channels}-${seconds}s.wav`;
      writeFileSync(join(dir, name), capture(48_000, channels, seconds));
      await time(name, 'always'); // warms every worker's compiler on this shape
      const one = await time(name, 'never');
      const split = await time(name, 'always');
      console.log(`48 kHz ${channels} ch ${String(seconds).padStart(4)} s`.padEnd(28), `${one.toFixed(1).padStart(8)} ms`, `${split.toFixed(1).padStart(6)} ms`, `${(split / one).toFixed(2).padStart(8)}`);
    }
  }
  writeFileSync(join(dir, 'live.wav'), encodeWav(Array.from({ length: 2 }, (_, c) => generateSine({ sampleRate: 44_100, seconds: 1, frequencyHz: 997, levelDbfs: -20 - 40 * c })[0]!), 44_100, 'float32'));
  const nested = await tab.evaluate(([r]) => (globalThis as unknown as { poolHarness: PoolHarness }).poolHarness.timeNested('live.wav', r), [RUNS] as const);
  const best = (ms: number[]) => `${Math.min(...ms).toFixed(1)} ms`;
  console.log(`live window, 1 s 44.1 kHz stereo float, from a worker: in that worker ${best(nested.inWorker)}, one nested worker ${best(nested.oneNested)}, split across nested workers ${best(nested.splitNested)}`);
} finally {
  await browser.close();
  await page.close();
  rmSync(dir, { recursive: true, force: true });
}
