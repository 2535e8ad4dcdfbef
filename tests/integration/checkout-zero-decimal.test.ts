import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resetConfigForTests } from '~/lib/server/config';
import { db } from '~/lib/server/db';
import { startCheckout } from '~/lib/server/checkout';
import { stripe } from '~/lib/server/stripe';
import { Order } from '~/lib/server/models';
import { formatMoney } from '~/lib/money';
import { startStripeFake, type StripeFake } from '../../src/fakes/stripe/server';
import { LicenceTier, insertSettings, insertWork, useTempDatabase, type TestData } from '../_fixtures';

let data: TestData;
let fake: StripeFake;

beforeAll(async () => {
  data = await useTempDatabase();
  fake = await startStripeFake({ port: 0, stateFile: path.join(data.dir, 'stripe.json'), webhookUrl: null, webhookSecret: 'whsec_jpy' });
  process.env.STRIPE_API_BASE = fake.url;
  process.env.STRIPE_SECRET_KEY = 'sk_test_jpy';
  resetConfigForTests();
  await insertSettings({ currency: 'JPY' });
  await db().query("INSERT INTO users (id, name, email, email_verified, role, created_at, updated_at) VALUES ('jp', 'Buyer', 'buyer@example.jp', 1, 'buyer', $1, $1)", { bind: [new Date().toISOString()] });
});
afterAll(async () => {
  await fake?.close();
  await data.cleanup();
});

describe('a shop priced in a zero-decimal currency', () => {
  it('sends yen to Stripe as whole yen, never × 100', async () => {
    const work = await insertWork('yen', 6000, 4000);
    const tier = await LicenceTier.create({ slug: 'ed', name: 'Editorial', use: 'editorial', summary: '', terms: 'One feature.', media: 'web', cap: null, capUnit: null, territory: 'Japan', termMonths: 12, defaultPrice: 12000 });
    const started = await startCheckout(
      { id: 'jp', email: 'buyer@example.jp', name: 'Buyer', role: 'buyer', emailVerified: true },
      { lines: [{ kind: 'licence', workId: work.id, tierId: tier.id }], licensee: { name: 'Desk', organisation: '', intendedUse: 'A feature' } },
      'http://localhost:4321',
    );
    const order = (await Order.findOne({ where: { number: started.orderNumber } }))!;
    expect(order.currency).toBe('JPY');
    const session = await stripe().checkout.sessions.retrieve(order.stripeSessionId!);
    // Stripe: zero-decimal currencies pass the amount as is — ¥12,000 is 12000 (TRADE-FACTS §3.3)
    expect(session.currency).toBe('jpy');
    expect(session.amount_total).toBe(12000);
    expect(formatMoney(order.total, 'JPY', 'en-GB')).toBe('JP¥12,000');
  });
});
