/**
 * A small shop for the fault and backup tests, in the temporary database `useTempDatabase()` made: settings,
 * a buyer and a photographer, works made by the real upload path (originals and previews on disk), a licence
 * tier, and a 5 × 7 in print offer in a limited edition of 5 with UK shipping.
 */
import type { CheckoutInput } from '~/lib/checkout';
import sharp from 'sharp';
import { db } from '~/lib/server/db';
import { ingestUpload } from '~/lib/server/ingest';
import { ShippingZone, Work } from '~/lib/server/models';
import { Edition, LicenceTier, Paper, PrintOffer, PrintSize, insertSettings } from '../_fixtures';
import { TEST_USERS } from './users';

export const ADDRESS = { name: 'A Collector', line1: '1 Quay Street', line2: '', city: 'Leith', postalCode: 'EH6 6AA', country: 'GB' };

export interface Shop { workId: number; tierId: number; offerId: number; editionId: number }

/** A JPEG of smooth colour (fast to encode), or of noise (slow: its previews take a while to make). */
export async function testJpeg(width: number, height: number, kind: 'plain' | 'noise', seed = 1): Promise<Buffer> {
  if (kind === 'plain') {
    return sharp({ create: { width, height, channels: 3, background: { r: 90 + seed * 20, g: 70, b: 50 } } }).jpeg({ quality: 90 }).toBuffer();
  }
  const pixels = Buffer.alloc(width * height * 3);
  let state = seed * 2654435761;
  for (let i = 0; i < pixels.length; i++) {
    state = (state * 1103515245 + 12345) >>> 0; // a small LCG: the same noise every run
    pixels[i] = state >>> 24;
  }
  return sharp(pixels, { raw: { width, height, channels: 3 } }).jpeg({ quality: 92 }).toBuffer();
}

/** Uploads `file` through ingest (original + previews + row) and publishes the work. */
export async function uploadWork(file: Buffer, name: string): Promise<Work> {
  const result = await ingestUpload(new Blob([new Uint8Array(file)]).stream(), { fileName: name, declaredBytes: file.length, userId: TEST_USERS.photographer.id });
  if (result.status !== 'created') throw new Error(`${name} was a duplicate`);
  await result.work.update({ status: 'published', publishedAt: new Date(), altText: `A test still life (${name})` });
  return result.work;
}

export async function insertShop(): Promise<Shop> {
  await insertSettings();
  const now = new Date().toISOString();
  for (const user of Object.values(TEST_USERS)) {
    await db().query('INSERT INTO users (id, name, email, email_verified, role, created_at, updated_at) VALUES ($1, $2, $3, 1, $4, $5, $5)', {
      bind: [user.id, user.name, user.email, user.role, now],
    });
  }
  const work = await uploadWork(await testJpeg(2400, 1800, 'plain'), 'pewter-jug.jpg');
  const tier = await LicenceTier.create({ slug: 'ed', name: 'Editorial · Web', use: 'editorial', summary: '', terms: 'One online feature.', media: 'web', cap: 500000, capUnit: 'page views', territory: 'Worldwide', termMonths: 24, defaultPrice: 12000 });
  const size = await PrintSize.create({ slug: '5x7', label: '5 × 7 in', family: 'inch', unit: 'in', width: 5, height: 7, basePrice: 6000 });
  const paper = await Paper.create({ slug: 'cotton', name: 'Cotton', surface: 'matte', weightGsm: 310, surchargeBp: 0, description: '' });
  const edition = await Edition.create({ workId: work.id, printSizeId: size.id, kind: 'limited', total: 5, artistProofs: 0 });
  const offer = await PrintOffer.create({ workId: work.id, printSizeId: size.id, paperId: paper.id, editionId: edition.id, priceOverride: null });
  await ShippingZone.create({ name: 'UK', countries: ['GB'], firstPrint: 900, eachFurtherPrint: 300 });
  return { workId: work.id, tierId: tier.id, offerId: offer.id, editionId: edition.id };
}

/** A licence and a limited print, as the checkout endpoint takes them. */
export function cartFor(shop: Shop): CheckoutInput {
  return {
    lines: [{ kind: 'licence', workId: shop.workId, tierId: shop.tierId }, { kind: 'print', offerId: shop.offerId, mode: 'fill', quantity: 1 }],
    licensee: { name: 'Picture Desk Ltd', organisation: 'Picture Desk', intendedUse: 'A feature on studio still lifes' },
    shipping: ADDRESS,
  };
}

/** Pays on the Stripe fake's hosted page as a browser posts its form. Card 4242…: Stripe's test card that succeeds. */
export function pay(url: string, email: string, card = '4242 4242 4242 4242'): Promise<Response> {
  const form = new URLSearchParams({ email, cardholder_name: 'A Collector', card_number: card, card_expiry: '12 / 34', card_cvc: '123' });
  return fetch(url, { method: 'POST', body: form, redirect: 'manual' });
}

/** The webhook endpoint in this process, behind node:http (for tests that need no separate app process). */
export { startWebhookReceiver } from '../_stripe';

/** Polls `check` until it returns true (for hooks, where expect.poll is not available). */
export async function waitUntil(what: string, check: () => Promise<boolean> | boolean, timeoutMs = 10_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (await check()) return;
    await new Promise((r) => setTimeout(r, 25));
  }
  throw new Error(`timed out waiting until ${what}`);
}
