import crypto from 'node:crypto';
import fs from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { APIContext } from 'astro';
import { POST as refundRoute } from '~/pages/api/dispatch/orders/[number]/refunds';
import { POST as moveRoute } from '~/pages/api/dispatch/orders/[number]/move';
import { GET as download } from '~/pages/api/account/downloads/[token]';
import { config, resetConfigForTests } from '~/lib/server/config';
import { db } from '~/lib/server/db';
import { startCheckout } from '~/lib/server/checkout';
import { stripe } from '~/lib/server/stripe';
import { downloadToken } from '~/lib/server/download-links';
import { publicLicenceCheck } from '~/lib/server/deliveries';
import { AuditEvent, DownloadGrant, EditionNumber, Licence, Order, OrderLine, Refund, ShippingZone, ShopSettings } from '~/lib/server/models';
import type { SessionUser } from '~/lib/server/auth-types';
import type { Role } from '~/lib/roles';
import { startStripeFake, type StripeFake } from '../../src/fakes/stripe/server';
import { Edition, LicenceTier, Paper, PrintOffer, PrintSize, insertSettings, insertWork, useTempDatabase, type TestData } from '../_fixtures';
import { listMail, useMailCatcher, waitForMail } from '../_accounts';
import type { MailCatcher } from '../../src/fakes/mail/catcher';
import { startWebhookReceiver } from '../_stripe';

const SECRET = 'whsec_refund_test_secret';
let data: TestData;
let fake: StripeFake;
let catcher: MailCatcher;
let catcherUrl: string;
let receiver: http.Server;
const ids: Record<string, number> = {};
const buyer: SessionUser = { id: 'buyer-r', email: 'collector@example.com', name: 'Collector', role: 'buyer', emailVerified: true };
const as = (role: Role): SessionUser => ({ id: `u-${role}`, email: `${role}@example.com`, name: role, role, emailVerified: true });

function context(number: string, body: unknown, user: SessionUser | null): APIContext {
  return {
    params: { number },
    request: new Request('http://localhost/x', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body) }),
    locals: { user, session: null },
  } as unknown as APIContext;
}
const refund = (number: string, body: Record<string, unknown>, user: SessionUser | null = as('admin')) =>
  refundRoute(context(number, { idempotencyKey: crypto.randomUUID(), reason: 'requested_by_customer', ...body }, user));
const move = (number: string, body: unknown) => moveRoute(context(number, body, as('admin')));

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
  process.env.STRIPE_SECRET_KEY = 'sk_test_refunds';
  resetConfigForTests();
  await insertSettings();
  const work = await insertWork('bowl', 6000, 4000);
  fs.mkdirSync(config().originalsDir, { recursive: true });
  await sharp({ create: { width: 600, height: 400, channels: 3, background: '#4a5b3a' } }).jpeg().toFile(path.join(config().originalsDir, 'bowl.jpg'));
  const tier = await LicenceTier.create({ slug: 'ed', name: 'Editorial', use: 'editorial', summary: '', terms: 'One feature.', media: 'web', cap: null, capUnit: null, territory: 'Worldwide', termMonths: 12, defaultPrice: 12000 });
  const size = await PrintSize.create({ slug: '8x10', label: '8 × 10 in', family: 'inch', unit: 'in', width: 8, height: 10, basePrice: 10000 });
  const paper = await Paper.create({ slug: 'baryta', name: 'Baryta', surface: 'gloss', weightGsm: 310, surchargeBp: 0, description: '' });
  const edition = await Edition.create({ workId: work.id, printSizeId: size.id, kind: 'limited', total: 5, artistProofs: 0 });
  const offer = await PrintOffer.create({ workId: work.id, printSizeId: size.id, paperId: paper.id, editionId: edition.id, priceOverride: null });
  await ShippingZone.create({ name: 'UK', countries: ['GB'], firstPrint: 900, eachFurtherPrint: 300 });
  Object.assign(ids, { work: work.id, tier: tier.id, offer: offer.id, edition: edition.id });
  await db().query('INSERT INTO users (id, name, email, email_verified, role, created_at, updated_at) VALUES ($1, $2, $3, 1, $4, $5, $5)', {
    bind: [buyer.id, 'Collector', buyer.email, 'buyer', new Date().toISOString()],
  });
  await db().query('INSERT INTO users (id, name, email, email_verified, role, created_at, updated_at) VALUES ($1, $2, $3, 1, $4, $5, $5)', {
    bind: ['u-admin', 'Manager', 'admin@example.com', 'admin', new Date().toISOString()],
  });
});
afterAll(async () => {
  receiver?.closeAllConnections();
  await fake?.close();
  await catcher?.close();
  receiver?.close();
  await data.cleanup();
});

const address = { name: 'A Collector', line1: '1 Quay Street', line2: '', city: 'Leith', postalCode: 'EH6 6AA', country: 'GB' };

