import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { islandsReady, launchBrowser, screenshotPath, signUpAndConfirm } from './browser';

const baseUrl = inject('baseUrl');
const mailCatcherUrl = inject('mailCatcherUrl');
let browser: Browser;
let dir: string;
const files: string[] = [];

/** Two original "photographs" made here: noisy gradients, so they compress like real pictures and take a moment to send. */
async function makeOriginal(name: string, width: number, height: number, hue: number): Promise<string> {
  const noise = await sharp({ create: { width, height, channels: 3, background: '#808080', noise: { type: 'gaussian', mean: 128, sigma: 60 } } }).raw().toBuffer();
  const file = path.join(dir, name);
  await sharp(noise, { raw: { width, height, channels: 3 } })
    .modulate({ hue })
    .withExif({ IFD0: { Make: 'Stillmark Test Optics', Model: 'T-1' }, IFD2: { ExposureTime: '1/125', FNumber: '8/1', ISOSpeedRatings: '100', FocalLength: '90/1' } })
    .jpeg({ quality: 92 })
    .toFile(file);
  return file;
}

async function signIn(page: Page, email: string, password: string) {
  await page.goto(`${baseUrl}/sign-in`);
  await islandsReady(page);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(/\/account/);
}

beforeAll(async () => {
  browser = await launchBrowser();
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillmark-e2e-upload-'));
  files.push(await makeOriginal('north-window-study.jpg', 3600, 2400, 20));
  files.push(await makeOriginal('tall-vase.jpg', 2400, 3600, 200));
});
afterAll(async () => {
  await browser?.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('accounts in the browser', () => {
  it('signs a buyer up, confirms the address from the caught mail, and keeps them out of the Studio', async () => {
    const page = await browser.newPage();
    const email = `reader-${Date.now()}@picture-desk.example`;
    await signUpAndConfirm(page, { baseUrl, mailCatcherUrl, email, name: 'Rosa Reader', password: 'a quiet still life' });
    expect(await page.getByTestId('account-role').innerText()).toMatch(/Buyer/);

    const api = await page.evaluate(async () => (await fetch('/api/studio/works')).status);
    expect(api).toBe(403);
    const studio = await page.goto(`${baseUrl}/studio`);
    expect(studio?.status()).toBe(403);
    await page.close();
  });
});

describe('cross-site requests', () => {
  it('refuses form posts and sign-ins that come from another site', async () => {
    // Astro's checkOrigin refuses a cross-site form-encoded POST before any route runs.
    const form = await fetch(`${baseUrl}/api/cart/quote`, {
      method: 'POST',
      headers: { Origin: 'https://elsewhere.example', 'Content-Type': 'application/x-www-form-urlencoded' },
      body: 'lines=1',
    });
    expect(form.status).toBe(403);
    // better-auth checks the Origin of its own state-changing requests.
    const signIn = await fetch(`${baseUrl}/api/auth/sign-in/email`, {
      method: 'POST',
      headers: { Origin: 'https://elsewhere.example', 'Content-Type': 'application/json' },
      body: JSON.stringify({ email: 'orla@kestrel-studio.example', password: 'studio-demo-2026' }),
    });
    expect(signIn.status).toBe(403);
    expect(signIn.headers.getSetCookie().some((c) => c.includes('session_token='))).toBe(false);
  });
});

describe('the photographer’s Studio journey', () => {
  let page: Page;
  beforeAll(async () => {
    page = await browser.newPage({ viewport: { width: 1440, height: 1000 } });
    await signIn(page, 'orla@kestrel-studio.example', 'studio-demo-2026');
  });

  it('uploads two files with progress, then each becomes a draft', async () => {
    await page.goto(`${baseUrl}/studio/upload`);
    await page.getByTestId('upload-dropzone').waitFor();
    await islandsReady(page);
    // Slow the uplink so the progress bars can be watched as a person would see them.
    const cdp = await page.context().newCDPSession(page);
    await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 20, downloadThroughput: -1, uploadThroughput: 1_500_000 });
    const seen = new Set<number>();
    const watcher = setInterval(async () => {
      const values = await page.$$eval('progress[aria-label^="Sending"]', (bars) => bars.map((b) => Number((b as HTMLProgressElement).value))).catch(() => []);
      for (const v of values) seen.add(Math.round(v * 100) / 100);
    }, 50);
    await page.getByTestId('upload-input').setInputFiles(files);
    const rows = page.getByTestId('upload-row');
    await expect.poll(() => rows.count()).toBe(2);
    await page.screenshot({ path: screenshotPath('10-uploading') });
    await expect.poll(() => page.getByRole('link', { name: /^Open “/ }).count(), { timeout: 60_000 }).toBe(2);
    clearInterval(watcher);
    await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 0, downloadThroughput: -1, uploadThroughput: -1 });
    // Progress moved through intermediate values, not straight from nothing to done.
    expect([...seen].filter((v) => v > 0 && v < (Math.max(...seen) || 1)).length).toBeGreaterThan(1);
    await page.screenshot({ path: screenshotPath('11-uploaded') });
  });

  it('sets details, a licence price, print offers and a limited edition, publishes, and the Gallery shows it', async () => {
    await page.getByRole('link', { name: /^Open “north window study/i }).click();
    await page.getByTestId('work-editor').waitFor();
    await islandsReady(page);
    const details = page.getByTestId('details-form');
    await details.getByLabel('Title').fill('North Window Study');
    expect(await details.getByLabel('Title').inputValue()).toBe('North Window Study');
    await details.getByLabel('Alt text').fill('A warm, grainy field of colour, lit as if from a north window.');
    await page.getByTestId('save-details').click();
    await expect.poll(() => page.getByText(/saved/i).first().isVisible()).toBe(true);

    const digital = page.getByTestId('tier-editorial-digital');
    await digital.getByLabel('Own price').check();
    await digital.getByLabel(/Own price for Editorial · Digital/).fill('150.00');
    await page.getByTestId('save-licences').click();
    await expect.poll(() => page.getByText(/licence prices saved/i).isVisible()).toBe(true);

    const eightByTen = page.getByTestId('size-8x10');
    await eightByTen.getByRole('checkbox').first().check();
    // 3600×2400 px on 10×8 in, fill: min(360, 300) = 300 ppi → Crisp (TRADE-FACTS §2.3 formula)
    expect(await eightByTen.getByTestId('grade-fill').innerText()).toMatch(/Crisp · 300 ppi/);
    const a4 = page.getByTestId('size-a4');
    await a4.getByRole('checkbox').first().check();
    await a4.getByRole('radio', { name: 'Limited' }).check();
    await a4.getByLabel('N', { exact: true }).fill('10');
    await a4.getByLabel('Artist’s proofs').fill('1');
    await page.getByTestId('save-offers').click();
    await expect.poll(() => page.getByText(/print offers saved/i).isVisible()).toBe(true);
    await page.screenshot({ path: screenshotPath('12-editor'), fullPage: true });

    await page.getByTestId('publish-button').click();
    await expect.poll(() => page.getByTestId('work-status').innerText()).toMatch(/Published/);

    await page.goto(`${baseUrl}/`);
    await page.getByRole('link', { name: /North Window Study/ }).first().click();
    await page.waitForURL(/\/works\/north-window-study/);
    expect(await page.getByRole('heading', { level: 1 }).innerText()).toBe('North Window Study');
    expect(await page.getByTestId('licence-editorial-digital').innerText()).toMatch(/£150\.00/);
    await page.getByTestId('print-chooser').scrollIntoViewIfNeeded();
    expect(await page.getByTestId('grade-8x10').innerText()).toMatch(/Crisp · 300 ppi/);
    expect(await page.getByTestId('grade-a4').innerText()).toMatch(/edition of 10/);
    await page.screenshot({ path: screenshotPath('13-published-work'), fullPage: true });
  });
});
