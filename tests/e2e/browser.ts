/** Debian's Chromium driven by playwright-core, with the flags this sandbox needs. */
import fs from 'node:fs';
import path from 'node:path';
import { chromium, type Browser } from 'playwright-core';

export const SCREENSHOT_DIR = path.resolve('tests/e2e/screenshots');

export async function launchBrowser(): Promise<Browser> {
  return chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    args: [
      '--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking',
      '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic',
    ],
  });
}

export function screenshotPath(name: string): string {
  fs.mkdirSync(SCREENSHOT_DIR, { recursive: true });
  return path.join(SCREENSHOT_DIR, `${name}.png`);
}

/** Waits until every island on the page that hydrates on load has hydrated (Astro drops the `ssr` attribute then). */
export async function islandsReady(page: import('playwright-core').Page): Promise<void> {
  await page.waitForFunction(() => !document.querySelector('astro-island[ssr][client="load"]'));
}
