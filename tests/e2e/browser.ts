/** Debian's Chromium driven by playwright-core (the package cannot download a browser here). */
import { existsSync, mkdirSync } from 'node:fs';
import { chromium, type Browser } from 'playwright-core';

export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
export const SCREENSHOT_DIR = new URL('../../screenshots/', import.meta.url).pathname;

export async function launchBrowser(): Promise<Browser> {
  if (!existsSync(CHROMIUM)) throw new Error(`Chromium is not at ${CHROMIUM}; the test command installs it (apt-get install -y chromium)`);
  mkdirSync(SCREENSHOT_DIR, { recursive: true });
  return chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-dev-shm-usage',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
}
