/**
 * The bench on a phone, a tablet and a desktop (375, 768 and 1280 px wide): no page scrolls
 * sideways, the navigation drawer opens and navigates, a capture uploads from the device's files,
 * and a capture plays from byte ranges with its clicks to jump to.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { randomUUID } from 'node:crypto';
import { resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { and, eq, inArray } from 'drizzle-orm';
import { chromium, type Browser, type Page } from 'playwright-core';
import { startTestServer, testDb } from '../support/server';
import { ensureWebBuild } from '../../scripts/lib/web-build';
import { launchChromium } from '../support/browser';
import { sample } from '../support/captures';
import { captures, jobs } from '../../server/db/schema/index';
import type { RunningServer } from '../../server/main';

const root = resolve(fileURLToPath(new URL('../..', import.meta.url)));
let server: RunningServer;
let browser: Browser;
let jobId: number;
let beforeId: number;
let afterId: number;

beforeAll(async () => {
  const dist = ensureWebBuild(root, () => {});
  server = await startTestServer({ WEB_DIST: dist });
  browser = await launchChromium(chromium, ['--autoplay-policy=no-user-gesture-required']);
  const { db, close } = testDb();
  jobId = (await db.select({ id: jobs.id }).from(jobs).orderBy(jobs.id).limit(1))[0]!.id;
  const demo = await db
    .select({ id: captures.id, name: captures.originalName })
    .from(captures)
    .where(and(eq(captures.jobId, jobId), inArray(captures.originalName, ['demo-before-selector-out.wav', 'demo-after-selector-out.wav'])));
  await close();
  beforeId = demo.find((c) => c.name.startsWith('demo-before'))!.id;
  afterId = demo.find((c) => c.name.startsWith('demo-after'))!.id;
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
});

async function open(width: number, email: string): Promise<Page> {
  const touch = width < 1000;
  const context = await browser.newContext({ viewport: { width, height: 850 }, hasTouch: touch, isMobile: touch });
  const page = await context.newPage();
  await page.goto(`${server.url}/sign-in`);
  await page.fill('input[name=email]', email);
  await page.fill('input[name=password]', 'bench-demo-2026');
  await page.click('button[type=submit]');
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
  return page;
}

/** How far the page reaches past the window, in CSS pixels (0 = no sideways scroll). */
const overflow = (page: Page) => page.evaluate<number>('document.documentElement.scrollWidth - window.innerWidth');

