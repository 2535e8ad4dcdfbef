import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { APIContext } from 'astro';
import { POST as move } from '~/pages/api/dispatch/orders/[number]/move';
import { db } from '~/lib/server/db';
import { Order, OrderLine } from '~/lib/server/models';
import type { SessionUser } from '~/lib/server/auth-types';
import type { Role } from '~/lib/roles';
import { insertSettings, insertWork, useTempDatabase, type TestData } from '../_fixtures';
import { useMailCatcher, waitForMail } from '../_accounts';
import { makeOffer, preparePacks, writeOriginal } from '../_lab';
import type { MailCatcher } from '../../src/fakes/mail/catcher';

let data: TestData;
let catcher: MailCatcher;
let catcherUrl: string;
let workId: number;
let offerId: number;

const as = (role: Role): SessionUser => ({ id: `u-${role}`, email: `${role}@example.com`, name: role, role, emailVerified: true });
const send = (number: string, body: unknown, user: SessionUser | null = as('admin')) =>
  move({
    params: { number },
    request: new Request('http://localhost/x', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body) }),
    locals: { user, session: null },
  } as unknown as APIContext);

async function makeOrder(number: string, status: string, kinds: ('licence' | 'print')[]) {
  const order = await Order.create({
    number, userId: 'collector', email: 'collector@example.com', status: status as Order['status'], currency: 'GBP', subtotal: 1000, shipping: 0, taxIncluded: 0, total: 1000,
    licenseeName: null, licenseeOrganisation: null, intendedUse: null, shippingAddress: null, stripeSessionId: null, stripePaymentIntentId: null,
    paidAt: new Date(), expiresAt: null, note: null,
  });
  for (const kind of kinds) {
    const print = kind === 'print';
    await OrderLine.create({ orderId: order.id, kind, workId, licenceTierId: null, printOfferId: print ? offerId : null, editionId: null, mode: print ? 'fill' : null, quantity: 1, unitPrice: 1000, subtotal: 1000, description: kind, detail: '', snapshot: {} });
  }
}

beforeAll(async () => {
  data = await useTempDatabase();
  ({ catcher, url: catcherUrl } = await useMailCatcher(data.dir));
  await insertSettings({ shopName: 'Test Shop' });
  const pear = await insertWork('pear', 6000, 4000);
  workId = pear.id;
  // A real original and offer, so the print line can be prepared for the lab before production.
  await writeOriginal(pear);
  offerId = (await makeOffer(workId, { slug: '8x10', label: '8 × 10 in', unit: 'in', width: 8, height: 10 })).id;
  await db().query("INSERT INTO users (id, name, email, email_verified, role, created_at, updated_at) VALUES ('collector', 'C', 'collector@example.com', 1, 'buyer', $1, $1)", { bind: [new Date().toISOString()] });
  await makeOrder('SM-261201-PRINTS', 'paid', ['print']);
  await makeOrder('SM-261201-LICENC', 'paid', ['licence']);
  await makeOrder('SM-261201-REFUND', 'refunded', ['print']);
});
afterAll(async () => {
  await catcher.close();
  await data.cleanup();
});

describe('moving a print order through fulfilment', () => {
  it('is for admins only', async () => {
    expect((await send('SM-261201-PRINTS', { to: 'in_production' }, null)).status).toBe(401);
    expect((await send('SM-261201-PRINTS', { to: 'in_production' }, as('photographer'))).status).toBe(403);
  });

  it('goes paid → in production → shipped (with a checked tracking number and a mail) → delivered', async () => {
    expect((await send('SM-261201-PRINTS', { to: 'shipped', carrier: 'royal-mail', trackingNumber: 'RR123456785GB' })).status).toBe(409); // not yet in production
    const unprepared = await send('SM-261201-PRINTS', { to: 'in_production' });
    expect(unprepared.status).toBe(409); // production starts from the lab packs
    expect((await unprepared.json()).error.code).toBe('lab_pack_missing');
    await preparePacks('SM-261201-PRINTS');
    expect((await send('SM-261201-PRINTS', { to: 'in_production' })).status).toBe(200);
    const bad = await send('SM-261201-PRINTS', { to: 'shipped', carrier: 'royal-mail', trackingNumber: 'RR123456784GB' }); // wrong S10 check digit
    expect(bad.status).toBe(422);
    expect((await bad.json()).error.fields).toHaveProperty('trackingNumber');
    expect((await Order.findOne({ where: { number: 'SM-261201-PRINTS' } }))!.status).toBe('in_production');
    const ok = await send('SM-261201-PRINTS', { to: 'shipped', carrier: 'royal-mail', trackingNumber: 'rr 123 456 785 gb' });
    expect(ok.status).toBe(200);
    expect(await ok.json()).toMatchObject({ status: 'shipped', trackingNumber: 'RR123456785GB' });
    const mail = await waitForMail(catcherUrl, 'collector@example.com', /on their way/);
    expect(mail.text).toContain('RR123456785GB');
    expect((await send('SM-261201-PRINTS', { to: 'delivered' })).status).toBe(200);
    const done = (await Order.findOne({ where: { number: 'SM-261201-PRINTS' } }))!;
    expect(done.status).toBe('delivered');
    expect(done.productionAt && done.shippedAt && done.deliveredAt).toBeTruthy();
  });

  it('refuses illegal moves with a clear message', async () => {
    const refunded = await send('SM-261201-REFUND', { to: 'shipped', carrier: 'ups', trackingNumber: '1Z999AA10123456784' });
    expect(refunded.status).toBe(409);
    expect((await refunded.json()).error.message).toMatch(/refunded is final/);
    const licenceOnly = await send('SM-261201-LICENC', { to: 'in_production' });
    expect(licenceOnly.status).toBe(409);
    expect((await licenceOnly.json()).error.code).toBe('nothing_to_ship');
    expect((await send('SM-000000-NOSUCH', { to: 'in_production' })).status).toBe(404);
    expect((await send('SM-261201-PRINTS', { to: 'paid' })).status).toBe(400);
    expect((await send('SM-261201-PRINTS', { to: 'shipped', carrier: 'pigeon', trackingNumber: 'X1234' })).status).toBe(400);
  });
});
