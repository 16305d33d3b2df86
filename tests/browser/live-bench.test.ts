/**
 * The live bench and the test-signal page in Chromium, with Chromium's fake capture device playing
 * a WAV file written here by the analysis module's generator.
 *
 * What the fake device delivers (measured with Chromium 156 while writing this test):
 * - it runs at 44.1 kHz, 2 channels, whatever the file: a 44.1 kHz file arrives sample-exact
 *   (a −20 dBFS tone reads −20.000 dBFS), a 48 kHz file arrives 1–3 % off pitch with a step at
 *   each loop, and a 24-bit PCM file arrives silent; 16-bit PCM and 32-bit float work;
 * - it loops the file, after 10–70 ms of leading silence;
 * - on a busy machine it now and then drops or repeats a 10 ms buffer: a step in the waveform that
 *   reads as a click, costs up to 0.04 dB of level in a one-second window and spreads some energy
 *   into THD+N.
 * So the file is 44.1 kHz float, a whole number of cycles long (it loops without a step), and the
 * assertions allow for a dropped buffer: levels within ±0.1 dB, the tone within ±0.5 Hz, clicks at
 * least the number built into the file (more when a buffer dropped).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';
import { addClick, analyzeWavBytes, encodeWav, generateSine } from '../../analysis/index';
import { ensureWebBuild } from '../../scripts/lib/web-build';
import { startTestServer } from '../support/server';
import { signedIn, type ApiClient } from '../support/client';
import { launchChromium } from '../support/browser';
import type { RunningServer } from '../../server/main';
import type { Calibration } from '../../shared/calibrations';
import type { CaptureSummary } from '../../shared/captures';
import type { JobSummary } from '../../shared/jobs';
import type { TestPoint } from '../../shared/test-points';

const root = resolve(fileURLToPath(new URL('../..', import.meta.url)));
const FS = 44_100;
const LOOP_SECONDS = 2;
/** One 0.5 ms burst of amplitude 0.05 (−26 dBFS peak) in the left channel, 1 s into each loop. */
const CLICK_AT_S = 1;

let server: RunningServer;
let browser: Browser;
let context: BrowserContext;
let tech: ApiClient;
let dir: string;
/** Captures this file adds to the demo job, removed again so other tests find the demo as seeded. */
const added: number[] = [];

/** 2 s loop: left 997 Hz at −20 dBFS with one click, right the same tone at −60 dBFS (40 dB separation). */
function fakeInputWav(): Uint8Array {
  const left = generateSine({ sampleRate: FS, seconds: LOOP_SECONDS, frequencyHz: 997, levelDbfs: -20 })[0]!;
  const right = generateSine({ sampleRate: FS, seconds: LOOP_SECONDS, frequencyHz: 997, levelDbfs: -60 })[0]!;
  addClick(left, FS, { frame: CLICK_AT_S * FS, amplitude: 0.05, shape: 'burst' });
  return encodeWav([left, right], FS, 'float32');
}

