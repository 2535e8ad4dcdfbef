/**
 * Custom licence quotes end to end: a buyer's enquiry (mailed to the studio), the Studio's answer
 * (mailed to the buyer, audited), the cart pricing it for its owner only, checkout, payment through
 * the local Stripe fake, and the licence issued with the quoted terms — plus every refusal.
 */
import fs from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { APIContext } from 'astro';
import sharp from 'sharp';
import { POST as enquire } from '~/pages/api/account/quotes/index';
import { POST as answer } from '~/pages/api/studio/quotes/[id]/answer';
import { POST as decline } from '~/pages/api/studio/quotes/[id]/decline';
import { POST as priceCart } from '~/pages/api/cart/quote';
import { POST as checkoutRoute } from '~/pages/api/account/checkout';
import { GET as licencePdf } from '~/pages/api/account/licences/[id]/certificate';
import { GET as download } from '~/pages/api/account/downloads/[token]';
import { config, resetConfigForTests } from '~/lib/server/config';
import { db } from '~/lib/server/db';
import { CheckoutError, startCheckout } from '~/lib/server/checkout';
import { countWaitingQuotes, listQuotesForStudio, quoteForOwner, quotesForUser } from '~/lib/server/licence-quotes';
import { downloadLinkFor, publicLicenceCheck } from '~/lib/server/deliveries';
import { AuditEvent, Licence, LicenceQuote, Order, OrderLine } from '~/lib/server/models';
import { MAX_OPEN_ENQUIRIES, QUOTE_ID_PATTERN } from '~/lib/quote-schemas';
import type { SessionUser } from '~/lib/server/auth-types';
import type { Role } from '~/lib/roles';
import { startStripeFake, type StripeFake } from '../../src/fakes/stripe/server';
import type { MailCatcher } from '../../src/fakes/mail/catcher';
import { startWebhookReceiver } from '../_stripe';
import { insertSettings, insertWork, useTempDatabase, type TestData } from '../_fixtures';
import { firstLink, listMail, ORIGIN, useMailCatcher, waitForMail } from '../_accounts';

const SECRET = 'whsec_licence_quotes_test';
let data: TestData;
let fake: StripeFake;
let catcher: MailCatcher;
let catcherUrl: string;
let receiver: http.Server;
const works: Record<string, number> = {};

const person = (id: string, role: Role): SessionUser => ({ id, email: `${id}@example.com`, name: `Person ${id}`, role, emailVerified: true });
const buyer = person('quote-buyer', 'buyer');
const other = person('other-buyer', 'buyer');
const photographer = person('studio-photographer', 'photographer');
const admin = person('studio-admin', 'admin');
const disabledPhotographer = person('gone-photographer', 'photographer');

function post(handler: (ctx: APIContext) => Promise<Response>, body: unknown, user: SessionUser | null, params: Record<string, string> = {}) {
  return handler({
    params,
    request: new Request('http://localhost:4321/x', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body) }),
    locals: { user, session: null },
  } as unknown as APIContext);
}
const get = (handler: (ctx: APIContext) => Promise<Response>, params: Record<string, string>, user: SessionUser | null) =>
  handler({ params, request: new Request('http://localhost:4321/x'), locals: { user, session: null } } as unknown as APIContext);

async function startReceiver(): Promise<string> {
  const started = await startWebhookReceiver();
  receiver = started.server;
  return started.url;
}

async function pay(url: string, email: string, card = '4242 4242 4242 4242'): Promise<Response> {
  const form = new URLSearchParams({ email, cardholder_name: 'A Buyer', card_number: card, card_expiry: '12 / 34', card_cvc: '123' });
  return fetch(url, { method: 'POST', body: form, redirect: 'manual' });
}

