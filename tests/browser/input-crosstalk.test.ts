/**
 * The input crosstalk test in Chromium: the technician runs the step-by-step upload (tuner fed,
 * selector on tuner then disc) before and after the repair, sees each capture's inputs in the
 * list and the matrix with its verdict. Captures are built here: the disc step carries the tuner
 * tone 29 dB (before) and 71 dB (after) below its own level, so those are the expected figures
 * (IEC 60268-3 form 20·lg(U_driven/U_undriven), analytic).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type Browser, type Page } from 'playwright-core';
import { encodeWav, generateNoise, generateSine, mixInto } from '../../analysis/index';
import { startTestServer, testDb } from '../support/server';
import { ensureWebBuild } from '../../scripts/lib/web-build';
import { launchChromium, pickOption, signInPage } from '../support/browser';
import { makeBenchJob } from '../support/captures';
import type { RunningServer } from '../../server/main';

const root = resolve(fileURLToPath(new URL('../..', import.meta.url)));
let server: RunningServer;
let browser: Browser;
let jobId: number;

beforeAll(async () => {
  const dist = ensureWebBuild(root, () => {});
  server = await startTestServer({ WEB_DIST: dist });
  browser = await launchChromium(chromium);
  const { db, close } = testDb();
  // A fresh job on the demo amplifier (inputs Phono, Disc, Tuner, Aux, Recorder).
  jobId = (await makeBenchJob(db)).jobId;
  await close();
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
});

const FS = 48_000;
/** Stereo 997 Hz at the given dBFS in both channels over −110 dBFS noise, 24-bit. */
function toneFile(dbfs: number, seed: number): Buffer {
  const ch = [0, 1].map((c) =>
    mixInto(generateSine({ sampleRate: FS, seconds: 1, frequencyHz: 997, levelDbfs: dbfs })[0]!, generateNoise({ sampleRate: FS, seconds: 1, levelDbfs: -110, seed: seed * 2 + c })[0]!),
  );
  return Buffer.from(encodeWav(ch, FS, 24, { dither: 'tpdf', seed }));
}

const signIn = (page: Page, email: string) => signInPage(page, server.url, email);

describe('input crosstalk test in Chromium', () => {
  it('guided upload before and after, inputs in the list, matrix and verdict on the page', async () => {
    const page = await browser.newPage({ viewport: { width: 1440, height: 1000 } });
    await signIn(page, 'tech@quietpath.test');
    await page.goto(`${server.url}/jobs/${jobId}/measurements`);
    await page.getByRole('heading', { name: 'Add captures' }).waitFor();
    await page.getByRole('button', { name: 'Input crosstalk test' }).click();
    const guide = page.locator('[data-test=crosstalk-guide]');
    // Tuner is fed by default, at the selector output: the reference step comes first.
    expect(await guide.locator('li[data-step]').first().getAttribute('data-step')).toBe('Tuner');

    const runStep = async (phase: 'Before repair' | 'After repair', leakDb: number, seed: number) => {
      await pickOption(page, guide.getByRole('combobox', { name: 'Crosstalk phase' }), phase);
      await guide.locator('input[data-step-file="Tuner"]').setInputFiles({ name: `tuner-${seed}.wav`, mimeType: 'audio/wav', buffer: toneFile(-10, seed) });
      await guide.locator('input[data-step-file="Disc"]').setInputFiles({ name: `disc-${seed}.wav`, mimeType: 'audio/wav', buffer: toneFile(-10 - leakDb, seed + 1) });
      await guide.getByRole('button', { name: 'Upload 2 crosstalk captures' }).click();
      await page.locator('.captures-table tbody tr', { hasText: `disc-${seed}.wav` }).waitFor();
    };
    await runStep('Before repair', 29, 10);
    await page.getByRole('button', { name: 'Input crosstalk test' }).click();
    await runStep('After repair', 71, 20);

    const discRow = page.locator('.captures-table tbody tr', { hasText: 'disc-20.wav' });
    expect(await discRow.locator('[data-inputs]').innerText()).toBe('Disc selected · tone into Tuner');
    expect(await page.locator('.captures-table tbody tr', { hasText: 'tuner-20.wav' }).locator('[data-inputs]').innerText()).toBe('Tuner selected');

    const sentence = page.locator('[data-test=crosstalk-sentence]');
    await sentence.waitFor({ timeout: 45_000 });
    await expect.poll(() => sentence.innerText(), { timeout: 45_000 }).toBe('Tuner is now heard 71 dB below the selected disc input; before the repair it was 29 dB below.');
    const pair = page.locator('tr[data-pair="Tuner>Disc"]');
    const cells = await pair.locator('td').allInnerTexts();
    expect(cells[0]).toMatch(/^(28\.\d|29\.[0-4]) dB$/);
    expect(cells[1]).toMatch(/^(70\.\d|71\.[0-4]) dB$/);
    // Short of the limit before, past it after (the demo model publishes 65 dB; without it 40 dB): fixed.
    expect(cells[3]).toBe('Fixed');
    expect(await page.locator('[data-phase=before] [data-cell="Tuner>Disc"]').innerText()).toMatch(/L\s+2[89]\.\d dB\s+R\s+2[89]\.\d dB/);
    await page.close();
  });
});
