/**
 * Forged, stale, replayed and out-of-order Stripe events on POST /api/stripe/webhook.
 *
 * Sources: TRADE-FACTS §3.1 (Stripe-Signature `t=…,v1=…`; v1 = HMAC-SHA256 of `${t}.${rawBody}`; only v1
 * counts; default tolerance 300 s in stripe-node: 300 s old accepted, 301 s refused); Stripe docs
 * https://docs.stripe.com/webhooks ("events can be delivered more than once and not in order": de-duplicate
 * on event.id, make fulfilment idempotent) and https://docs.stripe.com/checkout/fulfillment (fulfil only
 * when payment_status is not `unpaid`); TRADE-FACTS §3.4 (`charge.refunded` carries the cumulative
 * `amount_refunded`); OWASP ASVS 5.0 V2.3 business-logic (steps in order, no replay).
 * Basic signature checks (one changed byte, 301 s, zero signature, no header) and a late
 * `checkout.session.expired` live in checkout.test.ts; this file adds what they do not cover.
 * Headers are made with stripe-node's own `webhooks.generateTestHeaderString`.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import Stripe from 'stripe';
import { startCheckout } from '~/lib/server/checkout';
import { stripe } from '~/lib/server/stripe';
import { db } from '~/lib/server/db';
import { DownloadGrant, Licence, Order, Refund } from '~/lib/server/models';
import { databaseDigest, openSecurityShop, payOnFake, WEBHOOK_SECRET, type SecurityShop } from '../_security';

let s: SecurityShop;
beforeAll(async () => {
  s = await openSecurityShop();
}, 60_000);
afterAll(async () => s?.close());

let n = 0;
const eventId = (label: string) => `evt_security_${label}_${++n}`;
const nowSeconds = () => Math.floor(Date.now() / 1000);

function sign(payload: string, options: { timestamp?: number; secret?: string } = {}): string {
  return Stripe.webhooks.generateTestHeaderString({ payload, secret: options.secret ?? WEBHOOK_SECRET, timestamp: options.timestamp });
}

/** A `charge.refunded` event as Stripe sends it (TRADE-FACTS §3.4: amount_refunded is the running total). */
function chargeRefunded(id: string, paymentIntent: string, amount: number, amountRefunded: number, orderNumber: string, created = nowSeconds()) {
  return JSON.stringify({
    id, object: 'event', type: 'charge.refunded', created, livemode: false,
    data: { object: { id: `ch_for_${paymentIntent}`, object: 'charge', amount, amount_refunded: amountRefunded, refunded: amountRefunded === amount, currency: 'gbp', payment_intent: paymentIntent, metadata: { order_number: orderNumber } } },
  });
}

async function send(payload: string, header?: string | null) {
  const response = await s.sendWebhook(payload, header);
  return { status: response.status, body: (await response.json()) as { outcome?: string; error?: { code: string } } };
}

async function orderOf(number: string) {
  return (await Order.findOne({ where: { number } }))!;
}

describe('signatures (TRADE-FACTS §3.1)', () => {
  it('refuses an event signed with another secret, or with only a v0 signature, and changes nothing', async () => {
    const event = JSON.parse(JSON.stringify(s.fake.events().find((e) => e.type === 'checkout.session.completed')));
    event.id = eventId('forged');
    const payload = JSON.stringify(event);
    const before = await databaseDigest();
    expect((await send(payload, sign(payload, { secret: 'whsec_someone_else' }))).status).toBe(400);
    // only scheme v1 is checked; a v0 value (even a correct HMAC) is ignored (stripe-node parseHeader)
    const v1 = /v1=([0-9a-f]+)/.exec(sign(payload))![1];
    expect((await send(payload, `t=${nowSeconds()},v0=${v1}`)).status).toBe(400);
    // a signature copied from another payload does not carry over
    expect((await send(payload, sign(payload.replace(s.order.number, 'SM-000000-AAAAAA')))).status).toBe(400);
    expect(await databaseDigest()).toBe(before);
  });

  it('accepts a timestamp inside the 300 s tolerance and refuses one outside it', async () => {
    const payload = JSON.stringify({ id: eventId('tolerance'), object: 'event', type: 'customer.created', created: nowSeconds(), data: { object: {} } });
    // 290 s: inside the default tolerance of 300 s (a margin for the clock moving during the test)
    expect((await send(payload, sign(payload, { timestamp: nowSeconds() - 290 }))).status).toBe(200);
    const stale = JSON.stringify({ id: eventId('stale'), object: 'event', type: 'customer.created', created: nowSeconds(), data: { object: {} } });
    const answer = await send(stale, sign(stale, { timestamp: nowSeconds() - 600 }));
    expect(answer.status).toBe(400);
    expect(answer.body.error?.code).toBe('bad_signature');
  });

  it('refuses a captured delivery replayed after the tolerance, even with its own valid signature', async () => {
    const completed = s.fake.events().find((e) => e.type === 'checkout.session.completed')!;
    const payload = JSON.stringify({ ...completed, id: eventId('captured') });
    const captured = sign(payload, { timestamp: nowSeconds() - 301 }); // the attacker kept the header of a real delivery
    const before = await databaseDigest();
    expect((await send(payload, captured)).status).toBe(400);
    expect(await databaseDigest()).toBe(before);
  });
});