beforeAll(async () => {
  data = await useTempDatabase();
  ({ catcher, url: catcherUrl } = await useMailCatcher(data.dir));
  const webhookUrl = await startReceiver();
  fake = await startStripeFake({ port: 0, stateFile: path.join(data.dir, 'stripe.json'), webhookUrl, webhookSecret: SECRET, retryDelaysMs: [50, 100, 200] });
  process.env.STRIPE_API_BASE = fake.url;
  process.env.STRIPE_WEBHOOK_SECRET = SECRET;
  process.env.STRIPE_SECRET_KEY = 'sk_test_quotes';
  resetConfigForTests();
  await insertSettings({ shopName: 'Quote Shop' });
  works.pear = (await insertWork('pear', 6000, 4000, { propertyRelease: 'PR-NAP' })).id;
  works.tin = (await insertWork('branded-tin', 6000, 4000, { propertyRelease: 'PR-NON' })).id;
  works.draft = (await insertWork('unfinished', 6000, 4000, { status: 'draft', publishedAt: null })).id;
  for (let i = 0; i < MAX_OPEN_ENQUIRIES + 1; i++) works[`spare${i}`] = (await insertWork(`spare-${i}`, 4000, 3000)).id;
  fs.mkdirSync(config().originalsDir, { recursive: true });
  await sharp({ create: { width: 600, height: 400, channels: 3, background: '#7a6a3a' } }).jpeg().toFile(path.join(config().originalsDir, 'pear.jpg'));
  const now = new Date().toISOString();
  for (const [user, banned] of [[buyer, 0], [other, 0], [photographer, 0], [admin, 0], [disabledPhotographer, 1]] as const) {
    await db().query('INSERT INTO users (id, name, email, email_verified, role, banned, created_at, updated_at) VALUES ($1, $2, $3, 1, $4, $5, $6, $6)', {
      bind: [user.id, user.name, user.email, user.role, banned, now],
    });
  }
});
afterAll(async () => {
  receiver?.closeAllConnections();
  await fake?.close();
  await catcher?.close();
  receiver?.close();
  await data.cleanup();
});

const enquiry = (workId: number, extra: Record<string, unknown> = {}) => ({
  workId, use: 'commercial', media: 'Packaging for a tea blend', printRun: 20000, territory: 'Europe', termMonths: 36,
  exclusivity: 'category', licenseeName: 'Ada Buyer', licenseeOrganisation: 'Leaf & Tin Ltd', message: 'The picture on the lid of one tin design.', ...extra,
});
const goodAnswer = {
  use: 'commercial', media: 'Packaging: one tin lid design', cap: 20000, capUnit: 'printed tins', territory: 'European Economic Area',
  termMonths: 36, exclusivity: 'category', terms: 'The picture may be printed on the lid of one tin design. No other packaging, no advertising.',
  price: '1,250.00', validityDays: 14, reply: 'Thank you for asking.',
};

let quoteId = '';
let paidOrderNumber = '';

describe('asking for a quote', () => {
  it('is for signed-in accounts only', async () => {
    expect((await post(enquire, enquiry(works.pear!), null)).status).toBe(401);
  });

  it('creates the enquiry and mails every photographer and admin (not disabled ones) a link to the Studio', async () => {
    const response = await post(enquire, enquiry(works.pear!), buyer);
    expect(response.status).toBe(201);
    const body = await response.json();
    expect(body.id).toMatch(QUOTE_ID_PATTERN);
    quoteId = body.id;
    const row = (await LicenceQuote.findByPk(quoteId))!;
    expect(row).toMatchObject({ status: 'requested', userId: buyer.id, email: buyer.email, licenseeName: 'Ada Buyer', licenseeOrganisation: 'Leaf & Tin Ltd', price: null });
    expect(row.request).toMatchObject({ use: 'commercial', printRun: 20000, termMonths: 36, exclusivity: 'category' });
    for (const studio of [photographer, admin]) {
      const mail = await waitForMail(catcherUrl, studio.email, /licence enquiry for “pear”/);
      expect(firstLink(mail.text)).toBe(`${ORIGIN}/studio/quotes/${quoteId}`);
      expect(mail.text).toContain('Leaf & Tin Ltd');
      expect(mail.html).toContain('Leaf &amp; Tin Ltd');
    }
    expect(await listMail(catcherUrl, disabledPhotographer.email)).toEqual([]);
    expect(await countWaitingQuotes()).toBe(1);
  });

  it('refuses a work that is unknown or not published, naming the field', async () => {
    for (const workId of [999_999, works.draft!]) {
      const response = await post(enquire, enquiry(workId, { use: 'editorial' }), buyer);
      expect(response.status).toBe(404);
      expect((await response.json()).error.fields).toHaveProperty('workId');
    }
  });

  it('refuses commercial use of a work without a property release, with a clear message; editorial use is fine', async () => {
    // business rule (TRADE-FACTS §7.3): block commercial licences for PR-NON images
    const refused = await post(enquire, enquiry(works.tin!), buyer);
    expect(refused.status).toBe(422);
    const error = (await refused.json()).error;
    expect(error.code).toBe('release_required');
    expect(error.message).toMatch(/not licensed for commercial use.*release/);
    expect((await post(enquire, enquiry(works.tin!, { use: 'editorial', exclusivity: 'none' }), buyer)).status).toBe(201);
  });

  it('refuses bad fields, and changes nothing', async () => {
    const before = await LicenceQuote.count();
    for (const bad of [{ use: 'advertising' }, { termMonths: 0 }, { printRun: -5 }, { media: '' }, { exclusivity: 'total' }, { licenseeName: ' ' }]) {
      const response = await post(enquire, enquiry(works.spare0!, bad), buyer);
      expect(response.status).toBe(400);
      expect(Object.keys((await response.json()).error.fields)).toEqual(Object.keys(bad));
    }
    expect(await LicenceQuote.count()).toBe(before);
  });

  it('limits open enquiries: one per work, and at most a handful per account', async () => {
    const twice = await post(enquire, enquiry(works.pear!), buyer);
    expect(twice.status).toBe(409);
    // Another account fills up to the limit with spare works; then one more is refused.
    for (let i = 0; i < MAX_OPEN_ENQUIRIES; i++) expect((await post(enquire, enquiry(works[`spare${i}`]!), other)).status).toBe(201);
    const over = await post(enquire, enquiry(works[`spare${MAX_OPEN_ENQUIRIES}`]!), other);
    expect(over.status).toBe(429);
    expect((await over.json()).error.code).toBe('too_many_enquiries');
  });
});

