import crypto from 'node:crypto';
import http from 'node:http';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import Stripe from 'stripe';
import type { APIContext } from 'astro';
import { POST as webhook } from '~/pages/api/stripe/webhook';
import fs from 'node:fs';
import sharp from 'sharp';
import exifReader from 'exif-reader';
import { config, resetConfigForTests } from '~/lib/server/config';
import { downloadToken } from '~/lib/server/download-links';
import { GET as download } from '~/pages/api/account/downloads/[token]';
import { GET as licencePdf } from '~/pages/api/account/licences/[id]/certificate';
import { GET as printPdf } from '~/pages/api/account/prints/[serial]/certificate';
import { downloadLinkFor, publicLicenceCheck } from '~/lib/server/deliveries';
import { db } from '~/lib/server/db';
import { startCheckout, CheckoutError } from '~/lib/server/checkout';
import { DownloadGrant, EditionNumber, Licence, Order, ShippingZone } from '~/lib/server/models';
import type { SessionUser } from '~/lib/server/auth-types';
import { startStripeFake, type StripeFake } from '../../src/fakes/stripe/server';
import { Edition, LicenceTier, Paper, PrintOffer, PrintSize, insertSettings, insertWork, useTempDatabase, type TestData } from '../_fixtures';
import { listMail, useMailCatcher, waitForMail } from '../_accounts';
import type { MailCatcher } from '../../src/fakes/mail/catcher';
import { startWebhookReceiver } from '../_stripe';

const SECRET = 'whsec_checkout_test_secret';
let data: TestData;
let fake: StripeFake;
let catcher: MailCatcher;
let catcherUrl: string;
let receiver: http.Server;
const ids: Record<string, number> = {};
const buyer: SessionUser = { id: 'buyer-1', email: 'picture.editor@example.com', name: 'Picture Editor', role: 'buyer', emailVerified: true };

async function startReceiver(): Promise<string> {
  const started = await startWebhookReceiver();
  receiver = started.server;
  return started.url;
}

beforeAll(async () => {
  data = await useTempDatabase();
  ({ catcher, url: catcherUrl } = await useMailCatcher(data.dir));
  const webhookUrl = await startReceiver();
  fake = await startStripeFake({ port: 0, stateFile: path.join(data.dir, 'stripe.json'), webhookUrl, webhookSecret: SECRET, retryDelaysMs: [50, 100, 200] });
  process.env.STRIPE_API_BASE = fake.url;
  process.env.STRIPE_WEBHOOK_SECRET = SECRET;
  process.env.STRIPE_SECRET_KEY = 'sk_test_checkout';
  resetConfigForTests();
  await insertSettings();
  await db_setup();
});
afterAll(async () => {
  receiver?.closeAllConnections();
  await fake?.close();
  await catcher?.close();
  receiver?.close();
  await data.cleanup();
});

async function db_setup() {
  const work = await insertWork('glass', 6000, 4000); // the stored original below is small; grading reads these pixel sizes
  fs.mkdirSync(config().originalsDir, { recursive: true });
  await sharp({ create: { width: 600, height: 400, channels: 3, background: '#6a4b3a' } }).jpeg().toFile(path.join(config().originalsDir, 'glass.jpg'));
  const tier = await LicenceTier.create({ slug: 'ed', name: 'Editorial · Digital', use: 'editorial', summary: '', terms: 'One online feature.', media: 'web', cap: 500000, capUnit: 'page views', territory: 'Worldwide', termMonths: 24, defaultPrice: 12000 });
  const size = await PrintSize.create({ slug: '16x20', label: '16 × 20 in', family: 'inch', unit: 'in', width: 16, height: 20, basePrice: 18000 });
  const paper = await Paper.create({ slug: 'cotton', name: 'Cotton', surface: 'matte', weightGsm: 310, surchargeBp: 0, description: '' });
  const edition = await Edition.create({ workId: work.id, printSizeId: size.id, kind: 'limited', total: 4, artistProofs: 0 });
  const offer = await PrintOffer.create({ workId: work.id, printSizeId: size.id, paperId: paper.id, editionId: edition.id, priceOverride: null });
  await ShippingZone.create({ name: 'UK', countries: ['GB'], firstPrint: 900, eachFurtherPrint: 300 });
  Object.assign(ids, { work: work.id, tier: tier.id, offer: offer.id, edition: edition.id });
  const now = new Date().toISOString();
  for (const [id, email] of [[buyer.id, buyer.email], ...Array.from({ length: 20 }, (_, i) => [`racer-${i}`, `racer${i}@example.com`])]) {
    await db().query('INSERT INTO users (id, name, email, email_verified, role, created_at, updated_at) VALUES ($1, $2, $3, 1, $4, $5, $5)', {
      bind: [id, 'Test buyer', email, 'buyer', now],
    });
  }
}