describe('replays', () => {
  it('applies a completed checkout once: the same event id again is a duplicate, a new id for the same session is ignored', async () => {
    const completed = s.fake.events().find((e) => e.type === 'checkout.session.completed')!;
    const licences = await Licence.count();
    const grants = await DownloadGrant.count();
    const before = await databaseDigest();
    const same = JSON.stringify(completed);
    expect((await send(same)).body.outcome).toBe('duplicate');
    expect(await databaseDigest()).toBe(before);
    // A second event for the same session (another id) must not issue a second licence (fulfilment guide).
    const again = await send(JSON.stringify({ ...completed, id: eventId('second-completed') }));
    expect(again.status).toBe(200);
    expect(again.body.outcome).toBe('ignored');
    expect(await Licence.count()).toBe(licences);
    expect(await DownloadGrant.count()).toBe(grants);
    expect((await orderOf(s.order.number)).status).toBe('paid');
  });

  it('does not fulfil a completed session whose payment_status is unpaid', async () => {
    const pending = await startCheckout(s.users.otherBuyer, { lines: [{ kind: 'licence', workId: s.ids.work, tierId: s.ids.tier }], licensee: { name: 'Other', organisation: '', intendedUse: 'A test' } }, 'http://localhost:4321');
    const payload = JSON.stringify({
      id: eventId('unpaid'), object: 'event', type: 'checkout.session.completed', created: nowSeconds(),
      data: { object: { id: 'cs_unpaid', object: 'checkout.session', payment_status: 'unpaid', payment_intent: null, metadata: { order_number: pending.orderNumber } } },
    });
    expect((await send(payload)).body.outcome).toBe('ignored');
    expect((await orderOf(pending.orderNumber)).status).toBe('pending_payment');
    expect(await Licence.count({ where: { userId: s.users.otherBuyer.id } })).toBe(0);
  });
});

describe('events for orders the shop does not have', () => {
  it('answers 200 and changes nothing for an unknown order number, payment intent or event type', async () => {
    const before = await databaseDigest();
    const unknownOrder = JSON.stringify({
      id: eventId('unknown-order'), object: 'event', type: 'checkout.session.completed', created: nowSeconds(),
      data: { object: { id: 'cs_unknown', object: 'checkout.session', payment_status: 'paid', payment_intent: 'pi_unknown', metadata: { order_number: 'SM-000000-AAAAAA' } } },
    });
    const unknownCharge = chargeRefunded(eventId('unknown-charge'), 'pi_nobody', 5000, 5000, 'SM-000000-BBBBBB');
    const unknownType = JSON.stringify({ id: eventId('unknown-type'), object: 'event', type: 'invoice.paid', created: nowSeconds(), data: { object: {} } });
    for (const payload of [unknownOrder, unknownCharge, unknownType]) {
      const answer = await send(payload);
      // 2xx so Stripe stops retrying an event that will never match (Stripe webhooks guide: return 2xx quickly)
      expect(answer.status).toBe(200);
      expect(answer.body.outcome).toBe('ignored');
    }
    // Only the event ids were recorded (so a redelivery is a duplicate); remove them and nothing else differs.
    await db().query("DELETE FROM webhook_events WHERE id LIKE 'evt_security_unknown-%'");
    expect(await databaseDigest()).toBe(before);
  });
});