beforeAll(async () => {
  const dist = ensureWebBuild(root, () => {});
  server = await startTestServer({ WEB_DIST: dist });
  tech = await signedIn(server.url, 'tech@quietpath.test');
  dir = mkdtempSync(join(tmpdir(), 'quietpath-live-'));
  const wav = join(dir, 'bench-input.wav');
  writeFileSync(wav, fakeInputWav());
  browser = await launchChromium(chromium, [
    '--use-fake-device-for-media-stream',
    '--use-fake-ui-for-media-stream',
    `--use-file-for-fake-audio-capture=${wav}`,
    '--autoplay-policy=no-user-gesture-required',
  ]);
  context = await browser.newContext();
  await signIn();
});
afterAll(async () => {
  for (const id of added) await tech.del(`/api/captures/${id}`);
  await browser?.close();
  await server?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

/** Signs the technician in once; every page of the context then shares the session. */
async function signIn(): Promise<void> {
  const page = await context.newPage();
  await page.goto(`${server.url}/jobs`);
  await page.waitForURL(/\/sign-in/);
  await page.fill('input[name=email]', 'tech@quietpath.test');
  await page.fill('input[name=password]', 'bench-demo-2026');
  await page.click('button[type=submit]');
  await page.waitForURL((u) => u.pathname === '/jobs');
  await page.close();
}

async function open(path: string): Promise<Page> {
  const page = await context.newPage();
  // A loaded machine (Chromium, the server and its analysis worker on two cores) is slow to start pages.
  page.setDefaultTimeout(60_000);
  await page.goto(`${server.url}${path}`);
  return page;
}

const figure = (text: string | null) => Number((text ?? '').replace('−', '-').replace('>', '').trim());

interface Reading {
  atS: string;
  level: number[];
  tone: number;
  separation: number;
  clicks: number;
}

async function read(page: Page): Promise<Reading> {
  const table = page.getByTestId('live-figures');
  const cell = (ch: number, name: string) => table.locator(`tr[data-channel="${ch}"] [data-figure="${name}"]`).textContent();
  return {
    atS: (await page.locator('.live-figures .small').textContent()) ?? '',
    level: [figure(await cell(0, 'level')), figure(await cell(1, 'level'))],
    tone: figure(await cell(0, 'tone-hz')),
    separation: figure(await page.locator('[data-figure="separation-0-1"]').textContent()),
    clicks: figure(await cell(0, 'clicks')),
  };
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;

describe('live bench on the fake capture device', () => {
  it('shows level, tone, separation and clicks of the known signal several times a second, and calibrates from it', { timeout: 120_000 }, async () => {
    const page = await open('/live');
    await page.getByRole('heading', { name: 'Live bench' }).waitFor();
    await expect(page.locator('.caution').first().textContent()).resolves.toMatch(/proper attenuation[\s\S]*Mains voltages[\s\S]*service manual/);
    await page.getByTestId('live-start').click();
    await page.getByTestId('live-input-info').waitFor();
    const info = (await page.getByTestId('live-input-info').textContent()) ?? '';
    expect(info).toMatch(/stereo/);
    await page.getByTestId('live-figures').waitFor();
    // Once the one-second window is full, sample the figures for three seconds.
    await page.locator('.live-figures .small', { hasText: 'last 1.00 s' }).waitFor({ timeout: 15_000 });
    const readings: Reading[] = [];
    const until = Date.now() + 3000;
    while (Date.now() < until) {
      readings.push(await read(page));
      await page.waitForTimeout(100);
    }
    const updates = new Set(readings.map((r) => r.atS)).size;
    expect(updates).toBeGreaterThanOrEqual(6); // ~4 per second → 12 in 3 s; 6 leaves room for a slow machine
    // A dropped buffer arrives as 10 ms of zeros: it can only lower a level, and lowers both
    // channels alike, so the difference between them and the separation stay exact.
    const left = median(readings.map((r) => r.level[0]!));
    expect(left).toBeLessThanOrEqual(-19.99);
    expect(left).toBeGreaterThan(-20.5);
    expect(median(readings.map((r) => r.level[0]! - r.level[1]!))).toBeCloseTo(40, 1);
    expect(Math.abs(median(readings.map((r) => r.separation)) - 40)).toBeLessThan(0.15);
    expect(Math.abs(median(readings.map((r) => r.tone)) - 997)).toBeLessThan(0.5);
    // The file clicks once per 2 s loop; by now at least 4 s have played.
    expect(readings.at(-1)!.clicks).toBeGreaterThanOrEqual(1);

    // Calibration: the left channel carries "1.000 V RMS" (the default reference) at −20 dBFS, so the
    // card's full scale is 1 V / 10^(−20/20) = 10 V RMS (shared/recordings.ts voltsAtFullScaleFrom).
    const name = `Fake card ${Date.now()}`;
    await page.getByPlaceholder('Card, gain setting and probe').fill(name);
    await page.getByTestId('cal-measure').click();
    await page.getByTestId('cal-result').waitFor();
    const dbfs = figure(await page.locator('[data-figure=cal-dbfs]').textContent());
    const vfs = figure(await page.locator('[data-figure=cal-vfs]').textContent());
    expect(dbfs).toBeLessThanOrEqual(-19.99);
    expect(dbfs).toBeGreaterThan(-20.5);
    expect(vfs).toBeCloseTo(1 / 10 ** (dbfs / 20), 2);
    await page.getByTestId('cal-save').click();
    await page.getByText(`Saved “${name}”`).waitFor();
    const profiles = (await tech.get<Calibration[]>('/api/calibrations')).body;
    const saved = profiles.find((p) => p.name === name)!;
    expect(saved.probeAttenuation).toBe(1);
    expect(saved.voltsAtFullScale).toBeCloseTo(vfs, 3);
    expect((await tech.del(`/api/calibrations/${saved.id}`)).status).toBe(204);

    await page.getByTestId('live-stop').click();
    await page.close();
  });

  it('a five-second soak test is saved on demo job 1 with its test point and measured, clicks counted', { timeout: 120_000 }, async () => {
    const job = (await tech.get<JobSummary[]>('/api/jobs')).body.find((j) => j.unitLabel.includes('Vellmark Solace 70'))!;
    const points = (await tech.get<TestPoint[]>(`/api/jobs/${job.id}/test-points`)).body;
    const selector = points.find((p) => p.name === 'Input selector output')!;
    const page = await open(`/live?jobId=${job.id}`);
    await page.getByTestId('live-start').click();
    await page.getByTestId('live-figures').waitFor();
    await page.locator('#soak-test-point').click();
    await page.getByRole('option', { name: `${selector.position}. ${selector.name}` }).click();
    await page.locator('#soak-seconds').fill('5');
    await page.locator('#soak-seconds').blur();
    await page.getByTestId('soak-start').click();
    await page.locator('[data-testid=soak-capture][data-capture-state=done]').waitFor({ timeout: 90_000 });

    const id = Number(await page.getByTestId('soak-capture').getAttribute('data-capture-id'));
    added.push(id);
    const liveTexts = await page.locator('.soak-clicks').allTextContents();
    const liveClicks = Math.max(...liveTexts.map((t) => figure(t.replace(/^\D+/, ''))));
    const shownClicks = figure(await page.locator('[data-figure=saved-clicks]').textContent());
    const capture = (await tech.get<CaptureSummary>(`/api/captures/${id}`)).body;
    expect(capture).toMatchObject({ jobId: job.id, testPointId: selector.id, phase: 'before', stimulus: 'tone', state: 'done', channels: 2, bitsPerSample: 24 });
    expect(capture.sampleRate).toBe(FS);
    expect(Math.abs(capture.durationS - 5)).toBeLessThan(0.01);
    // 5 s of a 2 s loop with one click each holds 2 or 3 clicks; a dropped buffer adds one.
    expect(capture.figures!.clickCount).toBeGreaterThanOrEqual(2);
    expect(shownClicks).toBe(capture.figures!.clickCount);
    // The live count and the saved analysis (both the worst channel) see the same samples; they can
    // differ by a click at the recording's edges, and by a stretch the live view skipped when the
    // machine could not keep up (it then says so), which a burst of dropped buffers makes two.
    expect(Math.abs(liveClicks - capture.figures!.clickCount)).toBeLessThanOrEqual(2);
    // Dropped buffers lower the level of the recording, never raise it; separation is unaffected.
    expect(capture.figures!.levelDbfs!).toBeLessThanOrEqual(-19.99);
    expect(capture.figures!.levelDbfs!).toBeGreaterThan(-21);
    expect(Math.abs(capture.figures!.separationDb! - 40)).toBeLessThan(0.1);
    const unfinished = await tech.get<unknown[]>(`/api/recordings?jobId=${job.id}`);
    expect(unfinished.body).toEqual([]);
    await page.close();
  });
});

describe('test signals page', () => {
  it('makes a −20 dBFS 997 Hz file that the engine reads back at −20.00 dBFS', { timeout: 120_000 }, async () => {
    const page = await open('/test-signals');
    await page.getByRole('heading', { name: 'Test signals' }).waitFor();
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByTestId('signal-make').click()]);
    expect(download.suggestedFilename()).toBe('sine-997Hz-minus20dBFS-both-48k-24bit-10s.wav');
    const path = join(dir, 'downloaded.wav');
    await download.saveAs(path);
    const result = analyzeWavBytes(new Uint8Array(readFileSync(path)));
    expect(result.file).toMatchObject({ sampleRate: 48_000, channels: 2, bitsPerSample: 24, durationS: 10 });
    for (const ch of result.channels) expect(Math.abs(ch.rmsDbfs! - -20)).toBeLessThan(0.01);
    await expect(page.getByTestId('signal-check').textContent()).resolves.toBe('left −20.00 dBFS at 997.0 Hz, right −20.00 dBFS at 997.0 Hz');
    await page.close();
  });
});