describe('phone, tablet and desktop widths', () => {
  for (const width of [375, 768, 1280]) {
    it(`${width} px: the main pages never scroll sideways, for the technician and the customer`, async () => {
      const tech = await open(width, 'tech@quietpath.test');
      const pages: [string, string][] = [
        ['/jobs', 'Jobs'],
        [`/jobs/${jobId}`, 'Reported fault'],
        [`/jobs/${jobId}/measurements`, 'Signal path'],
        [`/jobs/${jobId}/compare?before=${beforeId}&after=${afterId}`, 'Listen before and after'],
        ['/live', 'Live bench'],
      ];
      const rows = [];
      for (const [path, marker] of pages) {
        await tech.goto(`${server.url}${path}`);
        await tech.locator('main').getByText(marker).first().waitFor();
        if (path.endsWith('/measurements')) await tech.locator('canvas[role=img]').first().waitFor();
        rows.push({ path, overflow: await overflow(tech) });
      }
      await tech.context().close();
      const customer = await open(width, 'customer@quietpath.test');
      for (const path of ['/my/repairs', '/my/repairs/1', '/account']) {
        await customer.goto(`${server.url}${path}`);
        await customer.locator('h1').first().waitFor();
        rows.push({ path, overflow: await overflow(customer) });
      }
      await customer.context().close();
      expect(rows.filter((r) => r.overflow > 0)).toEqual([]);
    });
  }

  it('375 px: the side rail is hidden; the drawer opens, navigates and closes', async () => {
    const page = await open(375, 'tech@quietpath.test');
    expect(await page.locator('aside.rail').isVisible()).toBe(false);
    const menu = page.locator('[data-test=open-nav]');
    const box = (await menu.boundingBox())!;
    expect(Math.min(box.width, box.height)).toBeGreaterThanOrEqual(44);
    await menu.tap();
    const drawer = page.locator('.nav-drawer');
    await drawer.getByRole('link', { name: 'Customers' }).tap();
    await page.waitForURL(/\/customers$/);
    await drawer.waitFor({ state: 'detached' });
    // Every link in the drawer is a full-size touch target.
    await menu.tap();
    const heights = await drawer.locator('a.nav-link').evaluateAll((links) => links.map((a) => a.getBoundingClientRect().height));
    expect(heights.length).toBeGreaterThan(4);
    expect(Math.min(...heights)).toBeGreaterThanOrEqual(44);
    await page.context().close();
  });

  it('375 px: buttons and stand-alone links on the bench pages are at least 44 px each way', async () => {
    // 44 × 44 CSS px: WCAG 2.2 success criterion 2.5.5 (target size, enhanced).
    const page = await open(375, 'tech@quietpath.test');
    const small: string[] = [];
    for (const path of [`/jobs/${jobId}/measurements`, `/jobs/${jobId}/compare?before=${beforeId}&after=${afterId}`, '/jobs']) {
      await page.goto(`${server.url}${path}`);
      await page.locator('main h1').first().waitFor();
      await page.waitForTimeout(1500);
      const found = await page.evaluate<string[]>(`[...document.querySelectorAll('main button, main .p-button, main .crumbs a, main td > a, main a.measurements-link, main a.csv-link, main button.jump')]
        .filter((e) => { const r = e.getBoundingClientRect(); return r.width > 0 && r.height > 0 && (r.height < 44 || r.width < 44); })
        .map((e) => (e.textContent || e.getAttribute('aria-label') || e.tagName).trim().slice(0, 30) + ' ' + Math.round(e.getBoundingClientRect().width) + 'x' + Math.round(e.getBoundingClientRect().height))`);
      small.push(...found.map((f) => `${path}: ${f}`));
    }
    expect(small).toEqual([]);
    await page.context().close();
  });

  it('375 px: a capture uploads from the device files and is measured; the form stacks', async () => {
    const page = await open(375, 'tech@quietpath.test');
    await page.goto(`${server.url}/jobs/${jobId}/measurements`);
    await page.getByText('Choose WAV files').waitFor();
    const name = `phone-${randomUUID().slice(0, 6)}.wav`;
    await page.locator('input[data-test=capture-files]').setInputFiles([{ name, mimeType: 'audio/wav', buffer: Buffer.from(sample('tone-997hz-clicks.wav')) }]);
    const row = page.locator(`tr[data-file="${name}"]`);
    await row.getByRole('combobox', { name: 'Test point' }).tap();
    await page.getByRole('option', { name: /Input selector output/ }).tap();
    expect(await overflow(page)).toBe(0);
    await page.getByRole('button', { name: 'Upload 1 capture' }).tap();
    await page.locator('.captures-table tbody tr', { hasText: name }).locator('[data-state=done]').waitFor({ timeout: 45_000 });
    expect(await overflow(page)).toBe(0);
    await page.context().close();
  });

  it('playback: a click jumped to puts the player at its time; the audio comes in byte ranges', async () => {
    const page = await open(768, 'tech@quietpath.test');
    const ranges: number[] = [];
    page.on('response', (r) => {
      if (r.url().endsWith(`/api/captures/${beforeId}/audio`)) ranges.push(r.status());
    });
    await page.goto(`${server.url}/jobs/${jobId}/measurements`);
    await page.locator('.captures-table tbody tr', { hasText: 'demo-before-selector-out.wav' }).click();
    const results = page.getByRole('region', { name: 'Results for demo-before-selector-out.wav' });
    await results.getByText('Bench captures can be loud').waitFor();
    // The third click of the 36 built in (samples-synthetic/README.md).
    const jump = results.locator('button[data-click-time]').nth(2);
    const clickTime = Number(await jump.getAttribute('data-click-time'));
    // Built in at 0.173 s (samples-synthetic/README.md); the detector places it within a millisecond.
    expect(Math.abs(clickTime - 0.173)).toBeLessThan(0.001);
    await jump.tap();
    const time = results.locator('[data-test=player-time]');
    await expect.poll(async () => Number(await time.getAttribute('data-seconds')), { timeout: 10_000 }).toBeCloseTo(clickTime, 3);
    // Volume starts low: −20 dB on the slider's readout.
    expect(await results.locator('.volume .figure').innerText()).toBe('−20 dB');
    expect(ranges).toContain(206);
    expect(ranges.every((s) => s === 206 || s === 200)).toBe(true);
    await page.context().close();
  });
});

describe('before and after by ear', () => {
  it('switching from the before to the after capture keeps the position', async () => {
    const page = await open(768, 'tech@quietpath.test');
    await page.goto(`${server.url}/jobs/${jobId}/compare?before=${beforeId}&after=${afterId}`);
    const listen = page.locator('section.compare-listen');
    await listen.getByText('Matched by RMS level').waitFor();
    const time = listen.locator('[data-test=player-time]');
    const seconds = async () => Number(await time.getAttribute('data-seconds'));
    const handle = listen.getByRole('slider', { name: 'Position' });
    // Until the file's header has arrived the slider has no length to move along.
    await expect.poll(async () => Number(await time.getAttribute('data-duration')), { timeout: 10_000 }).toBeCloseTo(3, 2);
    await handle.focus();
    for (let i = 0; i < 40; i++) await page.keyboard.press('ArrowRight');
    // 40 steps of 0.01 s (a step pressed while the element is still seeking may be lost): wait for
    // the shown time to settle, well away from the start.
    const settled = async () => {
      const a = await seconds();
      await page.waitForTimeout(400);
      return a === (await seconds()) ? a : -1;
    };
    await expect.poll(settled, { timeout: 10_000 }).toBeGreaterThan(0.2);
    const at = await seconds();
    const responses: string[] = [];
    page.on('response', (r) => responses.push(r.url()));
    await listen.getByRole('button', { name: 'After repair' }).click();
    await expect.poll(() => responses.some((u) => u.endsWith(`/api/captures/${afterId}/audio`)), { timeout: 10_000 }).toBe(true);
    await expect.poll(seconds, { timeout: 10_000 }).toBeCloseTo(at, 2);
    await page.context().close();
  });
});