const address = { name: 'A Collector', line1: '1 Quay Street', line2: '', city: 'Leith', postalCode: 'EH6 6AA', country: 'GB' };

/** Pays on the fake's hosted page as a browser would post its form. */
async function pay(url: string, card: string): Promise<Response> {
  const form = new URLSearchParams({ email: buyer.email, cardholder_name: 'A Collector', card_number: card, card_expiry: '12 / 34', card_cvc: '123' });
  return fetch(url, { method: 'POST', body: form, redirect: 'manual' });
}

async function orderNamed(number: string) {
  return (await Order.findOne({ where: { number } }))!;
}

describe('checkout through the local Stripe fake', () => {
  it('creates the order with a reserved edition number, and the webhook fulfils it after a 4242 payment', async () => {
    const started = await startCheckout(buyer, {
      lines: [{ kind: 'licence', workId: ids.work!, tierId: ids.tier! }, { kind: 'print', offerId: ids.offer!, mode: 'fill', quantity: 1 }],
      licensee: { name: 'Picture Desk Ltd', organisation: 'Picture Desk', intendedUse: 'A feature on studio glass' },
      shipping: address,
    }, 'http://localhost:4321');
    const order = await orderNamed(started.orderNumber);
    // business rule (PRODUCT.md): 12000 licence + 18000 × 1.2 limited premium + 900 UK shipping
    expect(order).toMatchObject({ status: 'pending_payment', subtotal: 12000 + 21600, shipping: 900, total: 34500 });
    expect(order.taxIncluded).toBe(5750); // VAT fraction 1/6 of 34500 (HMRC, 20 % rate; from memory)
    expect(await EditionNumber.findAll({ where: { editionId: ids.edition } })).toHaveLength(1);

    const paid = await pay(started.url, '4242 4242 4242 4242'); // Stripe test card: succeeds (TRADE-FACTS §3.2)
    expect(paid.status).toBe(303);
    expect(paid.headers.get('location')).toMatch(new RegExp(`/checkout/complete\\?order=${started.orderNumber}&session_id=cs_`));
    await expect.poll(async () => (await orderNamed(started.orderNumber)).status, { timeout: 5000 }).toBe('paid');

    const licences = await Licence.findAll();
    expect(licences).toHaveLength(1);
    const licence = licences[0]!;
    expect(licence.id).toMatch(/^SML-[A-Z2-9-]{20,}$/);
    expect(licence).toMatchObject({ licenseeName: 'Picture Desk Ltd', licenseeOrganisation: 'Picture Desk', status: 'active' });
    expect(licence.terms).toMatchObject({ tierName: 'Editorial · Digital', territory: 'Worldwide', cap: 500000 });
    expect(licence.endsOn).not.toBeNull();
    const sold = await EditionNumber.findAll({ where: { editionId: ids.edition } });
    expect(sold.map((n) => [n.number, n.state])).toEqual([[1, 'sold']]);
    const grant = (await DownloadGrant.findOne({ where: { licenceId: licence.id } }))!;
    expect(grant.maxDownloads).toBe(5);
    expect(Math.round((grant.expiresAt.getTime() - (await orderNamed(started.orderNumber)).paidAt!.getTime()) / 86_400_000)).toBe(7);
    const receipt = await waitForMail(catcherUrl, buyer.email, /receipt/i);
    expect(receipt.text).toContain(started.orderNumber);
    expect(receipt.text).toMatch(new RegExp(`${licence.id}: http://localhost:4321/api/account/downloads/\\d+\\.\\d+\\.`));
  });

  it('leaves no paid order after a declined card, and says why', async () => {
    const started = await startCheckout(buyer, { lines: [{ kind: 'licence', workId: ids.work!, tierId: ids.tier! }], licensee: { name: 'X', organisation: '', intendedUse: 'Y' } }, 'http://localhost:4321');
    const declined = await pay(started.url, '4000 0000 0000 0002'); // Stripe test card: generic decline (TRADE-FACTS §3.2)
    expect(declined.status).toBe(402); // the pay page answers "payment required" with the reason
    expect(await declined.text()).toMatch(/declined/i);
    await expect.poll(async () => (await orderNamed(started.orderNumber)).note ?? '', { timeout: 5000 }).toMatch(/failed/i);
    expect((await orderNamed(started.orderNumber)).status).toBe('pending_payment');
    await expect.poll(async () => (await listMail(catcherUrl, buyer.email)).some((m) => /did not go through/.test(m.subject)), { timeout: 5000 }).toBe(true);
  });

  it('applies the same event once however often it arrives', async () => {
    const completed = fake.events().filter((e) => e.type === 'checkout.session.completed');
    expect(completed.length).toBeGreaterThan(0);
    const payload = JSON.stringify(completed[0]);
    const before = await Licence.count();
    for (let i = 0; i < 5; i++) {
      const header = Stripe.webhooks.generateTestHeaderString({ payload, secret: SECRET });
      const response = await webhook({ request: new Request('http://x/', { method: 'POST', headers: { 'stripe-signature': header }, body: payload }) } as APIContext);
      expect(response.status).toBe(200);
      expect((await response.json()).outcome).toBe('duplicate');
    }
    expect(await Licence.count()).toBe(before);
  });

  it('verifies signatures by the documented scheme, and refuses forged and stale ones', async () => {
    // Stripe's scheme (TRADE-FACTS §3.1): v1 = HMAC-SHA256(secret, `${t}.${payload}`) in hex; the documented vector:
    const vector = crypto.createHmac('sha256', 'whsec_test_secret').update('1700000000.{"id":"evt_test_webhook","object":"event"}').digest('hex');
    expect(vector).toBe('d95c6b7477fbd7e9f90b1b0ef5f9c7ac25abca5382460e0d988c2b2a5b71b990');

    const event = { id: 'evt_signed_by_hand', object: 'event', type: 'customer.created', created: Math.floor(Date.now() / 1000), data: { object: {} } };
    const payload = JSON.stringify(event);
    const sign = (t: number, body: string) => `t=${t},v1=${crypto.createHmac('sha256', SECRET).update(`${t}.${body}`).digest('hex')}`;
    const send = (header: string, body: string) => webhook({ request: new Request('http://x/', { method: 'POST', headers: { 'stripe-signature': header }, body }) } as APIContext);
    const now = Math.floor(Date.now() / 1000);
    expect((await send(sign(now, payload), payload)).status).toBe(200);
    expect((await send(sign(now, payload), `${payload} `)).status).toBe(400); // one byte changed
    expect((await send(sign(now - 301, payload), payload)).status).toBe(400); // older than the 300 s tolerance
    expect((await send(`t=${now},v1=${'0'.repeat(64)}`, payload)).status).toBe(400);
    expect((await webhook({ request: new Request('http://x/', { method: 'POST', body: payload }) } as APIContext)).status).toBe(400);
  });

  it('never sells more numbers than the edition has, under concurrency', async () => {
    // One of four is sold above; twenty buyers race for the last three.
    const attempts = await Promise.allSettled(
      Array.from({ length: 20 }, (_, i) =>
        startCheckout({ ...buyer, id: `racer-${i}`, email: `racer${i}@example.com` }, { lines: [{ kind: 'print', offerId: ids.offer!, mode: 'fill', quantity: 1 }], shipping: address }, 'http://localhost:4321'),
      ),
    );
    const won = attempts.filter((a) => a.status === 'fulfilled');
    const lost = attempts.filter((a): a is PromiseRejectedResult => a.status === 'rejected');
    expect(won).toHaveLength(3);
    expect(lost.every((l) => l.reason instanceof CheckoutError && l.reason.code === 'sold_out')).toBe(true);
    const numbers = (await EditionNumber.findAll({ where: { editionId: ids.edition } })).map((n) => n.number).sort();
    expect(numbers).toEqual([1, 2, 3, 4]);
    expect(new Set(numbers).size).toBe(numbers.length);
  });

  it('refunds a payment that arrives after its lapsed reservation was taken by someone else', async () => {
    // Free the three racing reservations, as their sessions expiring would.
    await EditionNumber.destroy({ where: { state: 'reserved' } });
    const late = await startCheckout({ ...buyer, id: 'racer-1', email: 'racer1@example.com' }, { lines: [{ kind: 'print', offerId: ids.offer!, mode: 'fill', quantity: 1 }], shipping: address }, 'http://localhost:4321');
    // Its hold lapses; three other buyers take and pay for the last three numbers meanwhile.
    await EditionNumber.update({ reservedUntil: new Date(Date.now() - 60_000) }, { where: { state: 'reserved' } });
    for (const i of [2, 3, 4]) {
      const other = await startCheckout({ ...buyer, id: `racer-${i}`, email: `racer${i}@example.com` }, { lines: [{ kind: 'print', offerId: ids.offer!, mode: 'fill', quantity: 1 }], shipping: address }, 'http://localhost:4321');
      expect((await pay(other.url, '4242 4242 4242 4242')).status).toBe(303);
      await expect.poll(async () => (await orderNamed(other.orderNumber)).status, { timeout: 5000 }).toBe('paid');
    }
    // Edition full (4 of 4 sold); now the late buyer pays.
    expect((await pay(late.url, '4242 4242 4242 4242')).status).toBe(303);
    await expect.poll(async () => (await orderNamed(late.orderNumber)).status, { timeout: 5000 }).toBe('refunded');
    expect((await orderNamed(late.orderNumber)).note).toMatch(/sold out/);
    await expect.poll(() => fake.events().some((e) => e.type === 'charge.refunded'), { timeout: 5000 }).toBe(true);
    expect((await EditionNumber.findAll({ where: { editionId: ids.edition, state: 'sold' } })).length).toBe(4);
    await expect.poll(async () => (await listMail(catcherUrl, 'racer1@example.com')).some((m) => /refunded/.test(m.subject)), { timeout: 5000 }).toBe(true);
  });

  it('releases the held numbers when the buyer leaves the payment page', async () => {
    const { POST: cancel } = await import('~/pages/api/account/orders/[number]/cancel');
    await EditionNumber.destroy({ where: { state: 'reserved' } });
    // The edition above is sold out; test set-up only: one more number so a reservation can be made.
    await Edition.update({ total: 5 }, { where: { id: ids.edition } });
    const started = await startCheckout({ ...buyer, id: 'racer-5', email: 'racer5@example.com' }, { lines: [{ kind: 'print', offerId: ids.offer!, mode: 'fill', quantity: 1 }], shipping: address }, 'http://localhost:4321');
    expect(await EditionNumber.count({ where: { state: 'reserved' } })).toBe(1);
    const response = await cancel({ params: { number: started.orderNumber }, locals: { user: { ...buyer, id: 'racer-5', email: 'racer5@example.com' }, session: null } } as unknown as APIContext);
    expect(response.status).toBe(202);
    await expect.poll(async () => (await orderNamed(started.orderNumber)).status, { timeout: 5000 }).toBe('expired');
    expect(await EditionNumber.count({ where: { state: 'reserved' } })).toBe(0);
    // someone else's order cannot be cancelled
    const other = await cancel({ params: { number: started.orderNumber }, locals: { user: buyer, session: null } } as unknown as APIContext);
    expect(other.status).toBe(404);
  });

  it('ignores an expiry that arrives after the payment (events out of order)', async () => {
    const paidOrder = (await Order.findOne({ where: { status: 'paid', userId: buyer.id } }))!;
    const payload = JSON.stringify({
      id: 'evt_late_expiry', object: 'event', type: 'checkout.session.expired', created: Math.floor(Date.now() / 1000),
      data: { object: { id: paidOrder.stripeSessionId, object: 'checkout.session', metadata: { order_number: paidOrder.number } } },
    });
    const header = Stripe.webhooks.generateTestHeaderString({ payload, secret: SECRET });
    const response = await webhook({ request: new Request('http://x/', { method: 'POST', headers: { 'stripe-signature': header }, body: payload }) } as APIContext);
    expect(response.status).toBe(200);
    expect((await response.json()).outcome).toBe('ignored');
    expect((await orderNamed(paidOrder.number)).status).toBe('paid');
  });
});

