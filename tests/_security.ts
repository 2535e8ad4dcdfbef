/**
 * A small shop for the security tests, built through the app's own flows: four accounts (a buyer who owns
 * things, another buyer, a photographer, an admin), a published work with a real original on disk, a
 * licence tier, a limited print, an answered licence quote, and one paid order (licence + limited print)
 * made by `startCheckout`, paid on the local Stripe fake's hosted page and fulfilled by the signed webhook.
 * Every text a person controls can be replaced (the XSS tests put payloads there).
 */
import path from 'node:path';
import crypto from 'node:crypto';
import { QueryTypes } from 'sequelize';
import type { APIContext } from 'astro';
import { expect } from 'vitest';
import Stripe from 'stripe';
import { POST as webhook } from '~/pages/api/stripe/webhook';
import { resetConfigForTests } from '~/lib/server/config';
import { db } from '~/lib/server/db';
import { startCheckout } from '~/lib/server/checkout';
import { downloadLinkFor } from '~/lib/server/deliveries';
import { answerQuote, createEnquiry } from '~/lib/server/licence-quotes';
import { prepareLabPack } from '~/lib/server/lab-pack';
import { DownloadGrant, EditionNumber, Licence, Order, OrderLine, ShippingZone } from '~/lib/server/models';
import { answerInput } from '~/lib/quote-schemas';
import type { SessionUser } from '~/lib/server/auth-types';
import type { ShippingAddress } from '~/lib/checkout';
import { startStripeFake, type StripeFake } from '../src/fakes/stripe/server';
import type { MailCatcher } from '../src/fakes/mail/catcher';
import { LicenceTier, Paper, Series, insertSettings, insertWork, useTempDatabase, type TestData } from './_fixtures';
import { useMailCatcher } from './_accounts';
import { makeOffer, writeOriginal } from './_lab';
import { startWebhookReceiver } from './_stripe';

export const WEBHOOK_SECRET = 'whsec_security_test_secret';
export type Who = 'signedOut' | 'owner' | 'otherBuyer' | 'photographer' | 'admin';

/** Every text a buyer or the studio types that the shop shows again somewhere. */
export interface ShopTexts {
  shopName: string;
  photographerName: string;
  watermarkText: string;
  seriesTitle: string;
  seriesDescription: string;
  workTitle: string;
  caption: string;
  altText: string;
  keywords: string[];
  tierName: string;
  tierTerms: string;
  paperName: string;
  licenseeName: string;
  licenseeOrganisation: string;
  intendedUse: string;
  shipping: ShippingAddress;
  enquiryMessage: string;
  quoteLicenseeName: string;
  quoteLicenseeOrganisation: string;
  quoteTerms: string;
  quoteReply: string;
  buyerName: string;
}

export const PLAIN_TEXTS: ShopTexts = {
  shopName: 'Test shop',
  photographerName: 'Test Photographer',
  watermarkText: 'test',
  seriesTitle: 'Test series',
  seriesDescription: 'A series for the tests.',
  workTitle: 'Glass and shadow',
  caption: 'A glass on a sill.',
  altText: 'A clear glass casting a long shadow',
  keywords: ['glass', 'shadow'],
  tierName: 'Editorial web',
  tierTerms: 'One online article and its social posts.',
  paperName: 'Test cotton rag',
  licenseeName: 'Picture Desk Ltd',
  licenseeOrganisation: 'Picture Desk',
  intendedUse: 'A feature about glass',
  shipping: { name: 'A Collector', line1: '1 Quay Street', line2: '', city: 'Leith', postalCode: 'EH6 6AA', country: 'GB' },
  enquiryMessage: 'A book cover, one print run.',
  quoteLicenseeName: 'Quarterly Press',
  quoteLicenseeOrganisation: 'Quarterly',
  quoteTerms: 'Cover of one book edition, print and e-book.',
  quoteReply: 'Happy to help.',
  buyerName: 'Owner Buyer',
};

