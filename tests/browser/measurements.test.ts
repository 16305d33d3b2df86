/**
 * The bench workflow in Chromium: the technician uploads a before and an after capture at the
 * selector output of the demo job, watches them get measured without reloading, and opens the
 * comparison. Expected: clicks 36 → 0, better (samples-synthetic/README.md construction).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { randomUUID } from 'node:crypto';
import { resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type Browser, type Page } from 'playwright-core';
import { startTestServer, testDb } from '../support/server';
import { ensureWebBuild } from '../../scripts/lib/web-build';
import { launchChromium, pickOption, signInPage } from '../support/browser';
import { sample } from '../support/captures';
import { jobs } from '../../server/db/schema/index';
import type { RunningServer } from '../../server/main';

const root = resolve(fileURLToPath(new URL('../..', import.meta.url)));
let server: RunningServer;
let browser: Browser;
let demoJobId: number;

beforeAll(async () => {
  const dist = ensureWebBuild(root, () => {});
  server = await startTestServer({ WEB_DIST: dist });
  browser = await launchChromium(chromium);
  const { db, close } = testDb();
  demoJobId = (await db.select({ id: jobs.id }).from(jobs).orderBy(jobs.id).limit(1))[0]!.id;
  await close();
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
});

const signIn = (page: Page, email: string) => signInPage(page, server.url, email);

async function choose(page: Page, row: ReturnType<Page['locator']>, field: string, option: string | RegExp) {
  await pickOption(page, row.getByRole('combobox', { name: field }), option);
}

describe('measurements page in Chromium', () => {
  it('uploads before and after, shows them measured, and compares: clicks 36 → 0, better', async () => {
    const page = await browser.newPage({ viewport: { width: 1440, height: 1000 } });
    await signIn(page, 'tech@quietpath.test');
    // From the job list row straight to the measurements.
    await page.getByRole('link', { name: /^Measurements for J-0*1$/ }).click();
    await page.waitForURL(new RegExp(`/jobs/${demoJobId}/measurements$`));
    await page.getByRole('heading', { name: /Measurements/ }).waitFor();

    const tag = randomUUID().slice(0, 6);
    const before = `selector-before-${tag}.wav`;
    const after = `selector-after-${tag}.wav`;
    await page.locator('input[data-test=capture-files]').setInputFiles([
      { name: before, mimeType: 'audio/wav', buffer: Buffer.from(sample('demo-before-selector-out.wav')) },
      { name: after, mimeType: 'audio/wav', buffer: Buffer.from(sample('demo-after-selector-out.wav')) },
    ]);
    const beforeRow = page.locator(`tr[data-file="${before}"]`);
    const afterRow = page.locator(`tr[data-file="${after}"]`);
    await choose(page, beforeRow, 'Test point', /Input selector output/);
    await choose(page, beforeRow, 'Driven channel', '1 (left)');
    await choose(page, afterRow, 'Test point', /Input selector output/);
    await choose(page, afterRow, 'Phase', 'After repair');
    await choose(page, afterRow, 'Driven channel', '1 (left)');
    await page.getByRole('button', { name: 'Upload 2 captures' }).click();

    // The list follows the analysis without a reload.
    const listRow = (name: string) => page.locator('.captures-table tbody tr', { hasText: name });
    for (const name of [before, after]) await listRow(name).locator('[data-state=done]').waitFor({ timeout: 45_000 });
    expect(await listRow(before).locator('td').nth(3).innerText()).toBe('36');
    expect(await listRow(after).locator('td').nth(3).innerText()).toBe('0');

    // The results panel of the before capture: figures and both charts.
    await listRow(before).click();
    const results = page.getByRole('region', { name: `Results for ${before}` });
    await results.locator('[data-figure=clicks] .value').waitFor();
    expect(await results.locator('[data-figure=clicks] .value').innerText()).toBe('36');
    await results.locator('.uplot').first().waitFor();
    expect(await results.locator('.uplot').count()).toBe(3); // spectrum + one waveform per channel

    await choose(page, page.locator('.compare-bar'), 'Before capture', new RegExp(before));
    await choose(page, page.locator('.compare-bar'), 'After capture', new RegExp(after));
    await page.locator('.compare-bar').getByRole('button', { name: 'Compare' }).click();
    await page.waitForURL(/\/compare\?/);
    const clicks = page.locator('tr[data-figure=clickCount]');
    await clicks.waitFor();
    const cells = await clicks.locator('td').allInnerTexts();
    expect(cells.slice(0, 4)).toEqual(['36', '0', '−36', 'Better']);
    expect(await page.locator('tr[data-figure=separationDb] td').nth(3).innerText()).toBe('Better');
    expect(await page.locator('tr[data-metric=separation_1k_db]').innerText()).toMatch(/Short[\s\S]*Meets/);
    await page.close();
  });

  it('the front desk sees the figures but no upload panel', async () => {
    const page = await browser.newPage();
    await signIn(page, 'desk@quietpath.test');
    await page.goto(`${server.url}/jobs/${demoJobId}/measurements`);
    await page.getByRole('heading', { name: 'Signal path' }).waitFor();
    await page.locator('.captures-table tbody tr').first().waitFor();
    expect(await page.getByRole('heading', { name: 'Add captures' }).count()).toBe(0);
    expect(await page.locator('input[data-test=capture-files]').count()).toBe(0);
    await page.close();
  });
});
