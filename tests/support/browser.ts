import type { BrowserType, Browser, Locator, Page } from 'playwright-core';

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