export interface SecurityShop {
  data: TestData;
  fake: StripeFake;
  catcher: MailCatcher;
  catcherUrl: string;
  texts: ShopTexts;
  users: Record<Exclude<Who, 'signedOut'>, SessionUser>;
  ids: { work: number; tier: number; offer: number; edition: number; size: number; paper: number; series: number; zone: number };
  order: { number: string; id: number; licenceLineId: number; printLineId: number; paymentIntent: string; total: number };
  licenceId: string;
  grantId: number;
  /** The owner's signed download token (the last part of the download URL). */
  token: string;
  serial: string;
  quoteId: string;
  /** Sends a body to the webhook endpoint, signed with the endpoint secret unless a header is given. */
  sendWebhook(payload: string, header?: string | null): Promise<Response>;
  /** Waits until the fake has delivered every event (so nothing changes behind a test's back). */
  settle(): Promise<void>;
  close(): Promise<void>;
}

/** Polls `done` (outside a test, where expect.poll is not allowed) until it holds, or fails after `timeoutMs`. */
export async function waitUntil(done: () => boolean | Promise<boolean>, what: string, timeoutMs = 10_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await done())) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

/** Pays on the fake's hosted page as a browser would post its form. */
export async function payOnFake(url: string, email: string, card = '4242 4242 4242 4242'): Promise<Response> {
  const form = new URLSearchParams({ email, cardholder_name: 'A Collector', card_number: card, card_expiry: '12 / 34', card_cvc: '123' });
  return fetch(url, { method: 'POST', body: form, redirect: 'manual' });
}

export function sessionUser(id: string, role: SessionUser['role'], name: string): SessionUser {
  return { id, email: `${id}@security.example`, name, role, emailVerified: true };
}