describe('events out of order', () => {
  it('never lets an older charge.refunded total undo a newer one', async () => {
    const order = await orderOf(s.order.number);
    const total = order.total;
    const newer = chargeRefunded(eventId('refund-newer'), s.order.paymentIntent, total, 1000, s.order.number, nowSeconds());
    const older = chargeRefunded(eventId('refund-older'), s.order.paymentIntent, total, 400, s.order.number, nowSeconds() - 60);
    expect((await send(newer)).body.outcome).toBe('handled');
    expect((await orderOf(s.order.number)).refunded).toBe(1000);
    const refunds = await Refund.count();
    const late = await send(older);
    expect(late.status).toBe(200);
    expect((await orderOf(s.order.number)).refunded).toBe(1000); // not back to 400
    expect(await Refund.count()).toBe(refunds);
    // the same total again (a second event id) adds nothing either
    await send(chargeRefunded(eventId('refund-same'), s.order.paymentIntent, total, 1000, s.order.number));
    expect((await orderOf(s.order.number)).refunded).toBe(1000);
    expect(await Refund.count()).toBe(refunds);
    expect((await orderOf(s.order.number)).status).toBe('partly_refunded');
  });

  it('settles a charge.refunded that arrives before its checkout.session.completed, once the payment is recorded', async () => {
    // A second order, paid on the fake but with its completed event held back (as a failed delivery would be).
    const started = await startCheckout(s.users.otherBuyer, { lines: [{ kind: 'licence', workId: s.ids.work, tierId: s.ids.tier }], licensee: { name: 'Early Refund Ltd', organisation: '', intendedUse: 'A test' } }, 'http://localhost:4321');
    const order = await orderOf(started.orderNumber);
    const paymentIntent = `pi_early_${order.id}`;
    const refunded = chargeRefunded(eventId('early-refund'), paymentIntent, order.total, order.total, order.number);
    const early = await send(refunded);
    // Not recorded as seen, so Stripe's retry brings it again: it must not be swallowed as "ignored".
    expect(early.status, JSON.stringify(early.body)).toBeGreaterThanOrEqual(400);
    expect((await orderOf(order.number)).status).toBe('pending_payment');

    const completed = JSON.stringify({
      id: eventId('late-completed'), object: 'event', type: 'checkout.session.completed', created: nowSeconds(),
      data: { object: { id: order.stripeSessionId, object: 'checkout.session', payment_status: 'paid', payment_intent: paymentIntent, metadata: { order_number: order.number } } },
    });
    expect((await send(completed)).body.outcome).toBe('handled');
    expect((await orderOf(order.number)).status).toBe('paid');
    // Stripe retries the refund event (same id): now it settles, and the licence it paid for is withdrawn.
    const retried = await send(refunded);
    expect(retried.status).toBe(200);
    expect(retried.body.outcome).toBe('handled');
    const after = await orderOf(order.number);
    expect(after.status).toBe('refunded');
    expect(after.refunded).toBe(order.total);
    const licences = await Licence.findAll({ where: { userId: s.users.otherBuyer.id } });
    expect(licences.map((l) => l.status)).toEqual(['revoked']);
  });

  it('ignores a payment failure that arrives after the payment went through', async () => {
    const before = (await orderOf(s.order.number)).note;
    const failed = JSON.stringify({
      id: eventId('late-failure'), object: 'event', type: 'payment_intent.payment_failed', created: nowSeconds() - 120,
      data: { object: { id: s.order.paymentIntent, object: 'payment_intent', metadata: { order_number: s.order.number }, last_payment_error: { message: 'Your card was declined.' } } },
    });
    expect((await send(failed)).body.outcome).toBe('ignored');
    expect((await orderOf(s.order.number)).note).toBe(before);
  });
});

describe('a real refund through the fake settles once', () => {
  it('pays back, settles on the fake’s charge.refunded, and a replay of that event changes nothing', async () => {
    const started = await startCheckout(s.users.owner, { lines: [{ kind: 'licence', workId: s.ids.work, tierId: s.ids.tier }], licensee: { name: 'Once Ltd', organisation: '', intendedUse: 'A test' } }, 'http://localhost:4321');
    expect((await payOnFake(started.url, s.users.owner.email)).status).toBe(303);
    await expect.poll(async () => (await orderOf(started.orderNumber)).status, { timeout: 10_000 }).toBe('paid');
    const order = await orderOf(started.orderNumber);
    // Refunded at the payment service directly (as from its dashboard): only the event tells the shop.
    await stripe().refunds.create({ payment_intent: order.stripePaymentIntentId!, amount: order.total });
    await expect.poll(async () => (await orderOf(started.orderNumber)).status, { timeout: 10_000 }).toBe('refunded');
    await s.settle();
    const event = s.fake.events().filter((e) => e.type === 'charge.refunded').at(-1)!;
    const before = await databaseDigest();
    expect((await send(JSON.stringify(event))).body.outcome).toBe('duplicate');
    expect(await databaseDigest()).toBe(before);
  });
});
