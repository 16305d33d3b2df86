import type { BrowserType, Browser } from 'playwright-core';

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