export async function openSecurityShop(options: { texts?: Partial<ShopTexts>; labPack?: boolean } = {}): Promise<SecurityShop> {
  const texts: ShopTexts = { ...PLAIN_TEXTS, ...options.texts };
  const data = await useTempDatabase();
  const { catcher, url: catcherUrl } = await useMailCatcher(data.dir);

  // The fake's webhook deliveries reach the endpoint exactly as the node adapter hands requests over.
  const receiver = await startWebhookReceiver();
  const webhookUrl = receiver.url;
  const fake = await startStripeFake({ port: 0, stateFile: path.join(data.dir, 'stripe.json'), webhookUrl, webhookSecret: WEBHOOK_SECRET, retryDelaysMs: [50, 100, 200] });
  process.env.STRIPE_API_BASE = fake.url;
  process.env.STRIPE_WEBHOOK_SECRET = WEBHOOK_SECRET;
  process.env.STRIPE_SECRET_KEY = 'sk_test_security';
  resetConfigForTests();

  await insertSettings({ shopName: texts.shopName, photographerName: texts.photographerName, watermarkText: texts.watermarkText });
  const users = {
    owner: sessionUser('owner-buyer', 'buyer', texts.buyerName),
    otherBuyer: sessionUser('other-buyer', 'buyer', 'Other Buyer'),
    photographer: sessionUser('studio-photographer', 'photographer', 'Studio Photographer'),
    admin: sessionUser('shop-admin', 'admin', 'Shop Admin'),
  };
  const now = new Date().toISOString();
  for (const u of Object.values(users)) {
    await db().query('INSERT INTO users (id, name, email, email_verified, role, created_at, updated_at) VALUES ($1, $2, $3, 1, $4, $5, $5)', { bind: [u.id, u.name, u.email, u.role, now] });
  }

  const series = await Series.create({ slug: 'test-series', title: texts.seriesTitle, description: texts.seriesDescription });
  const work = await insertWork('glass-and-shadow', 1800, 1200, { title: texts.workTitle, caption: texts.caption, altText: texts.altText, keywords: texts.keywords, seriesId: series.id });
  await writeOriginal(work);
  const tier = await LicenceTier.create({ slug: 'editorial-web', name: texts.tierName, use: 'editorial', summary: '', terms: texts.tierTerms, media: 'Web', cap: 100000, capUnit: 'page views', territory: 'Worldwide', termMonths: 12, defaultPrice: 9000 });
  const offer = await makeOffer(work.id, { slug: '6x4', label: '6 × 4 in', unit: 'in', width: 6, height: 4 }, 5);
  await Paper.update({ name: texts.paperName }, { where: { id: offer.paperId } });
  const zone = await ShippingZone.create({ name: 'UK', countries: ['GB'], firstPrint: 900, eachFurtherPrint: 300 });

  // The owner asks for a quote and the studio answers it.
  const enquiry = await createEnquiry(users.owner, {
    workId: work.id, use: 'editorial', media: 'Book cover', printRun: 5000, territory: 'Worldwide', termMonths: 24, exclusivity: 'none',
    licenseeName: texts.quoteLicenseeName, licenseeOrganisation: texts.quoteLicenseeOrganisation, message: texts.enquiryMessage,
  });
  await answerQuote({ id: users.photographer.id, email: users.photographer.email }, enquiry.id, answerInput('GBP').parse({
    use: 'editorial', media: 'Book cover', cap: 5000, capUnit: 'copies', territory: 'Worldwide', termMonths: 24, exclusivity: 'none',
    terms: texts.quoteTerms, price: '250.00', validityDays: 14, reply: texts.quoteReply,
  }));

  // The owner buys a licence and a limited print, pays with Stripe's 4242 test card (TRADE-FACTS §3.2).
  const started = await startCheckout(users.owner, {
    lines: [{ kind: 'licence', workId: work.id, tierId: tier.id }, { kind: 'print', offerId: offer.id, mode: 'fill', quantity: 1 }],
    licensee: { name: texts.licenseeName, organisation: texts.licenseeOrganisation, intendedUse: texts.intendedUse },
    shipping: texts.shipping,
  }, 'http://localhost:4321');
  expect((await payOnFake(started.url, users.owner.email)).status).toBe(303);
  await waitUntil(async () => (await Order.findOne({ where: { number: started.orderNumber } }))?.status === 'paid', 'the order to be paid');
  const order = (await Order.findOne({ where: { number: started.orderNumber } }))!;
  const lines = await OrderLine.findAll({ where: { orderId: order.id }, order: [['id', 'ASC']] });
  const licenceLine = lines.find((l) => l.kind === 'licence')!;
  const printLine = lines.find((l) => l.kind === 'print')!;
  const licence = (await Licence.findOne({ where: { orderLineId: licenceLine.id } }))!;
  const grant = (await DownloadGrant.findOne({ where: { licenceId: licence.id } }))!;
  const link = (await downloadLinkFor(licence.id, users.owner.id))!;
  const number = (await EditionNumber.findOne({ where: { orderLineId: printLine.id } }))!;
  if (options.labPack) await prepareLabPack(order.number, String(printLine.id), { id: users.admin.id, email: users.admin.email });

  const settle = async () => {
    await waitUntil(() => fake.deliveries().every((d) => d.state !== 'pending'), 'every webhook delivery');
  };
  await settle();

  return {
    data, fake, catcher, catcherUrl, texts, users,
    ids: { work: work.id, tier: tier.id, offer: offer.id, edition: offer.editionId!, size: offer.printSizeId, paper: offer.paperId, series: series.id, zone: zone.id },
    order: { number: order.number, id: order.id, licenceLineId: licenceLine.id, printLineId: printLine.id, paymentIntent: order.stripePaymentIntentId!, total: order.total },
    licenceId: licence.id,
    grantId: grant.id,
    token: link.url.split('/').pop()!,
    serial: number.certificateSerial!,
    quoteId: enquiry.id,
    sendWebhook: (payload, header) => {
      const headers: Record<string, string> = { 'Content-Type': 'application/json' };
      const signature = header === undefined ? Stripe.webhooks.generateTestHeaderString({ payload, secret: WEBHOOK_SECRET }) : header;
      if (signature !== null) headers['stripe-signature'] = signature;
      return webhook({ request: new Request('http://localhost:4321/api/stripe/webhook', { method: 'POST', headers, body: payload }) } as APIContext);
    },
    settle,
    close: async () => {
      await fake.close();
      await catcher.close();
      receiver.close();
      await data.cleanup();
    },
  };
}

/** A digest of every row of every table: equal digests mean a request changed nothing stored. */
export async function databaseDigest(): Promise<string> {
  const tables = await db().query<{ name: string }>("SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name", { type: QueryTypes.SELECT });
  const hash = crypto.createHash('sha256');
  for (const { name } of tables) {
    // FTS5 tables and their shadow tables read in rowid order like the rest.
    const rows = await db().query(`SELECT * FROM "${name}" ORDER BY rowid`, { type: QueryTypes.SELECT }).catch(() => db().query(`SELECT * FROM "${name}"`, { type: QueryTypes.SELECT }));
    hash.update(name).update(JSON.stringify(rows));
  }
  return hash.digest('hex');
}
