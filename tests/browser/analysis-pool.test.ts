/**
 * The browser's analysis pool (web/src/workers/analysis-pool.ts) in Chromium: a capture split by
 * channel across module Web Workers must give the result of one analyzeWavBytes on the page's
 * thread field by field — the same numbers, not close ones (analysis/channel-split.ts says why).
 * The page is a bare one built with Vite for this test (tests/support/pool-page), not the app.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { chromium, type Browser, type Page } from 'playwright-core';
import { addClick, analyzeWavBytes, encodeWav, generateNoise, generateSine, mixInto, readWavInfo } from '../../analysis/index';
import { launchChromium } from '../support/browser';
import { startPoolPage, type PoolPage } from '../support/pool-page';
import type { PoolFailure, PoolHarness, SplitChoice } from '../support/pool-page/harness';

const FS = 48_000;
let dir: string;
let site: PoolPage;
let browser: Browser;

/** 4 s stereo: left 997 Hz at −20 dBFS with three clicks, right the tone at −60 dBFS, noise in both. */
function stereoWithClicks(): Uint8Array {
  const ch = generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -20, seconds: 4, channels: 2, drivenChannels: [0] });
  mixInto(ch[1]!, generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -60, seconds: 4 })[0]!);
  ch.forEach((c, i) => mixInto(c, generateNoise({ sampleRate: FS, levelDbfs: -100, seconds: 4, seed: 5 + i })[0]!));
  for (const frame of [30_000, 100_000, 170_000]) addClick(ch[0]!, FS, { frame, amplitude: 0.05, shape: 'burst' });
  return encodeWav(ch, FS, 24);
}

