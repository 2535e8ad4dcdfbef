/**
 * The local payment fake, driven with the official SDK exactly as the app drives it, plus a small
 * webhook receiver that verifies every delivery with the SDK's own `constructEvent`.
 */
import { createHmac } from 'node:crypto';
import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import Stripe from 'stripe';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { startStripeFake, type StripeFake } from '~/fakes/stripe/server';
import { computeSignature, signatureHeader } from '~/fakes/stripe/signature';

const SECRET = 'whsec_stillmark_test_secret';

// ---------------------------------------------------------------------------------------------
// Webhook receiver

interface Received {
  path: string;
  status: number;
  event: Stripe.Event | null;
  error: string | null;
}

let receiver: http.Server;
let receiverUrl: string;
const received: Received[] = [];
/** Per path: the status to answer for the next request (called once per request). */
const answers = new Map<string, () => number>();

function answerAlways(p: string, status: number): void {
  answers.set(p, () => status);
}
/** Answers `failing` for the first `times` requests on the path, then 200. */
function answerFailingThenOk(p: string, failing: number, times: number): void {
  let left = times;
  answers.set(p, () => (left-- > 0 ? failing : 200));
}

let verifier: Stripe;

async function startReceiver(): Promise<void> {
  verifier = new Stripe('sk_test_verifier', { telemetry: false, maxNetworkRetries: 0 });
  receiver = http.createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on('data', (c: Buffer) => chunks.push(c));
    req.on('end', () => {
      const raw = Buffer.concat(chunks).toString('utf8');
      const header = req.headers['stripe-signature'];
      let event: Stripe.Event | null = null;
      let error: string | null = null;
      try {
        event = verifier.webhooks.constructEvent(raw, typeof header === 'string' ? header : '', SECRET);
      } catch (err) {
        error = err instanceof Error ? err.message : String(err);
      }
      const p = req.url ?? '/';
      const status = error ? 400 : (answers.get(p)?.() ?? 200);
      received.push({ path: p, status, event, error });
      res.writeHead(status, { 'content-type': 'application/json' }).end('{}');
    });
  });
  await new Promise<void>((resolve) => receiver.listen(0, '127.0.0.1', resolve));
  receiverUrl = `http://127.0.0.1:${(receiver.address() as AddressInfo).port}`;
}

// ---------------------------------------------------------------------------------------------
// Helpers

async function waitFor<T>(what: string, probe: () => T | undefined | null | false, timeoutMs = 5000): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const value = probe();
    if (value) return value;
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 15));
  }
}

function client(port: number, key = 'sk_test_x'): Stripe {
  return new Stripe(key, { host: '127.0.0.1', port, protocol: 'http', maxNetworkRetries: 0, telemetry: false });
}

/** Events the receiver accepted (2xx) and verified, for one object id, in arrival order. */
function deliveredFor(objectId: string, p = '/hook'): Stripe.Event[] {
  return received
    .filter((r) => r.path === p && r.event && r.status < 300 && (r.event.data.object as { id?: string }).id === objectId)
    .map((r) => r.event as Stripe.Event);
}

function relatedTo(sessionId: string, piId: string | null): (r: Received) => boolean {
  return (r) => {
    const o = r.event?.data.object as { id?: string; payment_intent?: string } | undefined;
    return !!o && (o.id === sessionId || (piId !== null && (o.id === piId || o.payment_intent === piId)));
  };
}

const FUTURE_EXPIRY = '12 / 34';
const SHIP = {
  shipping_name: 'Ada Lovelace',
  shipping_line1: '12 Orchard Row',
  shipping_line2: 'Flat 3',
  shipping_city: 'Bath',
  shipping_postal_code: 'BA1 1AA',
  shipping_country: 'GB',
};

async function payOnPage(url: string, fields: Record<string, string>) {
  const body = new URLSearchParams({
    email: 'buyer@example.test',
    cardholder_name: 'Test Buyer',
    card_expiry: FUTURE_EXPIRY,
    card_cvc: '123',
    ...fields,
  });
  const res = await fetch(url, { method: 'POST', body, redirect: 'manual' });
  return { status: res.status, location: res.headers.get('location'), html: await res.text() };
}

// ---------------------------------------------------------------------------------------------

let dir: string;
let fake: StripeFake;
let stripe: Stripe;
let clockOffsetMs = 0;