describe('delivery of what was bought', () => {
  const ctx = (params: Record<string, string>, user: SessionUser | null = buyer) => ({ params, locals: { user, session: null } }) as unknown as APIContext;
  const stranger: SessionUser = { ...buyer, id: 'racer-0', email: 'racer0@example.com' };

  it('streams the licensed file with the rights written in, through a signed, counted link', async () => {
    const licence = (await Licence.findOne({ where: { userId: buyer.id } }))!;
    const link = (await downloadLinkFor(licence.id, buyer.id))!;
    expect(link.left).toBe(5);
    const token = link.url.split('/').pop()!;
    const response = await download(ctx({ token }));
    expect(response.status).toBe(200);
    expect(response.headers.get('content-disposition')).toMatch(/attachment; filename="glass-SML-/);
    expect(response.headers.get('content-disposition')).not.toMatch(/originals/);
    const file = Buffer.from(await response.arrayBuffer());
    const meta = await sharp(file).metadata();
    expect([meta.width, meta.height]).toEqual([600, 400]);
    // EXIF Artist 0x013B (CIPA DC-008), read back with an independent reader
    expect(exifReader(meta.exif!).Image?.Artist).toBe('Test Photographer');
    // XMP: the PLUS licence ID and the check page as xmpRights:WebStatement (IPTC/PLUS, TRADE-FACTS §4.1)
    const xmp = meta.xmp!.toString('utf8');
    expect(xmp).toContain(licence.id);
    expect(xmp).toMatch(new RegExp(`WebStatement[^]*?/licences/${licence.id}`));

    // a buyer who gives up half way does not bring the server down
    const abandoned = await download(ctx({ token }));
    await abandoned.body!.cancel();

    // another person's link, a tampered link, an expired link
    expect((await download(ctx({ token }, stranger))).status).toBe(404);
    expect((await download(ctx({ token: token.replace(/.$/, (c) => (c === 'A' ? 'B' : 'A')) }))).status).toBe(404);
    const grantId = Number(token.split('.')[0]);
    expect((await download(ctx({ token: downloadToken(grantId, new Date(Date.now() - 1000)) }))).status).toBe(410);

    // the link allows five downloads in all (the abandoned one counted)
    for (let i = 3; i <= 5; i++) {
      const again = await download(ctx({ token }));
      expect(again.status).toBe(200);
      await again.arrayBuffer();
    }
    const sixth = await download(ctx({ token }));
    expect(sixth.status).toBe(410);
    expect((await sixth.json()).error.code).toBe('link_used_up');
    // the temporary copies made for streaming are gone once each download ends
    await expect.poll(() => fs.readdirSync(config().incomingDir).filter((f) => f.startsWith('download-'))).toEqual([]);
  });

  it('serves certificates to their owner only, and a revoked licence stops its downloads', async () => {
    const licence = (await Licence.findOne({ where: { userId: buyer.id } }))!;
    const pdf = await licencePdf(ctx({ id: licence.id }));
    expect(pdf.status).toBe(200);
    expect(Buffer.from(await pdf.arrayBuffer()).subarray(0, 5).toString()).toBe('%PDF-');
    expect((await licencePdf(ctx({ id: licence.id }, stranger))).status).toBe(404);
    const sold = (await EditionNumber.findOne({ where: { state: 'sold' } }))!;
    expect((await printPdf(ctx({ serial: sold.certificateSerial! }))).status).toBe(200);
    expect((await printPdf(ctx({ serial: sold.certificateSerial! }, stranger))).status).toBe(404);

    expect((await publicLicenceCheck(licence.id))?.state).toBe('valid');
    await licence.update({ status: 'revoked' });
    expect((await publicLicenceCheck(licence.id))).toMatchObject({ state: 'revoked', organisation: 'Picture Desk', workTitle: 'glass' });
    expect(await downloadLinkFor(licence.id, buyer.id)).toBeNull();
  });
});