async function paidOrder(lines: Parameters<typeof startCheckout>[1]['lines']): Promise<Order> {
  const prints = lines.some((l) => l.kind === 'print');
  const started = await startCheckout(buyer, {
    lines,
    licensee: lines.some((l) => l.kind === 'licence') ? { name: 'Collector', organisation: '', intendedUse: 'A feature' } : undefined,
    shipping: prints ? address : undefined,
  }, 'http://localhost:4321');
  const form = new URLSearchParams({ email: buyer.email, cardholder_name: 'A Collector', card_number: '4242 4242 4242 4242', card_expiry: '12 / 34', card_cvc: '123' });
  expect((await fetch(started.url, { method: 'POST', body: form, redirect: 'manual' })).status).toBe(303); // Stripe test card 4242… pays (TRADE-FACTS §3.2)
  await until(async () => (await Order.findOne({ where: { number: started.orderNumber } }))!.status === 'paid');
  return (await Order.findOne({ where: { number: started.orderNumber } }))!;
}

/** Polls outside a test body too (expect.poll works only inside one). */
async function until(check: () => Promise<boolean>, timeoutMs = 5000): Promise<void> {
  const end = Date.now() + timeoutMs;
  while (!(await check())) {
    if (Date.now() > end) throw new Error('timed out waiting for the payment service');
    await new Promise((r) => setTimeout(r, 50));
  }
}

const reload = async (order: Order) => (await Order.findByPk(order.id))!;

