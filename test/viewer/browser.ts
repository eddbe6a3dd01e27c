/**
 * Headless Chromium for the viewer's tests and benchmark: Debian's browser at /usr/bin/chromium, a
 * fresh profile, no network services. Nothing here downloads a browser.
 */
import { chromium, type Browser } from 'playwright-core';

export const CHROMIUM_PATH = process.env.LUMIRATE_CHROMIUM ?? '/usr/bin/chromium';

export interface Headless {
  browser: Browser;
  close(): Promise<void>;
}

/** Chromium gets a fresh temporary profile from playwright on every launch, removed on close. */
export async function launchHeadless(): Promise<Headless> {
  const browser = await chromium.launch({
    executablePath: CHROMIUM_PATH,
    headless: true,
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      '--no-first-run',
    ],
  });
  return {
    browser,
    async close() {
      await browser.close();
    },
  };
}
