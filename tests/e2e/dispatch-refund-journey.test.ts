import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { islandsReady, launchBrowser, screenshotPath, signUpAndConfirm } from './browser';

/**
 * The Dispatch journey end to end: a buyer orders a licence and a print together; the studio manager
 * prepares the print for the lab, ships it with a tracking number, then refunds the licence line. The
 * buyer's mails (receipt, shipped, refund) arrive in the catcher and the licence reads revoked.
 */
const baseUrl = inject('baseUrl');
const mailCatcherUrl = inject('mailCatcherUrl');
// A buyer of its own, so other browser tests' orders for the demo buyer never meet this one.
const BUYER = `collector-${Date.now()}@picture-desk.example`;
let browser: Browser;
let buyer: Page;
let admin: Page;
let orderNumber = '';
const pageErrors: string[] = [];

async function signIn(page: Page, email: string, password: string) {
  await page.goto(`${baseUrl}/sign-in`);
  await islandsReady(page);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(/\/account/);
}

async function subjectsFor(to: string): Promise<string[]> {
  const answer = (await (await fetch(`${mailCatcherUrl}/messages?to=${encodeURIComponent(to)}`)).json()) as { messages: { subject: string }[] };
  return answer.messages.map((m) => m.subject);
}

beforeAll(async () => {
  browser = await launchBrowser();
  buyer = await browser.newPage({ viewport: { width: 1280, height: 900 } });
  admin = await browser.newPage({ viewport: { width: 1280, height: 900 } });
  for (const page of [buyer, admin]) page.on('pageerror', (error) => pageErrors.push(error.message));
  await signIn(admin, 'manager@kestrel-studio.example', 'dispatch-demo-2026');
});
afterAll(async () => browser?.close());

