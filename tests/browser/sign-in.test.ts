import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type Browser } from 'playwright-core';
import { startTestServer } from '../support/server';
import { ensureWebBuild } from '../../scripts/lib/web-build';
import type { RunningServer } from '../../server/main';
import { launchChromium } from '../support/browser';

const root = resolve(fileURLToPath(new URL('../..', import.meta.url)));
let server: RunningServer;
let browser: Browser;

beforeAll(async () => {
  const dist = ensureWebBuild(root, () => {});
  server = await startTestServer({ WEB_DIST: dist });
  browser = await launchChromium(chromium);
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
});

describe('sign-in page in Chromium', () => {
  it('the technician signs in and sees the job list', async () => {
    const page = await browser.newPage();
    await page.goto(`${server.url}/jobs`);
    await page.waitForURL(/\/sign-in/);
    await page.fill('input[name=email]', 'tech@quietpath.test');
    await page.fill('input[name=password]', 'bench-demo-2026');
    await page.click('button[type=submit]');
    await page.waitForURL(/\/jobs$/);
    await page.getByRole('heading', { name: 'Jobs' }).waitFor();
    // The table shows its "No jobs match." row until the list arrives: wait for the demo job's own row.
    const demo = page.locator('.job-table tbody tr', { hasText: 'J-0001' }).first();
    await demo.waitFor();
    expect(await demo.innerText()).toContain('Vellmark Solace 70');
    await page.close();
  });

  it('a wrong password shows the message and stays on the sign-in page', async () => {
    const page = await browser.newPage();
    await page.goto(`${server.url}/sign-in`);
    await page.fill('input[name=email]', 'desk@quietpath.test');
    await page.fill('input[name=password]', 'wrong');
    await page.click('button[type=submit]');
    await page.getByText('E-mail or password is not right').waitFor();
    expect(page.url()).toMatch(/\/sign-in/);
    await page.close();
  });
});
