/**
 * The money path end to end in Chromium: the desk invoices the demo job and sends it, the customer
 * opens the evidence report, pays on the payment page, and sees the invoice paid; the outbox shows
 * the messages. Set BILLING_SHOTS=/some/dir to keep screenshots of each step.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type Browser, type Page } from 'playwright-core';
import { startTestServer } from '../support/server';
import { ensureWebBuild } from '../../scripts/lib/web-build';
import type { RunningServer } from '../../server/main';
import { launchChromium, signInPage } from '../support/browser';

const root = resolve(fileURLToPath(new URL('../..', import.meta.url)));
const shots = process.env.BILLING_SHOTS;
let server: RunningServer;
let browser: Browser;

beforeAll(async () => {
  const dist = ensureWebBuild(root, () => {});
  server = await startTestServer({ WEB_DIST: dist });
  browser = await launchChromium(chromium);
  if (shots) mkdirSync(shots, { recursive: true });
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
});

async function shot(page: Page, name: string) {
  if (shots) await page.screenshot({ path: join(shots, `${name}.png`), fullPage: true });
}

const signIn = (page: Page, email: string) => signInPage(page, server.url, email);

describe('invoice, evidence and payment in the browser', () => {
  it('desk invoices the demo job, the customer pays it, the outbox shows the messages', async () => {
    const desk = await (await browser.newContext({ viewport: { width: 1280, height: 900 } })).newPage();
    await signIn(desk, 'desk@quietpath.test');
    await desk.getByRole('link', { name: 'Invoices' }).click();
    await desk.getByRole('heading', { name: 'Invoices' }).waitFor();
    await desk.locator('.job-pick').click();
    await desk.getByRole('option', { name: /J-0001/ }).click();
    await desk.locator('.open-billing').click();
    await desk.waitForURL(/\/billing\/jobs\/1$/);
    await desk.locator('.create-invoice').click();
    await desk.waitForURL(/\/invoices\/\d+$/);
    const invoiceUrl = desk.url();

    // Add a labour line to the draft: 1.5 h at 65.00.
    await desk.locator('.invoice-status[data-status=draft]').first().waitFor();
    const before = await desk.locator('table.lines tbody tr').count();
    expect(before).toBeGreaterThan(0); // the repair log's part is already on the draft
    await desk.locator('.add-line').click();
    await desk.fill(`input[name=line-${before}-description]`, 'Bench labour: diagnosis and repair');
    const qty = desk.locator(`#line-${before}-qty`);
    await qty.click();
    await qty.press('ControlOrMeta+a');
    await qty.pressSequentially('1.5');
    const price = desk.locator(`#line-${before}-price`);
    await price.click();
    await price.press('ControlOrMeta+a');
    await price.pressSequentially('65');
    await price.press('Tab');
    await shot(desk, '1-draft');
    await desk.locator('.send-invoice').click();
    await desk.locator('.invoice-status[data-status=sent]').first().waitFor();
    const total = (await desk.locator('.invoice-total').innerText()).trim();
    const reference = (await desk.locator('h1 .figure').innerText()).trim();
    // The part from the repair log plus 1.5 h × €65.00 = €97.50, then 20 % tax on the subtotal.
    const lineTexts = await desk.locator('table.lines tbody tr').allInnerTexts();
    expect(lineTexts.some((t) => t.includes('Bench labour') && t.includes('€97.50'))).toBe(true);
    expect(total).toMatch(/^€\d/);
    await shot(desk, '2-sent');

    const customer = await (await browser.newContext({ viewport: { width: 1280, height: 900 } })).newPage();
    await signIn(customer, 'customer@quietpath.test');
    await customer.getByRole('link', { name: 'My repairs' }).click();
    await customer.locator('.repair-card', { hasText: 'J-0001' }).click();
    await customer.waitForURL(/\/my\/repairs\/1$/);
    const evidenceHref = await customer.locator('.evidence-link').getAttribute('href');
    const evidence = await customer.request.get(`${server.url}${evidenceHref}`);
    expect(evidence.status()).toBe(200);
    expect(evidence.headers()['content-type']).toBe('application/pdf');
    expect((await evidence.body()).subarray(0, 5).toString('latin1')).toBe('%PDF-');
    await shot(customer, '3-customer-job');

    const row = customer.locator(`.invoice[data-invoice="${reference}"]`);
    await row.locator('.invoice-status[data-status=sent]').waitFor();
    expect(await row.locator('.total').innerText()).toBe(total);
    await row.locator('.pay').click();
    await customer.waitForURL(/\/pay\/cs_test_/);
    await customer.getByText(total.replace(/\s/g, ' ')).first().waitFor();
    await shot(customer, '4-payment-page');
    await customer.getByRole('button', { name: /^Pay / }).click();
    await customer.waitForURL(/\/my\/repairs\/1\?paid=\d+$/);
    await customer.locator('.paid-banner').waitFor();
    await row.locator('.invoice-status[data-status=paid]').waitFor();
    await shot(customer, '5-paid');

    await desk.goto(invoiceUrl);
    await desk.locator('.invoice-status[data-status=paid]').first().waitFor();
    await desk.getByRole('link', { name: 'Outbox' }).click();
    await desk.getByRole('heading', { name: 'Outbox' }).waitFor();
    await desk.locator('.outbox-page .message[data-kind=payment_received]').first().waitFor();
    const subjects = await desk.locator('.outbox-page .subject').allInnerTexts();
    expect(subjects.some((s) => /^Invoice .* for your Vellmark Solace 70/.test(s))).toBe(true);
    expect(subjects.some((s) => /^Payment received for invoice/.test(s))).toBe(true);
    await desk.locator('.outbox-page .message[data-kind=invoice] .head').first().click();
    const attachments = await desk.locator('.outbox-page .attachments a').allInnerTexts();
    expect(attachments.some((a) => a.includes('evidence-J-0001.pdf'))).toBe(true);
    await shot(desk, '6-outbox');
  }, 150_000);
});