const printParams = (extra: Partial<Stripe.Checkout.SessionCreateParams> = {}): Stripe.Checkout.SessionCreateParams => ({
  mode: 'payment',
  line_items: [
    {
      price_data: {
        currency: 'gbp',
        unit_amount: 12000,
        product_data: { name: 'Three pears on slate — licence', description: 'Editorial, web, 12 months' },
      },
      quantity: 1,
    },
    {
      price_data: { currency: 'gbp', unit_amount: 4500, product_data: { name: 'Quince, 8 × 10 in print' } },
      quantity: 2,
    },
  ],
  customer_email: 'buyer@example.test',
  client_reference_id: 'order_42',
  metadata: { order_id: '42', cart: 'c-7' },
  payment_intent_data: { metadata: { order_id: '42' } },
  allowed_payment_method_types: ['card'],
  shipping_address_collection: { allowed_countries: ['GB', 'IE', 'FR'] },
  success_url: 'http://shop.test/checkout/done?session_id={CHECKOUT_SESSION_ID}',
  cancel_url: 'http://shop.test/cart',
  ...extra,
});

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillmark-payfake-'));
  await startReceiver();
  fake = await startStripeFake({
    port: 0,
    stateFile: path.join(dir, 'nested', 'state.json'),
    webhookUrl: `${receiverUrl}/hook`,
    webhookSecret: SECRET,
    retryDelaysMs: [40, 80, 160],
    webhookTimeoutMs: 2000,
    expirySweepMs: 40,
    clock: () => Date.now() + clockOffsetMs,
  });
  stripe = client(fake.port);
});

afterAll(async () => {
  await fake?.close();
  await new Promise<void>((resolve) => (receiver ? receiver.close(() => resolve()) : resolve()));
  receiver?.closeAllConnections();
  fs.rmSync(dir, { recursive: true, force: true });
});

beforeEach(async () => {
  answers.clear();
  // Every test starts with all earlier deliveries settled.
  await waitFor('deliveries to settle', () => fake.deliveries().every((d) => d.state !== 'pending'));
});