describe('answering in the Studio', () => {
  it('is for the Studio only', async () => {
    expect((await post(answer, goodAnswer, null, { id: quoteId })).status).toBe(401);
    expect((await post(answer, goodAnswer, buyer, { id: quoteId })).status).toBe(403);
    expect((await post(decline, { reason: 'No.' }, buyer, { id: quoteId })).status).toBe(403);
  });

  it('refuses prices that are not positive amounts in the shop currency, and validity out of 1–90 days', async () => {
    const cases: [Record<string, unknown>, string][] = [
      [{ price: '0' }, 'price'], [{ price: '0.00' }, 'price'], [{ price: '-10' }, 'price'], [{ price: '12.345' }, 'price'], // GBP has 2 digits (ISO 4217)
      [{ price: 'twelve' }, 'price'], [{ price: 1250 }, 'price'], [{ price: '1e3' }, 'price'],
      [{ validityDays: 0 }, 'validityDays'], [{ validityDays: 91 }, 'validityDays'], [{ validityDays: 2.5 }, 'validityDays'],
      [{ cap: 100, capUnit: null }, 'capUnit'], [{ terms: '' }, 'terms'],
    ];
    for (const [change, field] of cases) {
      const response = await post(answer, { ...goodAnswer, ...change }, photographer, { id: quoteId });
      expect(response.status, JSON.stringify(change)).toBe(400);
      expect((await response.json()).error.fields, JSON.stringify(change)).toHaveProperty(field);
    }
    expect((await LicenceQuote.findByPk(quoteId))!.status).toBe('requested');
    expect(await AuditEvent.count({ where: { subjectId: quoteId } })).toBe(0);
  });

  it('answers unknown ids with 404', async () => {
    expect((await post(answer, goodAnswer, photographer, { id: 'SMQ-AAAAAA-AAAAAA-AAAAAA-AAAAAA' })).status).toBe(404);
    expect((await post(answer, goodAnswer, photographer, { id: '../etc' })).status).toBe(404);
  });

  it('refuses commercial terms for a work without a release', async () => {
    const tinQuote = (await LicenceQuote.findOne({ where: { workId: works.tin } }))!;
    const response = await post(answer, goodAnswer, admin, { id: tinQuote.id });
    expect(response.status).toBe(422);
    expect((await response.json()).error.code).toBe('release_required');
  });

  it('saves the terms and the exact price, writes the audit row, and mails the buyer a link to the quote', async () => {
    const before = Date.now();
    const response = await post(answer, goodAnswer, photographer, { id: quoteId });
    expect(response.status).toBe(200);
    const row = (await LicenceQuote.findByPk(quoteId))!;
    expect(row.status).toBe('quoted');
    expect(row.price).toBe(125000); // 1,250.00 GBP in pence: 2 minor digits (ISO 4217; TRADE-FACTS §3.3)
    expect(row.currency).toBe('GBP');
    expect(row.answeredBy).toBe(photographer.id);
    expect(row.terms).toMatchObject({ use: 'commercial', cap: 20000, capUnit: 'printed tins', termMonths: 36, exclusivity: 'category', tierName: expect.stringMatching(/^Custom licence/) });
    // 14 days × 86 400 000 ms from the answer (calendar arithmetic)
    expect(row.expiresAt!.getTime()).toBeGreaterThanOrEqual(before + 14 * 86_400_000);
    expect(row.expiresAt!.getTime()).toBeLessThanOrEqual(Date.now() + 14 * 86_400_000);

    const audit = await AuditEvent.findAll({ where: { subjectType: 'quote', subjectId: quoteId } });
    expect(audit.map((a) => [a.action, a.actorId, a.userId])).toEqual([['quote.answer', photographer.id, buyer.id]]);
    expect(audit[0]!.after).toMatchObject({ status: 'quoted', price: 125000, currency: 'GBP' });

    const mail = await waitForMail(catcherUrl, buyer.email, /your licence quote for “pear”/);
    expect(mail.text).toContain(`${ORIGIN}/account/quotes/${quoteId}`);
    expect(mail.text).toContain('£1,250.00');
    expect(await countWaitingQuotes()).toBe(MAX_OPEN_ENQUIRIES + 1); // the answered one no longer waits
  });

  it('cannot answer or decline a quote twice', async () => {
    const again = await post(answer, { ...goodAnswer, price: '1.00' }, admin, { id: quoteId });
    expect(again.status).toBe(409);
    expect((await again.json()).error.message).toMatch(/already been answered/);
    expect((await post(decline, { reason: 'Changed my mind.' }, admin, { id: quoteId })).status).toBe(409);
    expect((await LicenceQuote.findByPk(quoteId))!.price).toBe(125000);
  });

  it('lists waiting enquiries first', async () => {
    const list = await listQuotesForStudio();
    const firstNotWaiting = list.findIndex((q) => q.state !== 'requested');
    expect(list.slice(firstNotWaiting).every((q) => q.state !== 'requested')).toBe(true);
    expect(list.find((q) => q.id === quoteId)?.state).toBe('quoted');
  });
});