describe('an order from payment to a refunded licence line', () => {
  it('a new buyer signs up and pays for a licence and an open-edition print in one order', async () => {
    await signUpAndConfirm(buyer, { baseUrl, mailCatcherUrl, email: BUYER, name: 'Ada Collector', password: 'pears on a slate shelf' });
    await buyer.goto(`${baseUrl}/works/three-pears`);
    await buyer.getByTestId('licence-editorial-digital').scrollIntoViewIfNeeded();
    await buyer.getByTestId('licence-editorial-digital').getByRole('button', { name: /Add the Editorial · Digital licence/ }).click();
    const chooser = buyer.getByTestId('print-chooser');
    await chooser.scrollIntoViewIfNeeded();
    await buyer.locator('[data-testid="add-print"][data-ready="true"]').waitFor();
    await chooser.getByRole('radio', { name: /8 × 10 in/ }).check();
    await chooser.getByRole('radio', { name: /Baryta/ }).check();
    await buyer.getByTestId('add-print').click();
    await buyer.goto(`${baseUrl}/checkout`);
    await buyer.getByTestId('checkout-form').waitFor();
    await islandsReady(buyer);
    await buyer.getByLabel('Licensee’s name').fill('Picture Desk Ltd');
    await buyer.getByLabel(/Intended use/).fill('One online feature on pears');
    await buyer.getByLabel('Name', { exact: true }).fill('Ada Collector');
    await buyer.getByLabel('Address', { exact: true }).fill('4 Harbour Row');
    await buyer.getByLabel('Town or city').fill('Leith');
    await buyer.getByLabel('Postcode').fill('EH6 6AA');
    await buyer.getByLabel('Country').selectOption('GB');
    await buyer.getByTestId('go-to-payment').click();
    await buyer.waitForURL(/\/pay\/cs_/);
    await buyer.getByLabel('Name on card').fill('Ada Collector');
    await buyer.getByLabel('Card number').fill('4242 4242 4242 4242'); // Stripe test card: succeeds (TRADE-FACTS §3.2)
    await buyer.getByLabel(/Expiry/).fill('12 / 34');
    await buyer.getByLabel('Security code').fill('123');
    await buyer.getByRole('button', { name: /Pay/ }).click();
    await buyer.waitForURL(/\/checkout\/complete/);
    await expect.poll(() => buyer.getByTestId('order-status').innerText().catch(() => ''), { timeout: 15_000 }).toMatch(/Paid/);
    orderNumber = new URL(buyer.url()).searchParams.get('order')!;
    expect(orderNumber).toMatch(/^SM-/);
  });

  it('the manager prepares the print for the lab and ships it with a tracking number', async () => {
    await admin.goto(`${baseUrl}/dispatch/orders/${orderNumber}`);
    await islandsReady(admin);
    await admin.getByRole('button', { name: 'Prepare for the lab' }).click();
    await admin.getByTestId('lab-pack-ready').waitFor({ timeout: 120_000 });
    // 8×10 in at 300 ppi = 2400×3000 px (TRADE-FACTS §2), turned to the picture's orientation
    expect(await admin.getByTestId('lab-pack-facts').innerText()).toMatch(/(2,400 × 3,000|3,000 × 2,400) px at 300 ppi/);
    await admin.getByRole('button', { name: 'Start production' }).click();
    await admin.getByRole('button', { name: 'Mark as shipped' }).waitFor();
    await islandsReady(admin);
    await admin.getByLabel('Tracking number').fill('RR123456785GB'); // valid UPU S10 check digit
    await admin.getByRole('button', { name: 'Mark as shipped' }).click();
    await admin.getByRole('button', { name: 'Mark as delivered' }).waitFor();
    expect(await admin.getByTestId('order-state').innerText()).toBe('Shipped');
  }, 180_000); // the lab file is a full-size 16-bit TIFF: seconds alone, longer on a busy shared machine

  it('the manager refunds the licence line; the payment service settles it and the licence is revoked', async () => {
    await islandsReady(admin);
    await admin.getByRole('button', { name: 'Refund…' }).click();
    const panel = admin.getByTestId('refund-panel');
    await panel.getByRole('checkbox', { name: /Licence/ }).check();
    await panel.getByLabel('Reason').selectOption('requested_by_customer');
    await panel.getByLabel(/Note for the buyer/).fill('Cancelled the feature');
    await panel.getByRole('button', { name: 'Review refund' }).click();
    expect(await admin.getByTestId('refund-review').innerText()).toMatch(/Refund £120\.00/);
    await panel.getByRole('button', { name: 'Refund £120.00' }).click();
    await expect.poll(() => admin.getByTestId('order-state').innerText().catch(() => ''), { timeout: 30_000 }).toBe('Partly refunded');
    await islandsReady(admin);
    expect(await admin.getByTestId('licence-revoked').innerText()).toMatch(/Revoked/);
    expect(await admin.getByTestId('order-refunds').innerText()).toMatch(/£120\.00 · Refunded/);
    const audit = await admin.getByTestId('order-audit').innerText();
    expect(audit).toMatch(/Refund requested/);
    expect(audit).toMatch(/Licence revoked/);
    expect(audit).toMatch(/manager@kestrel-studio\.example/);
    // The print was shipped and is not refunded: it can still be marked delivered.
    expect(await admin.getByRole('button', { name: 'Mark as delivered' }).isVisible()).toBe(true);
    await admin.screenshot({ path: screenshotPath('30-dispatch-refund'), fullPage: true });
  });

  it('the buyer’s mails arrive, and the licence’s check page says revoked', async () => {
    await expect.poll(async () => (await subjectsFor(BUYER)).filter((s) => s.includes(orderNumber)), { timeout: 10_000 }).toEqual(
      expect.arrayContaining([
        expect.stringMatching(/receipt for order/),
        expect.stringMatching(/on their way/),
        expect.stringMatching(/refund of £120\.00/),
      ]),
    );
    await admin.goto(`${baseUrl}/dispatch/orders/${orderNumber}`);
    const mails = await admin.getByTestId('order-mails').innerText();
    expect(mails).toMatch(/refund of £120\.00/);
    const licenceHref = (await admin.getByRole('link', { name: /^SML-/ }).first().getAttribute('href'))!;
    await buyer.goto(`${baseUrl}${licenceHref}`);
    expect(await buyer.getByTestId('licence-state').innerText()).toBe('Revoked');
    await buyer.screenshot({ path: screenshotPath('31-licence-revoked'), fullPage: true });
  });

  it('raised no script errors in the browser', () => {
    expect(pageErrors).toEqual([]);
  });
});
