/**
 * The demo season of orders (db/seeders/…demo-sales.seed.ts) on the demo catalogue without its
 * pictures: every order obeys the shop's own rules, the seed leaves other orders and half of every
 * limited edition alone, and running it again changes nothing. No demo value is expected here: each
 * check is a rule the data must keep, whatever the generator chose.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes, type QueryInterface } from 'sequelize';
import type { MigrationParams } from 'umzug';
import { db } from '~/lib/server/db';
import { EditionNumber, Licence, Order, OrderLine, ShopSettings } from '~/lib/server/models';
import { gradePrint } from '~/lib/print-grade';
import { licenceEndDate, shippingCost, vatIncluded, zoneFor } from '~/lib/checkout';
import { printPrice } from '~/lib/pricing';
import { normaliseTracking, type Carrier } from '~/lib/tracking';
import { canMove, type OrderState } from '~/lib/order-states';
import { DEMO_EDITIONS, DEMO_PAPERS, DEMO_SETTINGS, DEMO_SIZES, DEMO_TIERS, DEMO_WORKS } from '../../db/seeders/demo-catalogue';
import { DEMO_SESSION_PREFIX } from '../../db/seeders/demo-sales';
import * as shippingSeed from '../../db/seeders/2026.12.01T02.00.00.demo-shipping.seed';
import * as accountsSeed from '../../db/seeders/2026.12.01T01.00.00.demo-accounts.seed';
import * as salesSeed from '../../db/seeders/2026.12.02T00.00.00.demo-sales.seed';
import { Edition, LicenceTier, Paper, PrintOffer, PrintSize, WorkLicencePrice, insertWork, useTempDatabase, type TestData } from '../_fixtures';

let data: TestData;
const NOW = new Date('2026-12-02T12:00:00Z');
const DAY = 86_400_000;
const params = () => ({ name: 'test', context: db().getQueryInterface() }) as unknown as MigrationParams<QueryInterface>;
const rows = <T extends object>(sql: string, bind: unknown[] = []) => db().query<T>(sql, { bind, type: QueryTypes.SELECT });

const TABLES = ['orders', 'order_lines', 'edition_numbers', 'licences', 'download_grants', 'refunds', 'webhook_events', 'audit_events', 'users'];
async function counts(): Promise<Record<string, number>> {
  const out: Record<string, number> = {};
  for (const table of TABLES) out[table] = Number((await rows<{ n: number }>(`SELECT COUNT(*) AS n FROM ${table}`))[0]!.n);
  return out;
}

let outsider: { order: Order; number: EditionNumber; before: string };
let firstCounts: Record<string, number>;

beforeAll(async () => {
  data = await useTempDatabase();
  // The demo catalogue as the demo-shop seed lays it out, without rendering its pictures.
  const settings = await ShopSettings.create({ id: 1, ...DEMO_SETTINGS });
  for (const [position, t] of DEMO_TIERS.entries()) await LicenceTier.create({ ...t, position });
  const sizes = [];
  for (const [position, s] of DEMO_SIZES.entries()) sizes.push(await PrintSize.create({ ...s, position }));
  const papers = [];
  for (const [position, p] of DEMO_PAPERS.entries()) papers.push(await Paper.create({ ...p, position }));
  for (const demo of DEMO_WORKS) {
    const work = await insertWork(demo.slug, demo.width, demo.height, { title: demo.title, status: demo.status ?? 'published', publishedAt: demo.status === 'draft' ? null : new Date('2026-03-01T09:00:00Z'), focalX: demo.focal?.x ?? 0.5, focalY: demo.focal?.y ?? 0.5 });
    const tiers = await LicenceTier.findAll();
    const tierId = (slug: string) => tiers.find((t) => t.slug === slug)!.id;
    for (const slug of demo.withdrawn ?? []) await WorkLicencePrice.create({ workId: work.id, licenceTierId: tierId(slug), mode: 'withdrawn', price: null });
    for (const [slug, price] of Object.entries(demo.overrides ?? {})) await WorkLicencePrice.create({ workId: work.id, licenceTierId: tierId(slug), mode: 'override', price });
    for (const size of sizes) {
      if (gradePrint({ image: demo, print: size, mode: 'fit', thresholds: settings }).grade === 'too-small') continue;
      const limited = DEMO_EDITIONS[size.slug];
      const edition = await Edition.create(limited
        ? { workId: work.id, printSizeId: size.id, kind: 'limited', total: limited.total, artistProofs: limited.artistProofs }
        : { workId: work.id, printSizeId: size.id, kind: 'open', total: null });
      for (const paper of papers) await PrintOffer.create({ workId: work.id, printSizeId: size.id, paperId: paper.id, editionId: edition.id, priceOverride: null });
    }
  }
  await shippingSeed.up(params());
  await accountsSeed.up(params());

  // Someone else's order, made before the seed: number 1 of Three Pears at 16 × 20 in, sold.
  const pears = (await rows<{ id: number }>("SELECT e.id FROM editions e JOIN works w ON w.id = e.work_id JOIN print_sizes s ON s.id = e.print_size_id WHERE w.slug = 'three-pears' AND s.slug = '16x20'"))[0]!;
  const order = await Order.create({
    number: 'SM-261101-OWNORD', userId: null, email: 'collector@elsewhere.example', status: 'paid', currency: 'GBP', subtotal: 21600, shipping: 900,
    taxIncluded: vatIncluded(22500, 2000), total: 22500, licenseeName: null, licenseeOrganisation: null, intendedUse: null, shippingAddress: null,
    stripeSessionId: 'cs_test_real_one', stripePaymentIntentId: 'pi_test_real_one', paidAt: new Date('2026-11-01T10:00:00Z'), expiresAt: null, note: null,
  });
  const line = await OrderLine.create({ orderId: order.id, kind: 'print', workId: (await rows<{ id: number }>("SELECT id FROM works WHERE slug = 'three-pears'"))[0]!.id, licenceTierId: null, printOfferId: null, editionId: pears.id, mode: 'fill', quantity: 1, unitPrice: 21600, subtotal: 21600, description: 'Print', detail: '', snapshot: {} });
  const number = await EditionNumber.create({ editionId: pears.id, number: 1, orderLineId: line.id, state: 'sold', reservedUntil: null, certificateSerial: 'SMC-261101-OWNORD-001' });
  outsider = { order, number, before: JSON.stringify([(await Order.findByPk(order.id))!.toJSON(), (await EditionNumber.findByPk(number.id))!.toJSON()]) };

  await salesSeed.seedDemoSales(NOW);
  firstCounts = await counts();
}, 120_000);
afterAll(async () => data.cleanup());

async function demoOrders() {
  return rows<Record<string, any>>(`SELECT * FROM orders WHERE stripe_session_id LIKE $1 ORDER BY id`, [`${DEMO_SESSION_PREFIX}%`]);
}

describe('the demo season of orders', () => {
  it('is a season: about a hundred orders over the eight months before now, from invented buyers', async () => {
    const orders = await demoOrders();
    expect(orders.length).toBeGreaterThanOrEqual(80); // the demo's intended size: 80–150 orders
    expect(orders.length).toBeLessThanOrEqual(150);
    for (const o of orders) {
      const at = new Date(o.created_at).getTime();
      expect(at).toBeLessThan(NOW.getTime());
      expect(at).toBeGreaterThan(NOW.getTime() - 8.5 * 31 * DAY);
      expect(o.email).toMatch(/\.example$/); // RFC 2606: reserved for examples, so no real person is written to
    }
    const states = new Set(orders.map((o) => o.status));
    for (const state of ['paid', 'in_production', 'shipped', 'delivered', 'refunded', 'partly_refunded', 'expired', 'cancelled']) expect(states, state).toContain(state);
    const kinds = new Set(await Promise.all(orders.map(async (o) => (await rows<{ kind: string }>('SELECT DISTINCT kind FROM order_lines WHERE order_id = $1', [o.id])).map((l) => l.kind).sort().join('+'))));
    expect(kinds).toEqual(new Set(['licence', 'print', 'licence+print']));
  });

  it('prices every order by the shop’s rules: lines, shipping by zone, VAT included', async () => {
    const zones = await rows<{ name: string; countries: string; first_print: number; each_further_print: number }>('SELECT * FROM shipping_zones ORDER BY position');
    const shippingZones = zones.map((z) => ({ name: z.name, countries: JSON.parse(z.countries) as string[], firstPrint: z.first_print, eachFurtherPrint: z.each_further_print }));
    for (const o of await demoOrders()) {
      const lines = await rows<Record<string, any>>('SELECT ol.*, t.default_price, p.surcharge_bp, s.base_price, e.kind AS edition_kind, wp.mode AS rule_mode, wp.price AS rule_price FROM order_lines ol LEFT JOIN licence_tiers t ON t.id = ol.licence_tier_id LEFT JOIN print_offers po ON po.id = ol.print_offer_id LEFT JOIN papers p ON p.id = po.paper_id LEFT JOIN print_sizes s ON s.id = po.print_size_id LEFT JOIN editions e ON e.id = ol.edition_id LEFT JOIN work_licence_prices wp ON wp.work_id = ol.work_id AND wp.licence_tier_id = ol.licence_tier_id WHERE ol.order_id = $1', [o.id]);
      expect(lines.length).toBeGreaterThan(0);
      for (const l of lines) {
        expect(l.subtotal).toBe(l.unit_price * l.quantity);
        if (l.kind === 'licence') {
          expect(l.rule_mode).not.toBe('withdrawn'); // a withdrawn tier is never sold (PRODUCT.md)
          expect(l.unit_price).toBe(l.rule_mode === 'override' ? l.rule_price : l.default_price);
          expect(JSON.parse(l.snapshot).terms).toMatchObject({ tierName: expect.any(String), use: expect.stringMatching(/^(editorial|commercial)$/) });
        } else {
          // DEVELOPERS.md: size base × (1 + paper surcharge) × (1 + limited-edition premium).
          expect(l.unit_price).toBe(printPrice({ sizeBasePrice: l.base_price, paperSurchargeBp: l.surcharge_bp, editionPremiumBp: l.edition_kind === 'limited' ? DEMO_SETTINGS.limitedEditionPremiumBp : 0 }));
          expect(JSON.parse(l.snapshot).edition).toMatchObject({ kind: l.edition_kind });
        }
      }
      expect(o.subtotal).toBe(lines.reduce((n, l) => n + l.subtotal, 0));
      const prints = lines.filter((l) => l.kind === 'print').reduce((n, l) => n + l.quantity, 0);
      const address = o.shipping_address ? JSON.parse(o.shipping_address) : null;
      expect(Boolean(address)).toBe(prints > 0);
      expect(o.shipping).toBe(prints ? shippingCost(zoneFor(shippingZones, address.country)!, prints) : 0);
      expect(o.total).toBe(o.subtotal + o.shipping);
      expect(o.tax_included).toBe(vatIncluded(o.total, 2000)); // HMRC VAT Notice 700 §17: 1/6 of a 20 %-inclusive price
    }
  });

  it('delivers what was paid for: licences with terms and download grants, numbered prints with certificates', async () => {
    for (const o of await demoOrders()) {
      const lines = await OrderLine.findAll({ where: { orderId: o.id } });
      const paid = o.paid_at !== null;
      expect(Boolean(o.stripe_payment_intent_id)).toBe(paid);
      for (const line of lines) {
        const licences = await Licence.findAll({ where: { orderLineId: line.id } });
        const numbers = await EditionNumber.findAll({ where: { orderLineId: line.id } });
        if (!paid) {
          expect(licences).toHaveLength(0); // an unpaid order issues nothing
          expect(numbers).toHaveLength(0);
          continue;
        }
        if (line.kind === 'licence') {
          expect(licences).toHaveLength(1);
          const licence = licences[0]!;
          expect(licence.id).toMatch(/^SML-[A-Z2-9]{6}(-[A-Z2-9]{6}){3}$/);
          expect(licence.terms).toEqual((line.snapshot as { terms: unknown }).terms);
          expect(licence.startsOn).toBe(new Date(o.paid_at).toISOString().slice(0, 10));
          expect(licence.endsOn).toBe(licence.terms.termMonths ? licenceEndDate(licence.startsOn, licence.terms.termMonths) : null);
          expect(licence.price).toBe(line.unitPrice);
          const grants = await rows<{ max_downloads: number; downloads: number }>('SELECT * FROM download_grants WHERE licence_id = $1', [licence.id]);
          expect(grants).toHaveLength(1);
          expect(grants[0]!.downloads).toBeLessThanOrEqual(grants[0]!.max_downloads);
          // Revoked exactly when its line was refunded in full.
          expect(licence.status).toBe(line.refunded === line.subtotal ? 'revoked' : 'active');
          if (licence.status === 'revoked') expect(licence.revokedReason).toMatch(/^Refunded: /);
        } else if ((line.snapshot as { edition: { kind: string } }).edition.kind === 'limited') {
          expect(numbers).toHaveLength(line.quantity);
          for (const n of numbers) {
            expect(n.state).toBe('sold');
            expect(n.certificateSerial).toBe(`SMC-${o.number.slice(3)}-${String(n.number).padStart(3, '0')}`);
          }
        } else {
          expect(numbers).toHaveLength(0);
        }
      }
    }
  });

  it('takes print orders through production and shipping in order, with tracking numbers that pass the carrier’s check', async () => {
    for (const o of await demoOrders()) {
      const steps = [o.paid_at, o.production_at, o.shipped_at, o.delivered_at].filter(Boolean).map((d) => new Date(d).getTime());
      expect(steps).toEqual([...steps].sort((a, b) => a - b));
      for (const t of steps) expect(t).toBeLessThanOrEqual(NOW.getTime());
      if (o.shipped_at) {
        expect(normaliseTracking(o.carrier as Carrier, o.tracking_number)).toBe(o.tracking_number); // UPU S10 check digit for Royal Mail
      }
      if (['in_production', 'shipped', 'delivered'].includes(o.status)) expect(o.production_at).not.toBeNull();
      if (['shipped', 'delivered'].includes(o.status)) expect(o.shipped_at).not.toBeNull();
      if (o.status === 'delivered') expect(o.delivered_at).not.toBeNull();
      // Each recorded move is one the order state machine allows (PRODUCT.md's order states).
      const moves = await rows<{ before: string; after: string }>("SELECT before, after FROM audit_events WHERE order_id = $1 AND action = 'order.move' ORDER BY created_at, id", [o.id]);
      for (const m of moves) {
        const from = JSON.parse(m.before).status as OrderState;
        const to = JSON.parse(m.after).status as OrderState;
        expect(canMove(from, to), `${o.number}: ${from} → ${to}`).toBe(true);
      }
    }
  });

  it('records each refund as settled, and the order and its lines agree with it', async () => {
    for (const o of await demoOrders()) {
      const refunds = await rows<{ amount: number; status: string; allocations: string; settled_at: string }>('SELECT * FROM refunds WHERE order_id = $1', [o.id]);
      const back = refunds.reduce((n, r) => n + r.amount, 0);
      expect(o.refunded).toBe(back);
      if (o.status === 'refunded') expect(o.refunded).toBe(o.total);
      if (o.status === 'partly_refunded') expect(o.refunded).toBeGreaterThan(0);
      if (o.refunded > 0 && !['refunded', 'partly_refunded'].includes(o.status)) {
        // PRODUCT.md's order states: a partly refunded order can still be shipped and delivered after the refund.
        const lastMove = Math.max(...[o.production_at, o.shipped_at, o.delivered_at].filter(Boolean).map((d) => new Date(d).getTime()));
        expect(lastMove).toBeGreaterThan(Math.max(...refunds.map((r) => new Date(r.settled_at).getTime())));
      }
      let shippingBack = 0;
      for (const r of refunds) {
        expect(r.status).toBe('succeeded');
        const allocations = JSON.parse(r.allocations) as { lineId: number | null; amount: number }[];
        expect(allocations.reduce((n, a) => n + a.amount, 0)).toBe(r.amount);
        shippingBack += allocations.filter((a) => a.lineId === null).reduce((n, a) => n + a.amount, 0);
        expect(new Date(r.settled_at).getTime()).toBeGreaterThan(new Date(o.paid_at).getTime());
      }
      expect(o.shipping_refunded).toBe(shippingBack);
    }
  });

  it('leaves at least half of every limited edition unsold, Moon Snail’s untouched, and other orders alone', async () => {
    const editions = await rows<{ slug: string; total: number; sold: number }>(
      "SELECT w.slug, e.total, (SELECT COUNT(*) FROM edition_numbers n WHERE n.edition_id = e.id) AS sold FROM editions e JOIN works w ON w.id = e.work_id WHERE e.kind = 'limited'",
    );
    expect(editions.length).toBeGreaterThan(0);
    for (const e of editions) {
      expect(e.sold, e.slug).toBeLessThanOrEqual(Math.floor(e.total / 2));
      // The browser tests buy Moon Snail at 16 × 20 in and expect number 1 of 25.
      if (e.slug === 'moon-snail') expect(e.sold).toBe(0);
    }
    expect(editions.some((e) => e.sold > 0)).toBe(true);
    const after = JSON.stringify([(await Order.findByPk(outsider.order.id))!.toJSON(), (await EditionNumber.findByPk(outsider.number.id))!.toJSON()]);
    expect(after).toBe(outsider.before);
  });

  it('changes nothing when it runs again', async () => {
    expect(await salesSeed.seedDemoSales(NOW)).toMatchObject({ written: 0 });
    expect(await counts()).toEqual(firstCounts);
    await salesSeed.up(params());
    expect(await counts()).toEqual(firstCounts);
  });
});