describe('the buyer’s quote, the cart and checkout', () => {
  const cartOf = async (user: SessionUser | null, id = quoteId) => {
    const response = await post(priceCart, { lines: [{ kind: 'quote', quoteId: id }] }, user);
    expect(response.status).toBe(200);
    return response.json();
  };

  it('shows the quote to its owner only', async () => {
    expect((await quoteForOwner(buyer.id, quoteId))?.state).toBe('quoted');
    expect(await quoteForOwner(other.id, quoteId)).toBeNull();
    expect((await quotesForUser(buyer.id)).map((q) => q.id)).toContain(quoteId);
    expect((await quotesForUser(other.id)).map((q) => q.id)).not.toContain(quoteId);
  });

  it('prices the quote line for its owner, and refuses it for anyone else without saying more', async () => {
    const mine = await cartOf(buyer);
    expect(mine.lines[0]).toMatchObject({ ok: true, kind: 'quote', workSlug: 'pear', unitPrice: 125000, subtotal: 125000, description: expect.stringMatching(/^Custom licence/) });
    expect(mine.lines[0].detail).toContain('up to 20,000 printed tins');
    expect(mine.total).toBe(125000);
    const theirs = await cartOf(other);
    expect(theirs.lines[0]).toMatchObject({ ok: false, error: 'This quote is not available to your account.' });
    expect(theirs.total).toBe(0);
    const unknown = await cartOf(buyer, 'SMQ-AAAAAA-AAAAAA-AAAAAA-AAAAAA');
    expect(unknown.lines[0].error).toBe(theirs.lines[0].error); // an unknown id and another's quote read the same
    expect((await cartOf(null)).lines[0]).toMatchObject({ ok: false, error: expect.stringMatching(/Sign in/) });
    expect((await post(priceCart, { lines: [{ kind: 'quote', quoteId: 'guess' }] }, buyer)).status).toBe(400);
  });

  it('refuses another account’s quote at checkout', async () => {
    const response = await post(checkoutRoute, { lines: [{ kind: 'quote', quoteId }] }, other);
    expect(response.status).toBe(409);
    expect((await response.json()).error.lines[0].error).toMatch(/not available/);
  });

  it('checks out, is paid, and issues a licence with the quoted terms, price and licensee', async () => {
    const started = await startCheckout(buyer, { lines: [{ kind: 'quote', quoteId }] }, ORIGIN);
    const order = (await Order.findOne({ where: { number: started.orderNumber } }))!;
    expect(order).toMatchObject({ status: 'pending_payment', subtotal: 125000, total: 125000, shipping: 0, licenseeName: 'Ada Buyer' });
    const line = (await OrderLine.findOne({ where: { orderId: order.id } }))!;
    expect(line).toMatchObject({ kind: 'licence', licenceQuoteId: quoteId, licenceTierId: null, workId: works.pear, unitPrice: 125000 });
    expect(line.snapshot).toMatchObject({ workTitle: 'pear', workSlug: 'pear', terms: { exclusivity: 'category', cap: 20000 } });

    expect((await pay(started.url, buyer.email)).status).toBe(303); // Stripe test card 4242…: succeeds (TRADE-FACTS §3.2)
    await expect.poll(async () => (await Order.findOne({ where: { number: started.orderNumber } }))!.status, { timeout: 5000 }).toBe('paid');
    paidOrderNumber = started.orderNumber;

    const quote = (await LicenceQuote.findByPk(quoteId))!;
    expect(quote).toMatchObject({ status: 'paid', orderId: order.id });
    const licence = (await Licence.findOne({ where: { orderLineId: line.id } }))!;
    expect(licence).toMatchObject({ price: 125000, currency: 'GBP', licenseeName: 'Ada Buyer', licenseeOrganisation: 'Leaf & Tin Ltd', userId: buyer.id });
    expect(licence.terms).toMatchObject({ use: 'commercial', media: 'Packaging: one tin lid design', cap: 20000, capUnit: 'printed tins', territory: 'European Economic Area', termMonths: 36, exclusivity: 'category' });
    // 36 months from the start, less a day (the licence's last day; src/lib/checkout.ts licenceEndDate)
    const [y, m, d] = licence.startsOn.split('-').map(Number) as [number, number, number];
    const anniversary = new Date(Date.UTC(y + 3, m - 1, d));
    if (anniversary.getUTCDate() !== d) anniversary.setUTCDate(0); // 29 February → 28 February
    anniversary.setUTCDate(anniversary.getUTCDate() - 1);
    expect(licence.endsOn).toBe(anniversary.toISOString().slice(0, 10));

    // The certificate, the public check page and the licensed file work as for any licence.
    const pdf = await get(licencePdf, { id: licence.id }, buyer);
    expect(pdf.status).toBe(200);
    expect(Buffer.from(await pdf.arrayBuffer()).subarray(0, 5).toString()).toBe('%PDF-');
    expect(await publicLicenceCheck(licence.id)).toMatchObject({ state: 'valid', organisation: 'Leaf & Tin Ltd', tierName: expect.stringMatching(/^Custom licence/) });
    const link = (await downloadLinkFor(licence.id, buyer.id))!;
    const file = await get(download, { token: link.url.split('/').pop()! }, buyer);
    expect(file.status).toBe(200);
    const xmp = (await sharp(Buffer.from(await file.arrayBuffer())).metadata()).xmp!.toString('utf8');
    expect(xmp).toContain(licence.id);
    const receipt = await waitForMail(catcherUrl, buyer.email, /receipt/);
    expect(receipt.text).toContain(paidOrderNumber);
  });

  it('does not sell a paid quote again: the cart, checkout and answering all refuse', async () => {
    expect((await cartOf(buyer)).lines[0]).toMatchObject({ ok: false, error: 'This quote has already been paid for.' });
    await expect(startCheckout(buyer, { lines: [{ kind: 'quote', quoteId }] }, ORIGIN)).rejects.toMatchObject({ code: 'cart_changed' });
    const response = await post(answer, goodAnswer, admin, { id: quoteId });
    expect(response.status).toBe(409);
    expect((await response.json()).error.message).toMatch(/paid for/);
  });

  it('refunds a second payment for the same quote instead of issuing it twice', async () => {
    // Two checkouts of one quote were opened before either was paid.
    const asked = await post(enquire, enquiry(works.pear!, { use: 'editorial', exclusivity: 'none' }), buyer);
    expect(asked.status).toBe(201);
    const second = (await LicenceQuote.findByPk((await asked.json()).id))!;
    expect((await post(answer, { ...goodAnswer, use: 'editorial', price: '300' }, admin, { id: second.id })).status).toBe(200);
    const first = await startCheckout(buyer, { lines: [{ kind: 'quote', quoteId: second.id }] }, ORIGIN);
    const again = await startCheckout(buyer, { lines: [{ kind: 'quote', quoteId: second.id }] }, ORIGIN);
    expect((await pay(first.url, buyer.email)).status).toBe(303);
    await expect.poll(async () => (await Order.findOne({ where: { number: first.orderNumber } }))!.status, { timeout: 5000 }).toBe('paid');
    expect((await pay(again.url, buyer.email)).status).toBe(303);
    await expect.poll(async () => (await Order.findOne({ where: { number: again.orderNumber } }))!.status, { timeout: 5000 }).toBe('refunded');
    expect((await Order.findOne({ where: { number: again.orderNumber } }))!.note).toMatch(/already been paid/);
    const lines = await OrderLine.findAll({ where: { licenceQuoteId: second.id } });
    expect(await Licence.count({ where: { orderLineId: lines.map((l) => l.id) } })).toBe(1);
    expect((await LicenceQuote.findByPk(second.id))!.orderId).toBe((await Order.findOne({ where: { number: first.orderNumber } }))!.id);
  });
});

