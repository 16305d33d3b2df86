import type { BrowserType, Browser, Locator, Page } from 'playwright-core';
import { DEMO_PASSWORD } from '../../server/db/seed';

/** Debian's Chromium, headless, with the flags that keep it off the network. */
export function launchChromium(type: BrowserType, extraArgs: string[] = []): Promise<Browser> {
  return type.launch({
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    headless: true,
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      ...extraArgs,
    ],
  });
}

/**
 * Opens a PrimeVue Select and picks one of its options. A Select's list fades out after a pick and
 * keeps its options in the page meanwhile, so first wait for every earlier list to be gone: else
 * the next pick can see two lists and two matching options.
 */
export async function pickOption(page: Page, combobox: Locator, option: string | RegExp): Promise<void> {
  await page.locator('.p-select-overlay').first().waitFor({ state: 'detached' });
  await combobox.click();
  await page.getByRole('option', { name: option }).click();
}

/** Signs a page in through the sign-in form with a demo account; resolves once it has left the form. */
export async function signInPage(page: Page, baseUrl: string, email: string): Promise<void> {
  await page.goto(`${baseUrl}/sign-in`);
  await page.fill('input[name=email]', email);
  await page.fill('input[name=password]', DEMO_PASSWORD);
  await page.click('button[type=submit]');
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
}
