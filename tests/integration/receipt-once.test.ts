import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import Stripe from 'stripe';
import type { APIContext } from 'astro';
import { POST as webhook } from '~/pages/api/stripe/webhook';
import { resetConfigForTests } from '~/lib/server/config';
import { applyStripeEvent } from '~/lib/server/checkout';
import { db } from '~/lib/server/db';
import { Licence, Order, OrderLine } from '~/lib/server/models';
import { LicenceTier, insertSettings, insertWork, useTempDatabase, type TestData } from '../_fixtures';
import { listMail, useMailCatcher } from '../_accounts';
import type { MailCatcher } from '../../src/fakes/mail/catcher';

/**
 * Stripe delivers an event again when the first delivery got no 2xx (Stripe webhooks: retries). If the
 * app died after the event's transaction committed but before the receipt went out, the repeat must
 * send the receipt — once — and change nothing else.
 */
const SECRET = 'whsec_receipt_once';
let data: TestData;
let catcher: MailCatcher;
let catcherUrl: string;

beforeAll(async () => {
  data = await useTempDatabase();
  ({ catcher, url: catcherUrl } = await useMailCatcher(data.dir));
  process.env.STRIPE_WEBHOOK_SECRET = SECRET;
  resetConfigForTests();
  await insertSettings();
  await db().query("INSERT INTO users (id, name, email, email_verified, role, created_at, updated_at) VALUES ('b1', 'B', 'once@example.com', 1, 'buyer', $1, $1)", { bind: [new Date().toISOString()] });
});
afterAll(async () => {
  await catcher.close();
  await data.cleanup();
});

function signed(event: object): Request {
  const payload = JSON.stringify(event);
  const header = Stripe.webhooks.generateTestHeaderString({ payload, secret: SECRET });
  return new Request('http://localhost/api/stripe/webhook', { method: 'POST', headers: { 'stripe-signature': header, 'content-type': 'application/json' }, body: payload });
}

describe('a repeated checkout.session.completed after a crash', () => {
  it('sends the missing receipt once, and issues nothing twice', async () => {
    const work = await insertWork('once', 6000, 4000);
    const tier = await LicenceTier.create({ slug: 'ed', name: 'Editorial', use: 'editorial', summary: '', terms: 'One feature.', media: 'web', cap: null, capUnit: null, territory: 'Worldwide', termMonths: 12, defaultPrice: 12000 });
    const order = await Order.create({
      number: 'SM-261202-ONCE01', userId: 'b1', email: 'once@example.com', currency: 'GBP', subtotal: 12000, shipping: 0, taxIncluded: 2000, total: 12000,
      licenseeName: 'B', licenseeOrganisation: null, intendedUse: 'x', shippingAddress: null, stripeSessionId: 'cs_test_once', stripePaymentIntentId: null, paidAt: null, expiresAt: null, note: null,
    });
    await OrderLine.create({
      orderId: order.id, kind: 'licence', workId: work.id, licenceTierId: tier.id, printOfferId: null, editionId: null, mode: null, quantity: 1, unitPrice: 12000, subtotal: 12000,
      description: 'Licence: Editorial', detail: '', snapshot: { workTitle: 'once', workSlug: 'once', terms: { tierName: 'Editorial', use: 'editorial', terms: 'One feature.', media: 'web', cap: null, capUnit: null, territory: 'Worldwide', termMonths: 12 } },
    });
    // Event shape per TRADE-FACTS §3.4 (Checkout Session in a checkout.session.completed event).
    const event = {
      id: 'evt_test_once', object: 'event', type: 'checkout.session.completed', created: Math.floor(Date.now() / 1000), livemode: false, api_version: null,
      request: { id: null, idempotency_key: null },
      data: { object: { id: 'cs_test_once', object: 'checkout.session', mode: 'payment', status: 'complete', payment_status: 'paid', metadata: { order_number: order.number }, payment_intent: 'pi_test_once' } },
    };
    // The first delivery: applied and committed, then the process died before any mail.
    expect((await applyStripeEvent(event as unknown as Stripe.Event)).outcome).toBe('handled');
    expect(await listMail(catcherUrl, 'once@example.com')).toHaveLength(0);

    const again = await webhook({ request: signed(event) } as APIContext);
    expect(await again.json()).toMatchObject({ outcome: 'duplicate' });
    await expect.poll(async () => (await listMail(catcherUrl, 'once@example.com')).map((m) => m.subject), { timeout: 5000 }).toEqual([expect.stringMatching(/receipt for order SM-261202-ONCE01/)]);

    // A third delivery finds the receipt logged and sends nothing more.
    await webhook({ request: signed(event) } as APIContext);
    await new Promise((r) => setTimeout(r, 300));
    expect(await listMail(catcherUrl, 'once@example.com')).toHaveLength(1);
    expect(await Licence.count({ where: { orderLineId: (await OrderLine.findOne({ where: { orderId: order.id } }))!.id } })).toBe(1);
  });
});