describe('checkout sessions', () => {
  it('creates a session from the SDK and reads it back with amounts, metadata and the pay URL', async () => {
    const created = await stripe.checkout.sessions.create(printParams());
    expect(created.id).toMatch(/^cs_test_/);
    expect(created.object).toBe('checkout.session');
    // 12000 × 1 + 4500 × 2, integer minor units (TRADE-FACTS §3.3)
    expect(created.amount_subtotal).toBe(21000);
    expect(created.amount_total).toBe(21000);
    expect(created.currency).toBe('gbp');
    expect(created.status).toBe('open');
    expect(created.payment_status).toBe('unpaid');
    expect(created.url).toBe(`${fake.url}/pay/${created.id}`);
    // Default lifetime 24 h after creation (TRADE-FACTS §3.4)
    expect(created.expires_at - created.created).toBe(86400);

    const read = await stripe.checkout.sessions.retrieve(created.id);
    expect(read.metadata).toEqual({ order_id: '42', cart: 'c-7' });
    expect(read.client_reference_id).toBe('order_42');
    expect(read.customer_email).toBe('buyer@example.test');
    expect(read.shipping_address_collection?.allowed_countries).toEqual(['GB', 'IE', 'FR']);
    expect(read.payment_method_types).toEqual(['card']);
    expect(read.allowed_payment_method_types).toEqual(['card']);
    expect(read.line_items).toBeUndefined(); // not included unless asked for (TRADE-FACTS §3.4)

    const expanded = await stripe.checkout.sessions.retrieve(created.id, { expand: ['line_items'] });
    expect(expanded.line_items?.data.map((li) => [li.description, li.quantity, li.amount_total])).toEqual([
      ['Three pears on slate — licence', 1, 12000],
      ['Quince, 8 × 10 in print', 2, 9000],
    ]);
    const listed = await stripe.checkout.sessions.listLineItems(created.id);
    expect(listed.data).toHaveLength(2);
    expect(listed.data[1]?.price?.unit_amount).toBe(4500);
  });

  it('reads the nested form keys the SDK writes, sent by hand', async () => {
    const form = [
      'mode=payment',
      'line_items[0][price_data][currency]=eur',
      'line_items[0][price_data][unit_amount]=9900',
      `line_items[0][price_data][product_data][name]=${encodeURIComponent('Onion & jug')}`,
      'line_items[0][price_data][product_data][description]=Print',
      'line_items[0][quantity]=2',
      'metadata[order_id]=77',
      'payment_method_types[0]=card',
      'shipping_address_collection[allowed_countries][0]=DE',
      'shipping_address_collection[allowed_countries][1]=AT',
      'payment_intent_data[metadata][order_id]=77',
      `success_url=${encodeURIComponent('http://shop.test/ok?s={CHECKOUT_SESSION_ID}')}`,
    ].join('&');
    const res = await fetch(`${fake.url}/v1/checkout/sessions`, {
      method: 'POST',
      headers: { authorization: 'Bearer sk_test_by_hand', 'content-type': 'application/x-www-form-urlencoded' },
      body: form,
    });
    expect(res.status).toBe(200);
    expect(res.headers.get('request-id')).toMatch(/^req_/);
    const s = (await res.json()) as Stripe.Checkout.Session;
    expect(s.amount_total).toBe(19800);
    expect(s.currency).toBe('eur');
    expect(s.metadata).toEqual({ order_id: '77' });
    expect(s.shipping_address_collection?.allowed_countries).toEqual(['DE', 'AT']);
    const items = await stripe.checkout.sessions.listLineItems(s.id);
    expect(items.data[0]?.description).toBe('Onion & jug');
  });

  it('checks parameters and keys like the API does', async () => {
    const missing = await stripe.checkout.sessions.create({ mode: 'payment', success_url: 'http://shop.test/ok' }).catch((e: unknown) => e);
    expect(missing).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect((missing as Stripe.errors.StripeError).code).toBe('parameter_missing');
    expect((missing as Stripe.errors.StripeError).param).toBe('line_items');
    expect((missing as Stripe.errors.StripeError).statusCode).toBe(400);

    const soon = Math.floor(Date.now() / 1000) + 10 * 60;
    const tooSoon = await stripe.checkout.sessions.create(printParams({ expires_at: soon })).catch((e: unknown) => e);
    expect((tooSoon as Stripe.errors.StripeError).param).toBe('expires_at');
    const inAnHour = Math.floor(Date.now() / 1000) + 3600;
    expect((await stripe.checkout.sessions.create(printParams({ expires_at: inAnHour }))).expires_at).toBe(inAnHour);

    const empty = await stripe.checkout.sessions
      .create({
        mode: 'payment',
        success_url: 'http://shop.test/ok',
        line_items: [{ quantity: 1, price_data: { currency: 'gbp', unit_amount: 100, product_data: { name: 'Pear', description: '' } } }],
      })
      .catch((e: unknown) => e);
    expect((empty as Stripe.errors.StripeError).code).toBe('parameter_invalid_empty');
    expect((empty as Stripe.errors.StripeError).param).toBe('line_items[0][price_data][product_data][description]');

    const live = await client(fake.port, 'sk_live_nope').checkout.sessions.retrieve('cs_test_x').catch((e: unknown) => e);
    expect(live).toBeInstanceOf(Stripe.errors.StripeAuthenticationError);
    expect((live as Stripe.errors.StripeError).statusCode).toBe(401);
    const raw = await fetch(`${fake.url}/v1/checkout/sessions/cs_test_x`);
    expect(raw.status).toBe(401);
    const body = (await raw.json()) as { error: Record<string, unknown> };
    expect(Object.keys(body.error).sort()).toEqual(['code', 'message', 'param', 'type']);

    const unknown = await stripe.checkout.sessions.retrieve('cs_test_nope').catch((e: unknown) => e);
    expect((unknown as Stripe.errors.StripeError).statusCode).toBe(404);
    expect((unknown as Stripe.errors.StripeError).code).toBe('resource_missing');
  });

  it('keeps a zero-decimal currency amount as given (JPY, no ×100)', async () => {
    const s = await stripe.checkout.sessions.create({
      mode: 'payment',
      line_items: [{ price_data: { currency: 'jpy', unit_amount: 500, product_data: { name: 'Lemon, licence' } }, quantity: 3 }],
      success_url: 'http://shop.test/ok?id={CHECKOUT_SESSION_ID}',
    });
    // ¥500 → amount=500 (TRADE-FACTS §3.3); × 3
    expect(s.amount_total).toBe(1500);
    const page = await (await fetch(s.url as string)).text();
    expect(page).toContain('¥1,500');
    expect(page).not.toContain('¥15.00');
    const paid = await payOnPage(s.url as string, { card_number: '4242424242424242' });
    expect(paid.status).toBe(303);
    const done = await stripe.checkout.sessions.retrieve(s.id, { expand: ['payment_intent.latest_charge'] });
    const pi = done.payment_intent as Stripe.PaymentIntent;
    expect(pi.amount).toBe(1500);
    expect(pi.currency).toBe('jpy');
    expect((pi.latest_charge as Stripe.Charge).amount).toBe(1500);
    const refund = await stripe.refunds.create({ payment_intent: pi.id, amount: 500 });
    expect(refund.amount).toBe(500);
  });
});