describe('expired and declined quotes', () => {
  it('refuses an expired quote in the cart and at checkout, in words', async () => {
    const spare = (await LicenceQuote.findOne({ where: { userId: other.id, workId: works.spare0 } }))!;
    expect((await post(answer, { ...goodAnswer, validityDays: 1 }, photographer, { id: spare.id })).status).toBe(200);
    expect((await post(priceCart, { lines: [{ kind: 'quote', quoteId: spare.id }] }, other)).status).toBe(200);
    // Test set-up: the day of validity has passed.
    await LicenceQuote.update({ expiresAt: new Date(Date.now() - 1000) }, { where: { id: spare.id } });
    const view = (await quoteForOwner(other.id, spare.id))!;
    expect(view.state).toBe('expired');
    const cart = await (await post(priceCart, { lines: [{ kind: 'quote', quoteId: spare.id }] }, other)).json();
    expect(cart.lines[0]).toMatchObject({ ok: false, error: expect.stringMatching(/^This quote expired on .+ Ask the studio for a new one/) });
    const orders = await Order.count();
    const error = await startCheckout(other, { lines: [{ kind: 'quote', quoteId: spare.id }] }, ORIGIN).catch((e) => e);
    expect(error).toBeInstanceOf(CheckoutError);
    expect(error.code).toBe('cart_changed');
    expect(await Order.count()).toBe(orders); // nothing was created
    expect((await post(answer, goodAnswer, photographer, { id: spare.id })).status).toBe(409);
  });

  it('declines with a reason (audited, buyer told); a declined quote cannot be answered or bought', async () => {
    const spare = (await LicenceQuote.findOne({ where: { userId: other.id, workId: works.spare1 } }))!;
    expect((await post(decline, { reason: '' }, admin, { id: spare.id })).status).toBe(400);
    const response = await post(decline, { reason: 'The picture is promised to another client in that category.' }, admin, { id: spare.id });
    expect(response.status).toBe(200);
    expect((await LicenceQuote.findByPk(spare.id))!.status).toBe('declined');
    const audit = await AuditEvent.findAll({ where: { subjectType: 'quote', subjectId: spare.id } });
    expect(audit.map((a) => [a.action, a.actorId])).toEqual([['quote.decline', admin.id]]);
    const mail = await waitForMail(catcherUrl, other.email, /licence enquiry for “spare-1”/);
    expect(mail.text).toContain('promised to another client');
    expect((await post(answer, goodAnswer, photographer, { id: spare.id })).status).toBe(409);
    const cart = await (await post(priceCart, { lines: [{ kind: 'quote', quoteId: spare.id }] }, other)).json();
    expect(cart.lines[0]).toMatchObject({ ok: false, error: 'The studio declined this enquiry.' });
  });

  it('keeps one audit row per Studio decision', async () => {
    const rows = await AuditEvent.findAll({ where: { subjectType: 'quote' } });
    expect(rows.filter((r) => r.action === 'quote.answer')).toHaveLength(3);
    expect(rows.filter((r) => r.action === 'quote.decline')).toHaveLength(1);
  });
});
