import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { islandsReady, launchBrowser, screenshotPath } from './browser';

const baseUrl = inject('baseUrl');
const mailCatcherUrl = inject('mailCatcherUrl');
let browser: Browser;
const pageErrors: string[] = [];
let page: Page;

async function signIn(email: string, password: string) {
  await page.goto(`${baseUrl}/sign-in`);
  await islandsReady(page);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(/\/account/);
}

async function payWith(card: string) {
  await page.getByLabel('Name on card').fill('Tom Adair');
  await page.getByLabel('Card number').fill(card);
  await page.getByLabel(/Expiry/).fill('12 / 34');
  await page.getByLabel('Security code').fill('123');
  await page.getByRole('button', { name: /Pay/ }).click();
}

beforeAll(async () => {
  browser = await launchBrowser();
  page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
  page.on('pageerror', (error) => pageErrors.push(error.message));
  await signIn('tom@picture-desk.example', 'gallery-demo-2026');
});
afterAll(async () => browser?.close());

describe('buying through the local Stripe fake', () => {
  it('licenses a work for editorial use and pays with 4242', async () => {
    await page.goto(`${baseUrl}/works/three-pears`);
    await page.getByTestId('licence-editorial-digital').scrollIntoViewIfNeeded();
    await page.getByTestId('licence-editorial-digital').getByRole('button', { name: /Add the Editorial · Digital licence/ }).click();
    await page.goto(`${baseUrl}/cart`);
    await page.getByTestId('to-checkout').click();
    await page.waitForURL(/\/checkout$/);
    await page.getByTestId('checkout-form').waitFor();
    await page.getByLabel('Licensee’s name').fill('Picture Desk Ltd');
    await page.getByLabel(/Organisation/).fill('Picture Desk');
    await page.getByLabel(/Intended use/).fill('One online feature on autumn fruit');
    await page.getByTestId('go-to-payment').click();
    await page.waitForURL(/\/pay\/cs_/);
    expect(await page.content()).toMatch(/£120\.00/);
    await page.screenshot({ path: screenshotPath('20-pay-page'), fullPage: true });
    await payWith('4242 4242 4242 4242'); // Stripe test card: succeeds (TRADE-FACTS §3.2)
    await page.waitForURL(/\/checkout\/complete\?order=SM-/);
    await expect.poll(() => page.getByTestId('order-status').innerText().catch(() => ''), { timeout: 15_000 }).toMatch(/Paid/);
    expect(await page.getByTestId('licence-id').innerText()).toMatch(/Licence SML-/);
    await page.screenshot({ path: screenshotPath('21-order-paid'), fullPage: true });
    expect(await page.getByTestId('cart-badge').innerText()).toMatch(/0/);
  });

  it('sells a limited print and shows its edition number', async () => {
    await page.goto(`${baseUrl}/works/moon-snail`);
    await page.getByTestId('print-chooser').scrollIntoViewIfNeeded();
    await page.locator('[data-testid="add-print"][data-ready="true"]').waitFor();
    await page.getByTestId('print-chooser').getByRole('radio', { name: /16 × 20 in/ }).check();
    await page.getByTestId('add-print').click();
    await page.goto(`${baseUrl}/cart`);
    await page.getByTestId('to-checkout').click();
    await page.getByTestId('checkout-form').waitFor();
    await page.getByLabel('Name', { exact: true }).fill('Tom Adair');
    await page.getByLabel('Address', { exact: true }).fill('4 Harbour Row');
    await page.getByLabel('Town or city').fill('Leith');
    await page.getByLabel('Postcode').fill('EH6 6AA');
    await page.getByLabel('Country').selectOption('GB');
    await page.getByTestId('go-to-payment').click();
    await page.waitForURL(/\/pay\/cs_/);
    await payWith('4242 4242 4242 4242');
    await page.waitForURL(/\/checkout\/complete/);
    await expect.poll(() => page.getByTestId('order-status').innerText().catch(() => ''), { timeout: 15_000 }).toMatch(/Paid/);
    // The first number of the 16×20 edition of 25 (demo seed) goes to the first buyer.
    expect(await page.getByTestId('edition-numbers').innerText()).toMatch(/1\/25/);
  });

  it('leaves no paid order after a declined card', async () => {
    await page.goto(`${baseUrl}/works/split-fig`);
    await page.getByTestId('licence-editorial-print-run').getByRole('button', { name: /Add the Editorial · Print run licence/ }).click();
    await page.goto(`${baseUrl}/checkout`);
    await page.getByTestId('checkout-form').waitFor();
    await page.getByLabel('Licensee’s name').fill('Picture Desk Ltd');
    await page.getByLabel(/Intended use/).fill('A book on figs');
    await page.getByTestId('go-to-payment').click();
    await page.waitForURL(/\/pay\/cs_/);
    await payWith('4000 0000 0000 0002'); // Stripe test card: declined (TRADE-FACTS §3.2)
    await expect.poll(async () => (await page.content()).match(/declined/i) !== null).toBe(true);
    expect(page.url()).toMatch(/\/pay\/cs_/);
    // The pay page's way back names the order; the shop holds it unpaid.
    const orderNumber = /SM-\d{6}-[A-Z0-9]{6}/.exec(await page.content())?.[0];
    expect(orderNumber).toBeTruthy();
    await page.goto(`${baseUrl}/account`);
    const status = await page.evaluate(async (n) => (await (await fetch(`/api/account/orders/${n}`)).json()).order?.status, orderNumber!);
    expect(status).toBe('pending_payment');
    await page.screenshot({ path: screenshotPath('22-declined'), fullPage: true });
  });

  it('downloads the licensed file and opens the licence certificate from the account', async () => {
    await page.goto(`${baseUrl}/account`);
    const order = page.getByTestId('account-order').filter({ hasText: 'Three Pears' });
    await order.waitFor();
    const [download] = await Promise.all([page.waitForEvent('download'), order.getByTestId('download-link').click()]);
    expect(download.suggestedFilename()).toMatch(/^three-pears-SML-.*\.jpg$/);
    const file = await download.path();
    const fs = await import('node:fs');
    const bytes = fs.readFileSync(file!);
    expect([...bytes.subarray(0, 3)]).toEqual([0xff, 0xd8, 0xff]); // JPEG magic bytes
    expect(bytes.length).toBeGreaterThan(1_000_000); // full resolution, not a preview
    const pdf = await page.evaluate(async (href) => {
      const r = await fetch(href);
      return { status: r.status, type: r.headers.get('content-type'), head: new TextDecoder().decode((await r.arrayBuffer()).slice(0, 5)) };
    }, (await order.getByTestId('licence-certificate').getAttribute('href'))!);
    expect(pdf).toEqual({ status: 200, type: 'application/pdf', head: '%PDF-' });
    await page.screenshot({ path: screenshotPath('23-account'), fullPage: true });
    const checkHref = (await order.getByRole('link', { name: 'Check page' }).getAttribute('href'))!;
    await page.goto(`${baseUrl}${checkHref}`);
    expect(await page.getByTestId('licence-state').innerText()).toBe('Valid');
  });

  it('lets the studio manager take the print through production and shipping, and the buyer sees the tracking', async () => {
    const admin = await browser.newPage({ viewport: { width: 1280, height: 900 } });
    admin.on('pageerror', (error) => pageErrors.push(error.message));
    await admin.goto(`${baseUrl}/sign-in`);
    await islandsReady(admin);
    await admin.getByLabel('E-mail').fill('manager@kestrel-studio.example');
    await admin.getByLabel('Password').fill('dispatch-demo-2026');
    await admin.getByRole('button', { name: 'Sign in' }).click();
    await admin.waitForURL(/\/account/);
    // Tom's print orders only: the demo seed's past orders (other buyers) share the list.
    await admin.goto(`${baseUrl}/dispatch/orders?kind=print&q=${encodeURIComponent('tom@picture-desk.example')}`);
    await admin.getByTestId('order-row').first().getByRole('link').first().click();
    await admin.waitForURL(/\/dispatch\/orders\/SM-/);
    await islandsReady(admin);
    // Production starts from the lab pack: prepare the print's file and job sheet first.
    await admin.getByRole('button', { name: 'Start production' }).click();
    await expect.poll(() => admin.getByRole('alert').innerText().catch(() => '')).toMatch(/Prepare the lab pack/);
    await admin.getByRole('button', { name: 'Prepare for the lab' }).click();
    await admin.getByTestId('lab-pack-ready').waitFor({ timeout: 120_000 });
    // 16×20 in at 300 ppi = 4800×6000 px (TRADE-FACTS §2.2), turned to the picture when it is landscape
    expect(await admin.getByTestId('lab-pack-facts').innerText()).toMatch(/(4,800 × 6,000|6,000 × 4,800) px at 300 ppi · 16-bit TIFF/);
    const sheet = await admin.evaluate(async (href) => {
      const r = await fetch(href);
      return { status: r.status, type: r.headers.get('content-type'), head: new TextDecoder().decode((await r.arrayBuffer()).slice(0, 5)) };
    }, (await admin.getByTestId('lab-pack-sheet').getAttribute('href'))!);
    expect(sheet).toEqual({ status: 200, type: 'application/pdf', head: '%PDF-' });
    await admin.screenshot({ path: screenshotPath('24a-lab-pack'), fullPage: true });
    await admin.getByRole('button', { name: 'Start production' }).click();
    await admin.getByRole('button', { name: 'Mark as shipped' }).waitFor();
    await islandsReady(admin);
    await admin.getByLabel('Tracking number').fill('RR123456784GB'); // wrong UPU S10 check digit
    await admin.getByRole('button', { name: 'Mark as shipped' }).click();
    await expect.poll(() => admin.getByRole('alert').innerText().catch(() => '')).toMatch(/not a Royal Mail/);
    await admin.getByLabel('Tracking number').fill('RR123456785GB');
    await admin.getByRole('button', { name: 'Mark as shipped' }).click();
    await admin.getByRole('button', { name: 'Mark as delivered' }).waitFor();
    await admin.screenshot({ path: screenshotPath('24-dispatch-order'), fullPage: true });
    await admin.close();

    await page.goto(`${baseUrl}/account`);
    expect(await page.getByTestId('tracking').innerText()).toMatch(/Royal Mail.*RR123456785GB/);
    const mails = await (await fetch(`${mailCatcherUrl}/messages?to=tom%40picture-desk.example`)).json() as { messages: { subject: string }[] };
    expect(mails.messages.some((m) => /on their way/.test(m.subject))).toBe(true);
  }, 180_000); // the lab file is a full-size 16-bit TIFF: seconds alone, longer on a busy shared machine

  it('raised no script errors in the browser (hydration included)', () => {
    expect(pageErrors).toEqual([]);
  });
});