describe('the hosted pay page', () => {
  it('shows the order, takes 4242 4242 4242 4242, redirects to the success URL and sends a verified checkout.session.completed', async () => {
    const s = await stripe.checkout.sessions.create(printParams());
    const page = await fetch(s.url as string);
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain('Three pears on slate — licence');
    expect(html).toContain('Quince, 8 × 10 in print');
    expect(html).toContain('£210.00');
    expect(html).toContain('value="buyer@example.test"');
    expect(html).toContain('name="shipping_country"');
    expect(html).toContain('href="http://shop.test/cart"');
    expect(html).toContain('Cancel and return');

    const result = await payOnPage(s.url as string, { card_number: '4242 4242 4242 4242', ...SHIP });
    expect(result.status).toBe(303);
    expect(result.location).toBe(`http://shop.test/checkout/done?session_id=${s.id}`);

    const done = await stripe.checkout.sessions.retrieve(s.id);
    expect(done.status).toBe('complete');
    expect(done.payment_status).toBe('paid');
    expect(done.payment_intent).toMatch(/^pi_/);
    expect(done.customer_details?.email).toBe('buyer@example.test');
    expect(done.customer_details?.name).toBe('Test Buyer');
    const shipping = {
      name: 'Ada Lovelace',
      address: { line1: '12 Orchard Row', line2: 'Flat 3', city: 'Bath', postal_code: 'BA1 1AA', country: 'GB', state: null },
    };
    expect((done as unknown as { shipping_details: unknown }).shipping_details).toEqual(shipping);
    expect(done.collected_information?.shipping_details).toEqual(shipping);

    const pi = await stripe.paymentIntents.retrieve(done.payment_intent as string);
    expect(pi.status).toBe('succeeded');
    expect(pi.amount).toBe(21000);
    expect(pi.metadata).toEqual({ order_id: '42' });
    expect(pi.latest_charge).toMatch(/^ch_/);
    const charge = await stripe.charges.retrieve(pi.latest_charge as string);
    expect(charge.paid).toBe(true);
    expect(charge.payment_method_details?.card?.last4).toBe('4242');

    const completed = await waitFor('checkout.session.completed', () =>
      deliveredFor(s.id).find((ev) => ev.type === 'checkout.session.completed'),
    );
    expect(completed.id).toMatch(/^evt_/);
    expect(completed.object).toBe('event');
    expect(completed.livemode).toBe(false);
    expect(completed.api_version).toBe(Stripe.API_VERSION);
    const object = completed.data.object as Stripe.Checkout.Session;
    expect(object.payment_status).toBe('paid');
    expect(object.client_reference_id).toBe('order_42');
    expect(object.metadata).toEqual({ order_id: '42', cart: 'c-7' });
    // Events of one session arrive in the order they happened.
    const types = received.filter(relatedTo(s.id, pi.id)).map((r) => r.event?.type);
    expect(types).toEqual(['payment_intent.succeeded', 'checkout.session.completed']);

    // A paid session's page no longer takes cards.
    const again = await payOnPage(s.url as string, { card_number: '4242424242424242', ...SHIP });
    expect(again.status).toBe(409);
  });

  it('also pays with 5555 5555 5555 4444', async () => {
    const s = await stripe.checkout.sessions.create(printParams({ shipping_address_collection: undefined }));
    const result = await payOnPage(s.url as string, { card_number: '5555555555554444' });
    expect(result.status).toBe(303);
    const charge = await stripe.charges.retrieve(
      (await stripe.paymentIntents.retrieve((await stripe.checkout.sessions.retrieve(s.id)).payment_intent as string)).latest_charge as string,
    );
    expect(charge.payment_method_details?.card?.brand).toBe('mastercard');
  });

  // Test card numbers and their decline codes: TRADE-FACTS §3.2 (docs.stripe.com/testing)
  const declines = [
    { number: '4000 0000 0000 0002', code: 'card_declined', decline: 'generic_decline' },
    { number: '4000 0000 0000 9995', code: 'card_declined', decline: 'insufficient_funds' },
    { number: '4000 0000 0000 0069', code: 'expired_card', decline: 'expired_card' },
    { number: '4000 0000 0000 0127', code: 'incorrect_cvc', decline: 'incorrect_cvc' },
  ];
  for (const card of declines) {
    it(`declines ${card.number} with ${card.decline}, sends payment_intent.payment_failed, keeps the session open`, async () => {
      const s = await stripe.checkout.sessions.create(printParams());
      const result = await payOnPage(s.url as string, { card_number: card.number, ...SHIP });
      expect(result.status).toBe(402);
      expect(result.html).toContain('role="alert"');

      const after = await stripe.checkout.sessions.retrieve(s.id);
      expect(after.status).toBe('open');
      expect(after.payment_status).toBe('unpaid');
      const pi = await stripe.paymentIntents.retrieve(after.payment_intent as string);
      expect(pi.status).toBe('requires_payment_method');
      expect(pi.last_payment_error?.type).toBe('card_error');
      expect(pi.last_payment_error?.code).toBe(card.code);
      expect(pi.last_payment_error?.decline_code).toBe(card.decline);
      expect(result.html).toContain(pi.last_payment_error?.message?.replace(/'/g, '&#39;'));

      const failed = await waitFor('payment_intent.payment_failed', () =>
        deliveredFor(pi.id).find((ev) => ev.type === 'payment_intent.payment_failed'),
      );
      expect((failed.data.object as Stripe.PaymentIntent).last_payment_error?.decline_code).toBe(card.decline);
      await waitFor('deliveries to settle', () => fake.deliveries().every((d) => d.state !== 'pending'));
      expect(deliveredFor(s.id).some((ev) => ev.type === 'checkout.session.completed')).toBe(false);
    });
  }

  it('lets the buyer try another card after a decline', async () => {
    const s = await stripe.checkout.sessions.create(printParams());
    expect((await payOnPage(s.url as string, { card_number: '4000000000000002', ...SHIP })).status).toBe(402);
    const ok = await payOnPage(s.url as string, { card_number: '4242424242424242', ...SHIP });
    expect(ok.status).toBe(303);
    const done = await stripe.checkout.sessions.retrieve(s.id);
    expect(done.payment_status).toBe('paid');
    const pi = await stripe.paymentIntents.retrieve(done.payment_intent as string, { expand: ['latest_charge'] });
    expect(pi.status).toBe('succeeded');
    expect((pi.latest_charge as Stripe.Charge).status).toBe('succeeded');
    await waitFor('completion', () => deliveredFor(s.id).find((ev) => ev.type === 'checkout.session.completed'));
    const types = received.filter(relatedTo(s.id, pi.id)).map((r) => r.event?.type);
    expect(types).toEqual(['payment_intent.payment_failed', 'payment_intent.succeeded', 'checkout.session.completed']);
  });

  it('refuses a number that fails the Luhn check and changes nothing', async () => {
    const s = await stripe.checkout.sessions.create(printParams());
    const eventsBefore = fake.events().length;
    const deliveriesBefore = fake.deliveries().length;
    // 4242 4242 4242 4241 fails Luhn (TRADE-FACTS §3.2, check value luhn(...4241) = false)
    const result = await payOnPage(s.url as string, { card_number: '4242 4242 4242 4241', ...SHIP });
    expect(result.status).toBe(400);
    expect(result.html).toContain('card number is not valid');
    const after = await stripe.checkout.sessions.retrieve(s.id);
    expect(after.status).toBe('open');
    expect(after.payment_intent).toBeNull();
    expect(fake.events()).toHaveLength(eventsBefore);
    expect(fake.deliveries()).toHaveLength(deliveriesBefore);
  });

  it('asks for a shipping country from the allowed list', async () => {
    const s = await stripe.checkout.sessions.create(printParams());
    const result = await payOnPage(s.url as string, { card_number: '4242424242424242', ...SHIP, shipping_country: 'US' });
    expect(result.status).toBe(400);
    expect((await stripe.checkout.sessions.retrieve(s.id)).payment_intent).toBeNull();
  });
});

describe('expiry', () => {
  it('expires an open session on request and sends checkout.session.expired', async () => {
    const s = await stripe.checkout.sessions.create(printParams());
    const expired = await stripe.checkout.sessions.expire(s.id);
    expect(expired.status).toBe('expired');
    expect(expired.url).toBeNull();
    const event = await waitFor('checkout.session.expired', () =>
      deliveredFor(s.id).find((ev) => ev.type === 'checkout.session.expired'),
    );
    expect((event.data.object as Stripe.Checkout.Session).status).toBe('expired');
    // Only open sessions can be expired (TRADE-FACTS §3.4).
    const again = await stripe.checkout.sessions.expire(s.id).catch((e: unknown) => e);
    expect(again).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect((await fetch(s.url as string)).status).toBe(410);
    expect((await payOnPage(s.url as string, { card_number: '4242424242424242', ...SHIP })).status).toBe(410);
  });

  it('expires a session by timer once expires_at has passed', async () => {
    const s = await stripe.checkout.sessions.create(printParams({ expires_at: Math.floor(Date.now() / 1000) + 1800 }));
    clockOffsetMs = 1801 * 1000;
    try {
      const event = await waitFor('timer expiry', () => deliveredFor(s.id).find((ev) => ev.type === 'checkout.session.expired'));
      expect(event.request?.id ?? null).toBeNull();
    } finally {
      clockOffsetMs = 0;
    }
    expect((await stripe.checkout.sessions.retrieve(s.id)).status).toBe('expired');
  });
});

describe('refunds', () => {
  async function paidSession(amount: number): Promise<{ session: Stripe.Checkout.Session; pi: string; charge: string }> {
    const s = await stripe.checkout.sessions.create({
      mode: 'payment',
      line_items: [{ price_data: { currency: 'gbp', unit_amount: amount, product_data: { name: 'Fig, licence' } }, quantity: 1 }],
      success_url: 'http://shop.test/ok',
    });
    expect((await payOnPage(s.url as string, { card_number: '4242424242424242' })).status).toBe(303);
    const session = await stripe.checkout.sessions.retrieve(s.id);
    const pi = await stripe.paymentIntents.retrieve(session.payment_intent as string);
    return { session, pi: pi.id, charge: pi.latest_charge as string };
  }

  it('refunds in part, then the rest, never more than was paid, and sends charge.refunded each time', async () => {
    // amount=5000, amount_refunded=2000 → refunded=false, 3000 left (TRADE-FACTS §3 check values)
    const { pi, charge } = await paidSession(5000);
    const first = await stripe.refunds.create({ payment_intent: pi, amount: 2000, reason: 'requested_by_customer', metadata: { note: 'one print' } });
    expect(first.id).toMatch(/^re_/);
    expect(first.object).toBe('refund');
    expect(first.amount).toBe(2000);
    expect(first.status).toBe('succeeded');
    expect(first.charge).toBe(charge);
    expect(first.metadata).toEqual({ note: 'one print' });
    let ch = await stripe.charges.retrieve(charge);
    expect(ch.amount_refunded).toBe(2000);
    expect(ch.refunded).toBe(false);

    const tooMuch = await stripe.refunds.create({ payment_intent: pi, amount: 3001 }).catch((e: unknown) => e);
    expect(tooMuch).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect((tooMuch as Stripe.errors.StripeError).statusCode).toBe(400);
    expect((tooMuch as Stripe.errors.StripeError).code).toBe('amount_too_large');

    const rest = await stripe.refunds.create({ charge });
    expect(rest.amount).toBe(3000);
    ch = await stripe.charges.retrieve(charge);
    expect(ch.amount_refunded).toBe(5000);
    expect(ch.refunded).toBe(true);

    const none = await stripe.refunds.create({ payment_intent: pi, amount: 1 }).catch((e: unknown) => e);
    expect((none as Stripe.errors.StripeError).statusCode).toBe(400);
    expect((none as Stripe.errors.StripeError).code).toBe('charge_already_refunded');

    const events = await waitFor('two charge.refunded', () => {
      const list = deliveredFor(charge).filter((ev) => ev.type === 'charge.refunded');
      return list.length === 2 ? list : null;
    });
    expect(events.map((ev) => [(ev.data.object as Stripe.Charge).amount_refunded, (ev.data.object as Stripe.Charge).refunded])).toEqual([
      [2000, false],
      [5000, true],
    ]);
  });

  it('will not refund an unpaid payment', async () => {
    const s = await stripe.checkout.sessions.create(printParams());
    await payOnPage(s.url as string, { card_number: '4000000000000002', ...SHIP });
    const pi = (await stripe.checkout.sessions.retrieve(s.id)).payment_intent as string;
    const error = await stripe.refunds.create({ payment_intent: pi }).catch((e: unknown) => e);
    expect((error as Stripe.errors.StripeError).statusCode).toBe(400);
  });
});

describe('idempotency keys', () => {
  it('replays the first answer for the same key and body, and refuses the key with a different body', async () => {
    const first = await stripe.checkout.sessions.create(printParams(), { idempotencyKey: 'order-42-attempt-1' });
    const second = await stripe.checkout.sessions.create(printParams(), { idempotencyKey: 'order-42-attempt-1' });
    expect(second.id).toBe(first.id);
    expect(second.lastResponse.headers['idempotent-replayed']).toBe('true');
    expect(first.lastResponse.headers['idempotent-replayed']).toBeUndefined();

    const conflict = await stripe.checkout.sessions
      .create(printParams({ client_reference_id: 'order_43' }), { idempotencyKey: 'order-42-attempt-1' })
      .catch((e: unknown) => e);
    expect(conflict).toBeInstanceOf(Stripe.errors.StripeIdempotencyError);
    expect((conflict as Stripe.errors.StripeError).type).toBe('StripeIdempotencyError');
    expect((conflict as Stripe.errors.StripeError).statusCode).toBe(400);
    expect((conflict as Stripe.errors.StripeError).raw).toMatchObject({ type: 'idempotency_error' });

    // Errors from a request that ran are replayed too; a refund is not made twice.
    const { session } = await (async () => {
      const s = await stripe.checkout.sessions.create(printParams({ shipping_address_collection: undefined }));
      await payOnPage(s.url as string, { card_number: '4242424242424242' });
      return { session: await stripe.checkout.sessions.retrieve(s.id) };
    })();
    const pi = session.payment_intent as string;
    const r1 = await stripe.refunds.create({ payment_intent: pi, amount: 1000 }, { idempotencyKey: 'refund-1' });
    const r2 = await stripe.refunds.create({ payment_intent: pi, amount: 1000 }, { idempotencyKey: 'refund-1' });
    expect(r2.id).toBe(r1.id);
    const ch = await stripe.charges.retrieve((await stripe.paymentIntents.retrieve(pi)).latest_charge as string);
    expect(ch.amount_refunded).toBe(1000);

    const longKey = await stripe.refunds.create({ payment_intent: pi, amount: 1 }, { idempotencyKey: 'k'.repeat(256) }).catch((e: unknown) => e);
    // Keys up to 255 characters (TRADE-FACTS §3.3)
    expect((longKey as Stripe.errors.StripeError).statusCode).toBe(400);
  });
});

describe('webhook delivery', () => {
  it('retries while the endpoint answers 500, then delivers, keeping a session’s events in order', async () => {
    answerFailingThenOk('/hook', 500, 2);
    const s = await stripe.checkout.sessions.create(printParams({ shipping_address_collection: undefined }));
    expect((await payOnPage(s.url as string, { card_number: '4242424242424242' })).status).toBe(303);
    await waitFor('completion after retries', () => deliveredFor(s.id).find((ev) => ev.type === 'checkout.session.completed'));
    const mine = fake.deliveries().filter((d) => d.eventType === 'payment_intent.succeeded' || d.eventType === 'checkout.session.completed').slice(-2);
    expect(mine.map((d) => d.eventType)).toEqual(['payment_intent.succeeded', 'checkout.session.completed']);
    expect(mine[0]?.attempts.map((a) => a.status)).toEqual([500, 500, 200]);
    expect(mine[0]?.state).toBe('delivered');
    expect(mine[1]?.attempts.map((a) => a.status)).toEqual([200]);
    // The second event waited for the first.
    expect(mine[1]?.attempts[0]?.at ?? 0).toBeGreaterThanOrEqual(mine[0]?.attempts[2]?.at ?? Infinity);
    // Backoff: the waits grow (40 ms then 80 ms configured).
    const [a0, a1, a2] = mine[0]?.attempts ?? [];
    expect((a1?.at ?? 0) - (a0?.at ?? 0)).toBeGreaterThanOrEqual(35);
    expect((a2?.at ?? 0) - (a1?.at ?? 0)).toBeGreaterThanOrEqual(75);
  });

  it('gives up after the last retry and shows the attempts on the event page', async () => {
    answerAlways('/hook', 503);
    const s = await stripe.checkout.sessions.create(printParams());
    await stripe.checkout.sessions.expire(s.id);
    const delivery = await waitFor('give up', () =>
      fake.deliveries().find((d) => d.eventType === 'checkout.session.expired' && d.state === 'failed'),
    );
    expect(delivery.attempts.map((a) => a.status)).toEqual([503, 503, 503, 503]);
    const page = await (await fetch(`${fake.url}/`)).text();
    expect(page).toContain(delivery.eventId);
    expect(page).toContain('HTTP 503');
    expect(page).toContain('gave up');
  });

  it('counts an unreachable endpoint as a failed attempt', async () => {
    const file = path.join(dir, 'unreachable.json');
    const closedPort = await new Promise<number>((resolve) => {
      const probe = http.createServer().listen(0, '127.0.0.1', () => {
        const p = (probe.address() as AddressInfo).port;
        probe.close(() => resolve(p));
      });
    });
    const lonely = await startStripeFake({ port: 0, stateFile: file, webhookUrl: `http://127.0.0.1:${closedPort}/x`, webhookSecret: SECRET, retryDelaysMs: [10] });
    try {
      const s = await client(lonely.port).checkout.sessions.create(printParams());
      await client(lonely.port).checkout.sessions.expire(s.id);
      const d = await waitFor('two failed tries', () => lonely.deliveries().find((x) => x.state === 'failed'));
      expect(d.attempts.map((a) => a.status)).toEqual([null, null]);
      expect(d.attempts[0]?.error).toBeTruthy();
    } finally {
      await lonely.close();
    }
  });
});

describe('restarts', () => {
  it('keeps sessions and resumes a pending delivery after close and start', async () => {
    const file = path.join(dir, 'restart', 'state.json');
    answerAlways('/restart', 500);
    const options = { port: 0, stateFile: file, webhookUrl: `${receiverUrl}/restart`, webhookSecret: SECRET, retryDelaysMs: [60_000, 60_000] };
    const first = await startStripeFake(options);
    const c1 = client(first.port);
    const open = await c1.checkout.sessions.create(printParams());
    const gone = await c1.checkout.sessions.create(printParams());
    await c1.checkout.sessions.expire(gone.id);
    const pending = await waitFor('a failed first try', () =>
      first.deliveries().find((d) => d.eventType === 'checkout.session.expired' && d.attempts.length === 1),
    );
    expect(pending.state).toBe('pending');
    await first.close();
    expect(fs.existsSync(file)).toBe(true);
    expect(fs.readdirSync(path.dirname(file)).filter((f) => f.endsWith('.tmp'))).toEqual([]);

    answerAlways('/restart', 200);
    const second = await startStripeFake(options);
    try {
      const c2 = client(second.port);
      const again = await c2.checkout.sessions.retrieve(open.id);
      expect(again.status).toBe('open');
      expect(again.amount_total).toBe(21000);
      expect(again.metadata).toEqual({ order_id: '42', cart: 'c-7' });
      expect(again.url).toBe(`${second.url}/pay/${open.id}`);
      expect((await c2.checkout.sessions.retrieve(gone.id)).status).toBe('expired');
      const done = await waitFor('resumed delivery', () =>
        second.deliveries().find((d) => d.id === pending.id && d.state === 'delivered'),
      );
      expect(done.attempts.map((a) => a.status)).toEqual([500, 200]);
      const arrived = received.filter((r) => r.path === '/restart' && r.status === 200);
      expect(arrived.map((r) => r.event?.id)).toEqual([pending.eventId]);
      // The page still works after the restart.
      expect((await payOnPage(again.url as string, { card_number: '4242424242424242', ...SHIP })).status).toBe(303);
    } finally {
      await second.close();
    }
  });
});

describe('webhook signatures', () => {
  it('matches the TRADE-FACTS §3.1 test vector, node:crypto and the SDK', () => {
    // Test vector: TRADE-FACTS §3.1 (verified there with stripe-node 23.1.0 and Node/Python HMAC)
    const secret = 'whsec_test_secret';
    const t = 1700000000;
    const payload = '{"id":"evt_test_webhook","object":"event"}';
    const expected = 'd95c6b7477fbd7e9f90b1b0ef5f9c7ac25abca5382460e0d988c2b2a5b71b990';
    expect(createHmac('sha256', secret).update(`${t}.${payload}`).digest('hex')).toBe(expected);
    expect(computeSignature(secret, t, payload)).toBe(expected);
    const header = signatureHeader(secret, payload, t);
    expect(header).toBe(`t=1700000000,v1=${expected}`);
    expect(verifier.webhooks.generateTestHeaderString({ timestamp: t, payload, secret })).toBe(header);
    // The SDK accepts it 300 s after t and refuses it at 301 s (TRADE-FACTS §3 check values; receivedAt in ms).
    const event = verifier.webhooks.constructEvent(payload, header, secret, undefined, undefined, (t + 300) * 1000);
    expect(event.id).toBe('evt_test_webhook');
    expect(() => verifier.webhooks.constructEvent(payload, header, secret, undefined, undefined, (t + 301) * 1000)).toThrow(/tolerance/);
    // Tolerance 0 skips the age check. (The installed SDK applies 300 s to verifyHeader too when the
    // tolerance is left out, unlike what TRADE-FACTS §3.1 says, so 0 is passed explicitly.)
    expect(verifier.webhooks.signature?.verifyHeader(payload, header, secret, 0)).toBe(true);
    // One trailing space changes the signature (TRADE-FACTS §3.1)
    expect(computeSignature(secret, t, `${payload} `)).toBe('83b2a841dacd1af60b1ac1b85fac853bb4e6c5bb769fba157d887c32449147dc');
    expect(() => verifier.webhooks.signature?.verifyHeader(`${payload} `, header, secret, 0)).toThrow(/No signatures found/);
  });

  it('signs every live delivery so constructEvent accepts it', () => {
    const fromFake = received.filter((r) => r.path === '/hook');
    expect(fromFake.length).toBeGreaterThan(5);
    expect(fromFake.every((r) => r.error === null && r.event !== null)).toBe(true);
  });
});
