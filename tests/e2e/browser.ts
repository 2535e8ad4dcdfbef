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

/**
 * Signs a new buyer up through the form and confirms the address with the link from the caught mail;
 * the page ends on the account page. Polls without `expect`, so it can run from a hook as well as a test.
 */
export async function signUpAndConfirm(
  page: import('playwright-core').Page,
  { baseUrl, mailCatcherUrl, email, name, password }: { baseUrl: string; mailCatcherUrl: string; email: string; name: string; password: string },
): Promise<void> {
  await page.goto(`${baseUrl}/sign-up`);
  await islandsReady(page);
  await page.getByLabel('Name').fill(name);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Create account' }).click();
  await page.getByTestId('auth-done').waitFor();
  let link = '';
  for (const end = Date.now() + 10_000; !link; await new Promise((r) => setTimeout(r, 200))) {
    if (Date.now() > end) throw new Error(`no confirmation mail for ${email}`);
    const list = (await (await fetch(`${mailCatcherUrl}/messages?to=${encodeURIComponent(email)}`)).json()) as { messages: { id: string }[] };
    if (!list.messages.length) continue;
    const mail = (await (await fetch(`${mailCatcherUrl}/messages/${list.messages[0]!.id}`)).json()) as { text: string };
    link = /https?:\/\/\S+/.exec(mail.text)![0];
  }
  await page.goto(link);
  await page.waitForURL(/\/account\?verified=1/);
}
