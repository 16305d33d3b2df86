import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { asc, eq } from 'drizzle-orm';
import { chromium, type Browser, type Page } from 'playwright-core';
import { startTestServer, testDb } from '../support/server';
import { ensureWebBuild } from '../../scripts/lib/web-build';
import { launchChromium } from '../support/browser';
import { jobEvents, jobs, users } from '../../server/db/schema/index';
import type { RunningServer } from '../../server/main';

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

async function signIn(page: Page, email: string, path: string) {
  await page.goto(`${server.url}${path}`);
  await page.waitForURL(/\/sign-in/);
  await page.fill('input[name=email]', email);
  await page.fill('input[name=password]', 'bench-demo-2026');
  await page.click('button[type=submit]');
}

describe('booking in and starting diagnosis in Chromium', () => {
  it('the desk books in a job for an existing customer; the technician moves it to diagnosis', async () => {
    const fault = `Tuner drifts off station after warm-up ${Date.now()}`;

    const desk = await (await browser.newContext()).newPage();
    await signIn(desk, 'desk@quietpath.test', '/jobs/new');
    await desk.waitForURL(/\/jobs\/new$/);
    await desk.fill('input[name=intake-customer-search]', 'Ines');
    await desk.getByRole('button', { name: /Ines Valdrop/ }).click();
    // Her only unit is taken at once.
    await desk.getByRole('button', { name: /Orrindale Tidewater R4/, pressed: true }).waitFor();
    await desk.fill('textarea[name=reported-fault]', fault);
    await desk.fill('input[name=accessories]', 'FM aerial lead');
    await desk.getByRole('button', { name: 'Book in', exact: true }).click();
    await desk.waitForURL(/\/jobs\/\d+$/);
    const jobId = Number(/\/jobs\/(\d+)$/.exec(desk.url())![1]);
    await desk.getByRole('heading', { name: /Orrindale Tidewater R4/ }).waitFor();
    expect(await desk.locator('.stepper li[aria-current=step]').innerText()).toContain('Booked in');
    // The desk may not start diagnosis: no such button for them.
    expect(await desk.getByRole('button', { name: 'Move to Diagnosis' }).count()).toBe(0);
    await desk.context().close();

    const tech = await (await browser.newContext()).newPage();
    await signIn(tech, 'tech@quietpath.test', `/jobs/${jobId}`);
    await tech.waitForURL(new RegExp(`/jobs/${jobId}$`));
    await tech.getByText(fault).waitFor();
    await tech.fill('input[name=move-note]', 'On the bench');
    await tech.getByRole('button', { name: 'Move to Diagnosis' }).click();
    await tech.locator('.stepper li[aria-current=step]', { hasText: 'Diagnosis' }).waitFor();
    await tech.locator('.trail li', { hasText: 'On the bench' }).waitFor();
    await tech.context().close();

    const { db, close } = testDb();
    const [job] = await db.select().from(jobs).where(eq(jobs.id, jobId));
    const trail = await db
      .select({ from: jobEvents.fromStatus, to: jobEvents.toStatus, note: jobEvents.note, email: users.email })
      .from(jobEvents)
      .innerJoin(users, eq(users.id, jobEvents.userId))
      .where(eq(jobEvents.jobId, jobId))
      .orderBy(asc(jobEvents.id));
    await close();
    expect(job).toMatchObject({ status: 'diagnosis', reportedFault: fault, accessories: 'FM aerial lead' });
    expect(trail).toEqual([
      { from: null, to: 'booked_in', note: 'Booked in', email: 'desk@quietpath.test' },
      { from: 'booked_in', to: 'diagnosis', note: 'On the bench', email: 'tech@quietpath.test' },
    ]);
  });
});