/** 3 s, 6 channels: a tone, hum, noise, and clicks in channels 2 and 5. */
function sixWithClicks(): Uint8Array {
  const ch = generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -10, seconds: 3, channels: 6, drivenChannels: [0] });
  mixInto(ch[1]!, generateSine({ sampleRate: FS, frequencyHz: 50, levelDbfs: -60, seconds: 3 })[0]!);
  ch.forEach((c, i) => mixInto(c, generateNoise({ sampleRate: FS, levelDbfs: -96, seconds: 3, seed: 20 + i })[0]!));
  for (const frame of [10_000, 70_000]) addClick(ch[2]!, FS, { frame, amplitude: 0.02 });
  addClick(ch[5]!, FS, { frame: 120_000, amplitude: -0.03 });
  return encodeWav(ch, FS, 24);
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'quietpath-pool-'));
  const stereo = stereoWithClicks();
  writeFileSync(join(dir, 'stereo-clicks.wav'), stereo);
  writeFileSync(join(dir, 'six-clicks.wav'), sixWithClicks());
  // Debian's sox makes this one: full-scale sines (sox's synth peaks at 1.0) lowered by 20 dB.
  execFileSync('sox', ['-n', '-r', '48000', '-b', '24', '-c', '6', join(dir, 'six-sox.wav'), 'synth', '3', 'sine', '997', 'sine', '440', 'sine', '2000', 'sine', '100', 'sine', '5000', 'sine', '60', 'gain', '-20']);
  // The header still declares every sample; the file ends 6000 bytes early.
  writeFileSync(join(dir, 'cut.wav'), stereo.subarray(0, stereo.length - 6000));
  // A float file with a NaN at frame 100 of channel 1: only the worker given channel 1 meets it,
  // if the engine looked at its own channels alone.
  const f32 = encodeWav(generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -10, seconds: 3, channels: 2 }), FS, 'float32');
  new DataView(f32.buffer).setFloat32(readWavInfo(f32).dataOffset + (100 * 2 + 1) * 4, Number.NaN, true);
  writeFileSync(join(dir, 'nan.wav'), f32);
  writeFileSync(join(dir, 'short.wav'), encodeWav(generateSine({ sampleRate: FS, frequencyHz: 997, levelDbfs: -20, seconds: 1, channels: 2 }), FS, 24));
  site = await startPoolPage(join(dir, 'page'), dir);
  browser = await launchChromium(chromium);
}, 120_000);
afterAll(async () => {
  await browser?.close();
  await site?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

async function open(workers?: number): Promise<Page> {
  const page = await browser.newPage();
  page.setDefaultTimeout(60_000);
  await page.goto(`${site.url}/${workers ? `?workers=${workers}` : ''}`);
  await page.locator('#state', { hasText: 'ready' }).waitFor();
  return page;
}

// Functions given to page.evaluate run in the page: each names the page's harness itself.
type PageScope = { poolHarness: PoolHarness };
const both = (page: Page, name: string, split: SplitChoice = 'auto') => page.evaluate(([n, s]) => (globalThis as unknown as PageScope).poolHarness.both(n, {}, s), [name, split] as const);
const failure = (page: Page, name: string, split: SplitChoice = 'auto') => page.evaluate(([n, s]) => (globalThis as unknown as PageScope).poolHarness.failure(n, s), [name, split] as const);
const started = (page: Page) => page.evaluate(() => (globalThis as unknown as PageScope).poolHarness.started());

describe('the analysis pool in Chromium gives the one-thread result field by field', () => {
  for (const workers of [4, undefined]) {
    it(`${workers ?? 'one per core'} workers: 6-channel and stereo captures with clicks, and sox's 6 tones`, { timeout: 120_000 }, async () => {
      const page = await open(workers);
      const size = await page.evaluate(() => (globalThis as unknown as PageScope).poolHarness.size);
      expect(size).toBeGreaterThanOrEqual(1);

      const six = await both(page, 'six-clicks.wav');
      expect(six.pooled).toStrictEqual(six.single);
      // Known by construction, so the two are not merely agreeing on nothing.
      expect(six.single.channels.map((c) => c.clicks.count)).toEqual([0, 0, 2, 0, 0, 1]);
      // Every file above is past the break-even: each of the pool's workers took a share.
      expect(await started(page)).toBe(Math.min(size, 6));

      const stereo = await both(page, 'stereo-clicks.wav');
      expect(stereo.pooled).toStrictEqual(stereo.single);
      expect(stereo.single.channels.map((c) => c.clicks.count)).toEqual([3, 0]);
      // Levels per AES17 (a sine's RMS + 3.01 dB): −20 and −60 dBFS as generated, 40 dB apart.
      expect(Math.abs(stereo.single.channels[0]!.rmsDbfs! - -20)).toBeLessThan(0.01);
      expect(Math.abs(stereo.single.separation[0]!.db! - 40)).toBeLessThan(0.1);

      const sox = await both(page, 'six-sox.wav');
      expect(sox.pooled).toStrictEqual(sox.single);
      // sox's full-scale sine reads 0 dBFS per AES17, so each channel −20 dBFS after `gain -20`
      // (±0.02 dB for sox's 24-bit dither).
      for (const c of sox.single.channels) expect(Math.abs(c.rmsDbfs! - -20)).toBeLessThan(0.02);
      // The engine reads every channel at the driven channel's tone: channel 0's 997 Hz.
      expect(Math.abs(sox.single.channels[0]!.fundamentalHz! - 997)).toBeLessThan(0.1);

      // One second is below the break-even: one worker measures it whole, with the same result.
      const short = await both(page, 'short.wav');
      expect(short.pooled).toStrictEqual(short.single);
      // The warm workers served every file: none was started after the first.
      expect(await started(page)).toBe(Math.min(size, 6));
      await page.close();
    });
  }
});

/** What analyzeWavBytes throws for the file, as the harness reports a pool's error. */
function singleThreadError(name: string): PoolFailure {
  try {
    analyzeWavBytes(new Uint8Array(readFileSync(join(dir, name))));
  } catch (err) {
    const e = err as Error & { code?: string };
    return { name: e.name, message: e.message, code: e.code ?? null };
  }
  throw new Error(`analyzeWavBytes accepted ${name}`);
}

describe('a worker that fails', () => {
  it('a truncated file and a NaN sample: the engine\'s own error comes back, the failed workers are replaced, and the pool still works', { timeout: 120_000 }, async () => {
    const page = await open(2);
    // Both headers are sound, so the pool splits the files; the samples are what is wrong.
    expect(singleThreadError('cut.wav')).toMatchObject({ name: 'WavFormatError', code: 'truncated' });
    expect(singleThreadError('nan.wav')).toMatchObject({ name: 'WavFormatError', code: 'non-finite-sample', message: expect.stringMatching(/frame 100 .*channel 1/) });

    for (const name of ['cut.wav', 'nan.wav']) {
      for (const split of ['always', 'never'] as const) {
        expect(await failure(page, name, split), `${name}, split ${split}`).toEqual(singleThreadError(name));
        const after = await started(page);
        // The next file (split across both workers) is measured right, by a new worker in place of
        // each failed one: two when the bad file was split, one when one worker had it whole.
        const good = await both(page, 'stereo-clicks.wav');
        expect(good.pooled).toStrictEqual(good.single);
        expect(await started(page)).toBe(after + (split === 'always' ? 2 : 1));
      }
    }
    await page.close();
  });
});