describe('refunds through the payment service', () => {
  let order: Order;
  let licenceLine: OrderLine;
  let printLine: OrderLine;

  beforeAll(async () => {
    order = await paidOrder([{ kind: 'licence', workId: ids.work!, tierId: ids.tier! }, { kind: 'print', offerId: ids.offer!, mode: 'fill', quantity: 1 }]);
    const lines = await OrderLine.findAll({ where: { orderId: order.id }, order: [['id', 'ASC']] });
    licenceLine = lines.find((l) => l.kind === 'licence')!;
    printLine = lines.find((l) => l.kind === 'print')!;
  });

  it('is for admins only', async () => {
    expect((await refund(order.number, { whole: true }, null)).status).toBe(401);
    expect((await refund(order.number, { whole: true }, as('photographer'))).status).toBe(403);
    expect((await refund(order.number, { whole: true }, as('buyer'))).status).toBe(403);
  });

  it('refuses malformed requests and amounts above what is left, changing nothing', async () => {
    expect((await refund(order.number, { idempotencyKey: 'short' , whole: true })).status).toBe(400);
    expect((await refund(order.number, { whole: true, items: [{ lineId: printLine.id }] })).status).toBe(400);
    expect((await refund(order.number, { items: [{ lineId: printLine.id, amount: 1.5 }] })).status).toBe(400);
    const tooMuch = await refund(order.number, { items: [{ lineId: printLine.id, amount: printLine.subtotal + 1 }] });
    expect(tooMuch.status).toBe(422);
    expect((await tooMuch.json()).error.code).toBe('too_much');
    const foreign = await refund(order.number, { items: [{ lineId: 999999 }] });
    expect(foreign.status).toBe(422);
    expect(await Refund.count()).toBe(0);
    expect((await reload(order)).refunded).toBe(0);
  });

  it('refunds the unshipped limited print in full: settled by charge.refunded, its number goes back to the edition, the buyer is mailed', async () => {
    expect(await EditionNumber.count({ where: { orderLineId: printLine.id } })).toBe(1);
    const key = crypto.randomUUID();
    const body = { idempotencyKey: key, reason: 'damaged_in_transit', note: 'Corner crushed', items: [{ lineId: printLine.id }] };
    const asked = await refundRoute(context(order.number, body, as('admin')));
    expect(asked.status).toBe(202);
    // The same request again (a double click, a retried network call) refunds nothing more.
    const again = await refundRoute(context(order.number, body, as('admin')));
    expect(again.status).toBe(200);
    expect((await again.json()).replayed).toBe(true);
    // Reusing the key for something else is refused.
    expect((await refundRoute(context(order.number, { ...body, reason: 'goodwill' }, as('admin')))).status).toBe(409);

    await expect.poll(async () => (await reload(order)).status, { timeout: 5000 }).toBe('partly_refunded');
    const after = await reload(order);
    expect(after.refunded).toBe(printLine.subtotal);
    expect((await OrderLine.findByPk(printLine.id))!.refunded).toBe(printLine.subtotal);
    expect(await EditionNumber.count({ where: { orderLineId: printLine.id } })).toBe(0);
    expect(await Refund.count({ where: { orderId: order.id } })).toBe(1);
    // The payment service refunded exactly once: its charge holds one refund of the line's amount.
    const intent = await stripe().paymentIntents.retrieve(after.stripePaymentIntentId!);
    const charge = await stripe().charges.retrieve(intent.latest_charge as string);
    expect(charge.amount_refunded).toBe(printLine.subtotal);
    const mail = await waitForMail(catcherUrl, buyer.email, /refund of/);
    expect(mail.text).toContain('Corner crushed');
    // The licence is untouched by a print refund.
    expect((await Licence.findOne({ where: { orderLineId: licenceLine.id } }))!.status).toBe('active');
  });

  it('refuses to produce or ship an order whose prints were all refunded', async () => {
    const refused = await move(order.number, { to: 'in_production' });
    expect(refused.status).toBe(409);
    expect((await refused.json()).error.code).toBe('prints_refunded');
  });

  it('refunds the licence line: the licence is revoked, its downloads stop and its check page says revoked; the rest refunds in full', async () => {
    const licence = (await Licence.findOne({ where: { orderLineId: licenceLine.id } }))!;
    const grant = (await DownloadGrant.findOne({ where: { licenceId: licence.id } }))!;
    const token = downloadToken(grant.id, grant.expiresAt);
    expect((await refund(order.number, { items: [{ lineId: licenceLine.id }] })).status).toBe(202);
    await expect.poll(async () => (await Licence.findByPk(licence.id))!.status, { timeout: 5000 }).toBe('revoked');
    const response = await download({ params: { token }, locals: { user: buyer, session: null }, request: new Request('http://localhost/x') } as unknown as APIContext);
    expect(response.status).toBe(410);
    expect((await publicLicenceCheck(licence.id))!.state).toBe('revoked');
    expect((await reload(order)).status).toBe('partly_refunded'); // shipping is still paid

    expect((await refund(order.number, { whole: true })).status).toBe(202);
    await expect.poll(async () => (await reload(order)).status, { timeout: 5000 }).toBe('refunded');
    const final = await reload(order);
    expect(final.refunded).toBe(final.total);
    expect(final.shippingRefunded).toBe(final.shipping);
    // Nothing is left: another request is refused before it reaches the payment service.
    const more = await refund(order.number, { whole: true });
    expect(more.status).toBe(409);
    const refundMails = async () => (await listMail(catcherUrl, buyer.email)).filter((m) => /refund of/.test(m.subject)).length;
    await expect.poll(refundMails, { timeout: 5000 }).toBe(3);
  });

  it('writes who asked, what and when to the audit trail, and the trail cannot be changed', async () => {
    const events = await AuditEvent.findAll({ where: { orderId: order.id }, order: [['id', 'ASC']] });
    const actions = events.map((e) => e.action);
    expect(actions.filter((a) => a === 'refund.request')).toHaveLength(3);
    expect(actions.filter((a) => a === 'refund.settle')).toHaveLength(3);
    expect(actions).toContain('licence.revoke');
    expect(actions).toContain('edition.return');
    const requested = events.find((e) => e.action === 'refund.request')!;
    expect(requested.actorEmail).toBe('admin@example.com');
    expect(requested.after).toMatchObject({ amount: printLine.subtotal });
    const failure = (query: Promise<unknown>) => query.then(() => 'changed', (error: { parent?: Error }) => error.parent?.message ?? String(error));
    expect(await failure(db().query('UPDATE audit_events SET action = $1 WHERE id = $2', { bind: ['x', requested.id] }))).toMatch(/cannot be changed/);
    expect(await failure(db().query('DELETE FROM audit_events WHERE id = $1', { bind: [requested.id] }))).toMatch(/cannot be changed/);
  });

  it('refuses a refund on an order that was never paid', async () => {
    const started = await startCheckout(buyer, { lines: [{ kind: 'licence', workId: ids.work!, tierId: ids.tier! }], licensee: { name: 'C', organisation: '', intendedUse: 'x' } }, 'http://localhost:4321');
    const refused = await refund(started.orderNumber, { whole: true });
    expect(refused.status).toBe(409);
    expect((await refused.json()).error.code).toBe('not_refundable');
  });

  it('keeps partial refunds within the amount paid in a zero-decimal currency (JPY)', async () => {
    await ShopSettings.update({ currency: 'JPY' }, { where: { id: 1 } });
    const yen = await paidOrder([{ kind: 'licence', workId: ids.work!, tierId: ids.tier! }]);
    expect(yen.currency).toBe('JPY');
    expect(yen.total).toBe(12000); // ¥12,000 is 12000 minor units: JPY is zero-decimal (Stripe currencies, TRADE-FACTS §3.3)
    const [line] = await OrderLine.findAll({ where: { orderId: yen.id } });
    expect((await refund(yen.number, { items: [{ lineId: line!.id, amount: 4500 }] })).status).toBe(202);
    await expect.poll(async () => (await reload(yen)).refunded, { timeout: 5000 }).toBe(4500);
    const intent = await stripe().paymentIntents.retrieve(yen.stripePaymentIntentId!);
    const charge = await stripe().charges.retrieve(intent.latest_charge as string);
    expect(charge.currency).toBe('jpy');
    expect(charge.amount_refunded).toBe(4500); // whole yen, never × 100 (TRADE-FACTS §3.3)
    const over = await refund(yen.number, { items: [{ lineId: line!.id, amount: 7501 }] });
    expect(over.status).toBe(422);
    expect((await refund(yen.number, { items: [{ lineId: line!.id, amount: 7500 }] })).status).toBe(202);
    await expect.poll(async () => (await reload(yen)).status, { timeout: 5000 }).toBe('refunded');
    // Fully refunded by the sum of parts: the licence is revoked too.
    expect((await Licence.findOne({ where: { orderLineId: line!.id } }))!.status).toBe('revoked');
    await ShopSettings.update({ currency: 'GBP' }, { where: { id: 1 } });
  });
});
