/**
 * A season of invented orders for the demo shop, so Studio → Sales, Dispatch and the exports have
 * something to show: about eight months before the seed runs, priced by the shop's own rules (cart
 * quote, shipping zones, VAT included) and written as checkout and the payment events write them —
 * order lines with their snapshots, sold edition numbers with certificate serials, licences with their
 * terms and download grants — then taken through production, shipping and delivery, with a few refunds.
 *
 * Deterministic: one seeded generator decides every order; dates are relative to now. Safe to run
 * again: seed orders are known by their payment session ids (`cs_demo_seed_…`) and one that exists is
 * skipped; all orders are written in one transaction; no other order is read for anything but the
 * edition numbers it holds. Limited editions keep at least half their numbers unsold.
 */
import { Op, QueryTypes, type QueryInterface, type Transaction } from 'sequelize';
import type { MigrationParams } from 'umzug';
import { auth } from '../../src/lib/server/auth';
import type { AuditAction, AuditEntry } from '../../src/lib/server/audit';
import { config } from '../../src/lib/server/config';
import { db } from '../../src/lib/server/db';
import { quoteCart } from '../../src/lib/server/quote';
import { newLicenceId } from '../../src/lib/server/checkout';
import { printSnapshotFor } from '../../src/lib/server/lab-pack';
import {
  AuditEvent, DownloadGrant, Edition, EditionNumber, Licence, LicenceTier, Order, OrderLine, Paper, PrintOffer, PrintSize,
  Refund, ShippingZone, ShopSettings, Work,
} from '../../src/lib/server/models';
import type { LicenceTerms } from '../../src/lib/server/models/Licence';
import type { RefundAllocation } from '../../src/lib/server/models/Refund';
import type { OrderStatus } from '../../src/lib/server/models/Order';
import { freeEditionNumbers, licenceEndDate, shippingCost, vatIncluded, zoneFor, type ShippingAddress } from '../../src/lib/checkout';
import { normaliseTracking, s10CheckDigit, type Carrier } from '../../src/lib/tracking';
import type { CartLineInput, QuotedLineOk } from '../../src/lib/cart';
import { DEMO_ACCOUNTS } from './demo-accounts';
import {
  DEMO_BUYERS, DEMO_EVENT_PREFIX, DEMO_INTENT_PREFIX, DEMO_REFUND_PREFIX, DEMO_SALES_SEED, DEMO_SESSION_PREFIX, REFUND_REASON_TEXT,
  SIZE_APPEAL, UNTOUCHED_EDITION_WORKS, WORK_APPEAL, pick, pickWeighted, seededRandom, type DemoBuyer, type Random,
} from './demo-sales';

type Seed = (params: MigrationParams<QueryInterface>) => Promise<void>;

const MINUTE = 60_000;
const HOUR = 60 * MINUTE;
const DAY = 24 * HOUR;
/** How many orders, over how many days before now. */
const ORDER_COUNT = 124;
const HORIZON_DAYS = 240;

interface Catalogue {
  currency: string;
  vatRateBp: number;
  works: Work[];
  tiers: Map<string, LicenceTier>;
  offers: (PrintOffer & { size: PrintSize; paper: Paper; edition: Edition })[];
  zones: ShippingZone[];
  /** Numbers of each limited edition already taken (by anyone) when the seed starts. */
  taken: Map<number, number>;
}

interface PlannedRefund {
  reason: string;
  requestedAt: Date;
  settledAt: Date;
  /** Line indexes refunded whole, a part of one line, or the shipping. */
  wholeLines: number[];
  partLine?: { index: number; amount: number };
  shipping?: boolean;
}

interface PlannedOrder {
  index: number;
  buyer: DemoBuyer;
  createdAt: Date;
  outcome: 'paid' | 'expired' | 'cancelled';
  inputs: CartLineInput[];
  quoted: QuotedLineOk[];
  intendedUse: string | null;
  shipping: number;
  paidAt: Date | null;
  productionAt: Date | null;
  shippedAt: Date | null;
  deliveredAt: Date | null;
  carrier: Carrier | null;
  trackingNumber: string | null;
  refund: PlannedRefund | null;
}

const ALPHABET = 'ABCDEFGHJKLMNPQRSTUVWXYZ23456789';

function code(random: Random, length: number, alphabet = ALPHABET): string {
  return Array.from({ length }, () => alphabet[Math.floor(random() * alphabet.length)]).join('');
}

function digits(random: Random, length: number): string {
  return code(random, length, '0123456789');
}

/** A tracking number in the carrier's own format (checked the way Dispatch checks one). */
function trackingFor(carrier: Carrier, random: Random): string {
  let value: string;
  if (carrier === 'royal-mail') {
    const serial = digits(random, 8);
    value = `${pick(random, ['RR', 'RB', 'RD'])}${serial}${s10CheckDigit(serial)}GB`;
  } else if (carrier === 'ups') {
    value = `1Z${code(random, 6, 'ABCDEFGHJKLMNPRSTUVWXYZ0123456789')}${digits(random, 10)}`;
  } else {
    value = digits(random, 10);
  }
  const checked = normaliseTracking(carrier, value);
  if (!checked) throw new Error(`demo tracking number ${value} does not pass the ${carrier} check`);
  return checked;
}

function carrierFor(country: string): Carrier {
  if (country === 'GB') return 'royal-mail';
  return ['SE', 'DE', 'FR', 'NL', 'IT', 'ES', 'IE', 'BE', 'AT', 'DK'].includes(country) ? 'dhl-express' : 'ups';
}

/** An order number as checkout makes it (SM-YYMMDD-XXXXXX), its tail from the seeded generator. */
function orderNumber(at: Date, random: Random): string {
  return `SM-${at.toISOString().slice(2, 10).replace(/-/g, '')}-${code(random, 6)}`;
}

async function loadCatalogue(): Promise<Catalogue> {
  const settings = await ShopSettings.findByPk(1);
  if (!settings) throw new Error('demo sales: the demo shop must be seeded first');
  const works = await Work.findAll({ where: { status: 'published' }, order: [['id', 'ASC']] });
  const tiers = new Map((await LicenceTier.findAll({ where: { active: true } })).map((t) => [t.slug, t]));
  const offers = (await PrintOffer.findAll({
    where: { active: true, workId: { [Op.in]: works.map((w) => w.id) } },
    include: [{ model: PrintSize, as: 'size' }, { model: Paper, as: 'paper' }, { model: Edition, as: 'edition' }],
    order: [['id', 'ASC']],
  })).filter((o) => o.size?.active && o.paper?.active && o.edition) as Catalogue['offers'];
  const zones = await ShippingZone.findAll({ order: [['position', 'ASC']] });
  const taken = new Map<number, number>();
  const rows = await db().query<{ editionId: number; n: number }>(
    'SELECT edition_id AS editionId, COUNT(*) AS n FROM edition_numbers GROUP BY edition_id',
    { type: QueryTypes.SELECT },
  );
  for (const row of rows) taken.set(Number(row.editionId), Number(row.n));
  return { currency: settings.currency, vatRateBp: settings.vatRateBp, works, tiers, offers, zones, taken };
}

/** A moment on the day `ageDays` before now, in studio hours, never later than twenty minutes ago. */
function momentAgo(now: Date, ageDays: number, random: Random): Date {
  const day = new Date(now.getTime() - ageDays * DAY);
  const at = Date.UTC(day.getUTCFullYear(), day.getUTCMonth(), day.getUTCDate()) + (8 + random() * 13) * HOUR;
  return new Date(Math.min(at, now.getTime() - (20 + random() * 160) * MINUTE));
}

function plan(now: Date, cat: Catalogue): PlannedOrder[] {
  const random = seededRandom(DEMO_SALES_SEED);
  const weightedWorks = cat.works.map((w) => [w, WORK_APPEAL[w.slug] ?? 1] as const);
  const plannedSold = new Map<number, number>();
  const orders: PlannedOrder[] = [];

  const licenceLine = (slug: string, taken: Set<string>): CartLineInput | null => {
    const tier = cat.tiers.get(slug);
    if (!tier) return null;
    for (let attempt = 0; attempt < 6; attempt++) {
      const work = pickWeighted(random, weightedWorks);
      const key = `licence:${work.id}:${tier.id}`;
      if (taken.has(key)) continue;
      taken.add(key);
      return { kind: 'licence', workId: work.id, tierId: tier.id };
    }
    return null;
  };

  const printLine = (sellsLimited: boolean, taken: Set<string>): CartLineInput | null => {
    for (let attempt = 0; attempt < 6; attempt++) {
      const work = pickWeighted(random, weightedWorks);
      const offers = cat.offers.filter((o) => o.workId === work.id);
      const limited = sellsLimited && !UNTOUCHED_EDITION_WORKS.includes(work.slug)
        ? offers.filter((o) => {
            if (o.edition.kind !== 'limited') return false;
            // At least half of every limited edition stays unsold.
            const sold = (cat.taken.get(o.edition.id) ?? 0) + (plannedSold.get(o.edition.id) ?? 0);
            return sold + 1 <= Math.floor(o.edition.total! / 2);
          })
        : [];
      const candidates = limited.length ? limited : offers.filter((o) => o.edition.kind === 'open');
      if (!candidates.length) continue;
      const sizes = [...new Set(candidates.map((o) => o.size.slug))];
      const size = pickWeighted(random, sizes.map((s) => [s, SIZE_APPEAL[s] ?? 1] as const));
      const offer = pick(random, candidates.filter((o) => o.size.slug === size));
      const mode = random() < 0.6 ? 'fill' : 'fit';
      const key = `print:${offer.id}:${mode}`;
      if (taken.has(key)) continue;
      taken.add(key);
      return { kind: 'print', offerId: offer.id, mode, quantity: offer.edition.kind === 'limited' ? 1 : random() < 0.2 ? 2 : 1 };
    }
    return null;
  };

  for (let index = 0; index < ORDER_COUNT; index++) {
    const buyer = pickWeighted(random, DEMO_BUYERS.map((b) => [b, b.weight] as const));
    // Orders come a little more often as the season goes on.
    const ageDays = HORIZON_DAYS * Math.pow(1 - (index + random()) / ORDER_COUNT, 1.2);
    const createdAt = momentAgo(now, ageDays, random);
    const roll = random();
    const old = now.getTime() - createdAt.getTime() > DAY;
    const outcome = old && roll < 0.05 ? 'expired' : old && roll < 0.07 ? 'cancelled' : 'paid';

    const taken = new Set<string>();
    const inputs: (CartLineInput | null)[] = [];
    const sellsLimited = outcome === 'paid' && random() < 0.5;
    switch (buyer.habit) {
      case 'press-digital':
        inputs.push(licenceLine(random() < 0.8 ? 'editorial-digital' : 'editorial-print-run', taken));
        if (random() < 0.2) inputs.push(licenceLine('editorial-digital', taken));
        break;
      case 'press-book': {
        const n = 1 + Math.floor(random() * 3);
        for (let i = 0; i < n; i++) inputs.push(licenceLine('editorial-print-run', taken));
        break;
      }
      case 'brand':
        inputs.push(licenceLine(random() < 0.85 ? 'commercial-web' : 'editorial-digital', taken));
        if (random() < 0.25) inputs.push(printLine(sellsLimited, taken));
        break;
      case 'collector':
        inputs.push(printLine(sellsLimited, taken));
        if (random() < 0.3) inputs.push(printLine(false, taken));
        break;
      case 'interiors':
        inputs.push(printLine(sellsLimited, taken));
        if (random() < 0.4) inputs.push(printLine(false, taken));
        if (random() < 0.5) inputs.push(licenceLine('commercial-web', taken));
        break;
      case 'campaign':
        inputs.push(licenceLine('commercial-campaign', taken));
        break;
    }
    const lines = inputs.filter((l): l is CartLineInput => l !== null);
    const hasPrint = lines.some((l) => l.kind === 'print');
    if (!lines.length || (hasPrint && !buyer.address)) continue;
    orders.push({
      index, buyer, createdAt, outcome, inputs: lines, quoted: [],
      intendedUse: lines.some((l) => l.kind === 'licence') ? pick(random, buyer.uses.length ? buyer.uses : ['Editorial use']) : null,
      shipping: 0, paidAt: null, productionAt: null, shippedAt: null, deliveredAt: null, carrier: null, trackingNumber: null, refund: null,
    });
    if (outcome === 'paid') {
      for (const line of lines) {
        if (line.kind !== 'print') continue;
        const offer = cat.offers.find((o) => o.id === line.offerId)!;
        if (offer.edition.kind === 'limited') plannedSold.set(offer.edition.id, (plannedSold.get(offer.edition.id) ?? 0) + line.quantity);
      }
    }
  }
  return orders;
}

/** Prices each planned order with the cart quote; a print the file cannot hold cropped is tried with a border. */
async function price(orders: PlannedOrder[], cat: Catalogue): Promise<PlannedOrder[]> {
  const priced: PlannedOrder[] = [];
  for (const order of orders) {
    let quote = await quoteCart(order.inputs, null);
    if (quote.lines.some((l, i) => !l.ok && order.inputs[i]!.kind === 'print')) {
      order.inputs = order.inputs.map((line, i) => (!quote.lines[i]!.ok && line.kind === 'print' && line.mode === 'fill' ? { ...line, mode: 'fit' } : line));
      quote = await quoteCart(order.inputs, null);
    }
    // Whatever the shop would still refuse (a withdrawn tier, a size too big for the file) is left out.
    const keep = quote.lines.map((l) => l.ok);
    order.inputs = order.inputs.filter((_, i) => keep[i]);
    order.quoted = quote.lines.filter((l): l is QuotedLineOk => l.ok);
    if (!order.quoted.length || quote.currency !== cat.currency) continue;
    const prints = order.inputs.reduce((n, l) => n + (l.kind === 'print' ? l.quantity : 0), 0);
    if (prints > 0) {
      const zone = zoneFor(cat.zones, order.buyer.address!.country);
      if (!zone) continue;
      order.shipping = shippingCost(zone, prints);
    }
    priced.push(order);
  }
  return priced;
}

/** Paid orders go as far through production, shipping and delivery as their age allows. */
function fulfil(orders: PlannedOrder[], now: Date): void {
  const random = seededRandom(DEMO_SALES_SEED + 1);
  const before = (at: Date) => at.getTime() < now.getTime() - 30 * MINUTE;
  for (const order of orders) {
    if (order.outcome !== 'paid') continue;
    order.paidAt = new Date(order.createdAt.getTime() + (1 + random() * 5) * MINUTE);
    if (!order.inputs.some((l) => l.kind === 'print')) continue;
    const country = order.buyer.address!.country;
    // Lab turnaround (TRADE-FACTS §8.2, trade practice): a few days; signed, numbered prints take longer.
    const signed = order.quoted.some((q) => / limited edition /.test(` ${q.detail} `));
    const production = new Date(order.paidAt.getTime() + (0.5 + random() * 1.5) * DAY);
    const shipped = new Date(production.getTime() + (signed ? 6 + random() * 4 : 2 + random() * 3) * DAY);
    const delivered = new Date(shipped.getTime() + (country === 'GB' ? 1 + random() * 2 : 3 + random() * 4) * DAY);
    if (!before(production)) continue;
    order.productionAt = production;
    if (!before(shipped)) continue;
    order.shippedAt = shipped;
    order.carrier = carrierFor(country);
    order.trackingNumber = trackingFor(order.carrier, random);
    if (before(delivered)) order.deliveredAt = delivered;
  }
}

/** `n` candidates spread evenly over the list (so refunds fall across the season, not in one week). */
function spread<T>(items: T[], n: number): T[] {
  if (items.length <= n) return items;
  return Array.from({ length: n }, (_, j) => items[Math.floor(((j + 0.5) * items.length) / n)]!);
}

function planRefunds(orders: PlannedOrder[], now: Date): void {
  const random = seededRandom(DEMO_SALES_SEED + 2);
  const paid = orders.filter((o) => o.outcome === 'paid' && o.paidAt);
  const ageDays = (o: PlannedOrder) => (now.getTime() - o.paidAt!.getTime()) / DAY;
  const kinds = (o: PlannedOrder) => new Set(o.inputs.map((l) => l.kind));
  const limited = (o: PlannedOrder) => o.quoted.some((q) => / limited edition /.test(` ${q.detail} `));
  const free = (o: PlannedOrder) => !o.refund;
  const later = (from: Date, minDays: number, spanDays: number) => new Date(from.getTime() + (minDays + random() * spanDays) * DAY);
  const fits = (at: Date) => at.getTime() < now.getTime() - HOUR;

  // Licences refunded in full soon after purchase: the licence is revoked.
  const licenceOnly = paid.filter((o) => free(o) && kinds(o).size === 1 && kinds(o).has('licence') && ageDays(o) > 12);
  for (const [j, o] of spread(licenceOnly, 3).entries()) {
    const requestedAt = later(o.paidAt!, 0.2, 3);
    const settledAt = new Date(requestedAt.getTime() + (2 + random() * 30) * MINUTE);
    if (!fits(settledAt)) continue;
    o.refund = { reason: j === 1 ? REFUND_REASON_TEXT.duplicate : REFUND_REASON_TEXT.wrongTier, requestedAt, settledAt, wholeLines: o.inputs.map((_, i) => i), shipping: false };
  }
  // An open-edition print order refunded before it went into production.
  const earlyPrints = paid.filter((o) => free(o) && kinds(o).size === 1 && kinds(o).has('print') && !limited(o) && o.productionAt && ageDays(o) > 20);
  for (const o of spread(earlyPrints, 1)) {
    const requestedAt = new Date(o.paidAt!.getTime() + (2 + random() * 4) * HOUR);
    const settledAt = new Date(requestedAt.getTime() + 10 * MINUTE);
    o.productionAt = o.shippedAt = o.deliveredAt = null;
    o.carrier = o.trackingNumber = null;
    o.refund = { reason: REFUND_REASON_TEXT.changedMind, requestedAt, settledAt, wholeLines: o.inputs.map((_, i) => i), shipping: true };
  }
  // Mixed orders whose licence was dropped: the licence line refunded and revoked, the prints kept.
  const mixed = paid.filter((o) => free(o) && kinds(o).size === 2 && ageDays(o) > 15);
  for (const o of spread(mixed, 2)) {
    const requestedAt = later(o.paidAt!, 1, 6);
    const settledAt = new Date(requestedAt.getTime() + 15 * MINUTE);
    if (!fits(settledAt)) continue;
    o.refund = { reason: REFUND_REASON_TEXT.dropLicence, requestedAt, settledAt, wholeLines: o.inputs.flatMap((l, i) => (l.kind === 'licence' ? [i] : [])) };
  }
  // Delivered prints: two arrived damaged (part of a line back), one parcel was late (shipping back).
  const delivered = paid.filter((o) => free(o) && o.deliveredAt && kinds(o).has('print'));
  for (const o of spread(delivered, 2)) {
    const requestedAt = later(o.deliveredAt!, 0.5, 2);
    const settledAt = new Date(requestedAt.getTime() + 20 * MINUTE);
    if (!fits(settledAt)) continue;
    const index = o.inputs.findIndex((l) => l.kind === 'print');
    o.refund = { reason: REFUND_REASON_TEXT.damaged, requestedAt, settledAt, wholeLines: [], partLine: { index, amount: Math.round(o.quoted[index]!.subtotal * 0.4) } };
  }
  const late = paid.filter((o) => free(o) && o.deliveredAt && o.buyer.address && o.buyer.address.country !== 'GB');
  for (const o of spread(late, 1)) {
    const requestedAt = later(o.deliveredAt!, 1, 2);
    const settledAt = new Date(requestedAt.getTime() + 20 * MINUTE);
    if (!fits(settledAt)) continue;
    o.refund = { reason: REFUND_REASON_TEXT.late, requestedAt, settledAt, wholeLines: [], shipping: true };
  }
}

async function ensureBuyerAccounts(firstOrderAt: Map<string, Date>): Promise<Map<string, string>> {
  const ctx = await auth().$context;
  const ids = new Map<string, string>();
  for (const buyer of DEMO_BUYERS.filter((b) => b.account)) {
    const existing = await ctx.internalAdapter.findUserByEmail(buyer.email);
    if (existing) {
      ids.set(buyer.email, existing.user.id);
      continue;
    }
    // No password: these invented buyers only hold the demo's order history; nobody signs in as them.
    const user = await ctx.internalAdapter.createUser({ email: buyer.email, name: buyer.name, emailVerified: true, role: 'buyer' }, { method: 'admin' });
    ids.set(buyer.email, user.id);
    const since = firstOrderAt.get(buyer.email);
    if (since) {
      await db().query('UPDATE users SET created_at = $1 WHERE id = $2', { bind: [new Date(since.getTime() - 2 * DAY).toISOString(), user.id] });
    }
  }
  return ids;
}

interface WriteContext { cat: Catalogue; users: Map<string, string>; admin: { id: string; email: string } | null; now: Date }

const stamp = (at: Date) => ({ createdAt: at, updatedAt: at });

async function audit(
  t: Transaction, at: Date, actor: WriteContext['admin'], action: AuditAction, subjectType: AuditEntry['subjectType'], subjectId: string | number,
  order: Order, before: Record<string, unknown> | null, after: Record<string, unknown> | null,
): Promise<void> {
  await AuditEvent.create({
    actorId: actor?.id ?? null, actorEmail: actor?.email ?? null, action, subjectType, subjectId: String(subjectId),
    orderId: order.id, userId: order.userId, before, after, createdAt: at,
  }, { transaction: t, silent: true });
}

async function webhookEvent(t: Transaction, id: string, type: string, orderId: number, at: Date): Promise<void> {
  await db().query('INSERT OR IGNORE INTO webhook_events (id, type, order_id, created_at) VALUES ($1, $2, $3, $4)', {
    bind: [id, type, orderId, at.toISOString()],
    transaction: t,
  });
}

async function writeOrder(p: PlannedOrder, ctx: WriteContext, t: Transaction): Promise<void> {
  const { cat, now } = ctx;
  const { downloadDays, downloadLimit } = config();
  const seq = String(p.index + 1).padStart(4, '0');
  const session = `${DEMO_SESSION_PREFIX}${seq}`;
  const subtotal = p.quoted.reduce((n, q) => n + q.subtotal, 0);
  const total = subtotal + p.shipping;
  const hasLicence = p.inputs.some((l) => l.kind === 'licence');
  const hasPrint = p.inputs.some((l) => l.kind === 'print');

  const numbers = seededRandom(DEMO_SALES_SEED ^ Math.imul(p.index + 1, 0x9e3779b1));
  let number = orderNumber(p.createdAt, numbers);
  while (await Order.count({ where: { number }, transaction: t })) number = orderNumber(p.createdAt, numbers);

  const refund = p.refund;
  // A paid order starts as paid; what followed is replayed below.
  const status: OrderStatus = p.outcome === 'expired' ? 'expired' : p.outcome === 'cancelled' ? 'cancelled' : 'paid';
  const lastChange = [p.createdAt, p.paidAt, p.productionAt, p.shippedAt, p.deliveredAt, refund?.settledAt]
    .filter((d): d is Date => d instanceof Date)
    .reduce((a, b) => (b > a ? b : a));
  const order = await Order.create({
    number, userId: ctx.users.get(p.buyer.email) ?? null, email: p.buyer.email, status, currency: cat.currency,
    subtotal, shipping: p.shipping, taxIncluded: vatIncluded(total, cat.vatRateBp), total,
    licenseeName: hasLicence ? p.buyer.licensee.name : null, licenseeOrganisation: hasLicence ? p.buyer.licensee.organisation || null : null,
    intendedUse: p.intendedUse, shippingAddress: hasPrint ? (p.buyer.address as ShippingAddress) : null,
    stripeSessionId: session, stripePaymentIntentId: p.paidAt ? `${DEMO_INTENT_PREFIX}${seq}` : null,
    paidAt: p.paidAt, expiresAt: null, note: p.outcome === 'cancelled' ? 'Payment could not be started.' : null,
    productionAt: p.productionAt, carrier: p.carrier, trackingNumber: p.trackingNumber, shippedAt: p.shippedAt, deliveredAt: p.deliveredAt,
    createdAt: p.createdAt, updatedAt: lastChange,
  }, { transaction: t, silent: true });

  const lines: OrderLine[] = [];
  for (const [i, input] of p.inputs.entries()) {
    const q = p.quoted[i]!;
    if (input.kind === 'licence') {
      const tier = [...cat.tiers.values()].find((x) => x.id === input.tierId)!;
      const terms: LicenceTerms = { tierName: tier.name, use: tier.use, terms: tier.terms, media: tier.media, cap: tier.cap, capUnit: tier.capUnit, territory: tier.territory, termMonths: tier.termMonths };
      lines.push(await OrderLine.create({
        orderId: order.id, kind: 'licence', workId: input.workId, licenceTierId: tier.id, printOfferId: null, editionId: null, mode: null,
        quantity: 1, unitPrice: q.unitPrice, subtotal: q.subtotal, description: q.description, detail: q.detail,
        snapshot: { workTitle: q.workTitle, workSlug: q.workSlug, terms }, ...stamp(p.createdAt),
      }, { transaction: t, silent: true }));
    } else if (input.kind === 'print') {
      const offer = cat.offers.find((o) => o.id === input.offerId)!;
      lines.push(await OrderLine.create({
        orderId: order.id, kind: 'print', workId: offer.workId, licenceTierId: null, printOfferId: offer.id, editionId: offer.editionId, mode: input.mode,
        quantity: input.quantity, unitPrice: q.unitPrice, subtotal: q.subtotal, description: q.description, detail: q.detail,
        snapshot: {
          workTitle: q.workTitle, workSlug: q.workSlug,
          edition: { kind: offer.edition.kind, total: offer.edition.total, artistProofs: offer.edition.artistProofs },
          print: await printSnapshotFor(offer.id, input.mode, t),
        },
        ...stamp(p.createdAt),
      }, { transaction: t, silent: true }));
    }
  }

  if (p.outcome === 'expired') {
    await webhookEvent(t, `${DEMO_EVENT_PREFIX}${seq}_expired`, 'checkout.session.expired', order.id, new Date(p.createdAt.getTime() + 30 * MINUTE));
    return;
  }
  if (p.outcome === 'cancelled' || !p.paidAt) return;
  const paidAt = p.paidAt;
  await webhookEvent(t, `${DEMO_EVENT_PREFIX}${seq}_paid`, 'checkout.session.completed', order.id, paidAt);

  // Limited prints: the lowest free numbers, sold, each with its certificate serial.
  for (const line of lines.filter((l) => l.kind === 'print')) {
    const offer = cat.offers.find((o) => o.id === line.printOfferId)!;
    if (offer.edition.kind !== 'limited') continue;
    const held = await EditionNumber.findAll({ where: { editionId: offer.edition.id }, attributes: ['number'], transaction: t });
    const free = freeEditionNumbers(held.map((n) => n.number), offer.edition.total!, line.quantity);
    if (!free || held.length + line.quantity > Math.floor(offer.edition.total! / 2)) {
      throw new Error(`demo sales: edition ${offer.edition.id} would sell past half of its ${offer.edition.total}`);
    }
    for (const n of free) {
      await EditionNumber.create({
        editionId: offer.edition.id, number: n, orderLineId: line.id, state: 'sold', reservedUntil: null,
        certificateSerial: `SMC-${order.number.slice(3)}-${String(n).padStart(3, '0')}`, ...stamp(paidAt),
      }, { transaction: t, silent: true });
    }
  }

  const licences = new Map<number, Licence>();
  const startsOn = paidAt.toISOString().slice(0, 10);
  const grants = seededRandom(DEMO_SALES_SEED + 3 + p.index);
  for (const line of lines.filter((l) => l.kind === 'licence')) {
    const terms = (line.snapshot as { terms: LicenceTerms }).terms;
    const licence = await Licence.create({
      id: newLicenceId(), orderLineId: line.id, workId: line.workId, userId: order.userId,
      licenseeName: order.licenseeName ?? order.email, licenseeOrganisation: order.licenseeOrganisation, intendedUse: order.intendedUse,
      terms, startsOn, endsOn: terms.termMonths ? licenceEndDate(startsOn, terms.termMonths) : null,
      price: line.unitPrice, currency: order.currency, ...stamp(paidAt),
    }, { transaction: t, silent: true });
    licences.set(line.id, licence);
    const expiresAt = new Date(paidAt.getTime() + downloadDays * DAY);
    const used = Math.min(downloadLimit, Math.floor(grants() * 3));
    await DownloadGrant.create({
      licenceId: licence.id, expiresAt, maxDownloads: downloadLimit, downloads: used,
      createdAt: paidAt, updatedAt: used ? new Date(Math.min(expiresAt.getTime(), paidAt.getTime() + HOUR, now.getTime())) : paidAt,
    }, { transaction: t, silent: true });
  }

  // What followed the payment, in time order: Dispatch's moves and the refund, each with its record.
  // The order's state is the last of them (a print can still ship after part of its order was refunded).
  type Step = { at: Date | null; to?: OrderStatus; extra?: Record<string, unknown> };
  const planned: Step[] = [
    { at: p.productionAt, to: 'in_production' },
    { at: p.shippedAt, to: 'shipped', extra: { carrier: p.carrier, trackingNumber: p.trackingNumber } },
    { at: p.deliveredAt, to: 'delivered' },
    { at: refund?.settledAt ?? null },
  ];
  const steps = planned.filter((s): s is Step & { at: Date } => s.at !== null).sort((a, b) => a.at.getTime() - b.at.getTime());
  let state: OrderStatus = 'paid';
  for (const step of steps) {
    if (step.to) {
      await audit(t, step.at, ctx.admin, 'order.move', 'order', order.number, order, { status: state }, { status: step.to, ...step.extra });
      state = step.to;
    } else if (refund) {
      state = await writeRefund(p, refund, order, lines, licences, ctx, t);
    }
  }
  await order.update({ status: state }, { transaction: t, silent: true });
}

/** Writes a settled refund and what it took back; returns the state the refund left the order in. */
async function writeRefund(p: PlannedOrder, r: PlannedRefund, order: Order, lines: OrderLine[], licences: Map<number, Licence>, ctx: WriteContext, t: Transaction): Promise<OrderStatus> {
  const allocations: RefundAllocation[] = r.wholeLines.map((i) => ({ lineId: lines[i]!.id, amount: lines[i]!.subtotal, whole: true }));
  if (r.partLine) allocations.push({ lineId: lines[r.partLine.index]!.id, amount: r.partLine.amount, whole: false });
  if (r.shipping && order.shipping > 0) allocations.push({ lineId: null, amount: order.shipping, whole: true });
  const amount = allocations.reduce((n, a) => n + a.amount, 0);
  if (amount < 1) return order.status;
  const seq = String(p.index + 1).padStart(4, '0');
  const row = await Refund.create({
    orderId: order.id, idempotencyKey: `${DEMO_REFUND_PREFIX}${seq}-1`, stripeRefundId: `re_demo_seed_${seq}_1`, amount, currency: order.currency,
    reason: r.reason, allocations, status: 'succeeded', failure: null, requestedBy: ctx.admin?.id ?? null, settledAt: r.settledAt,
    createdAt: r.requestedAt, updatedAt: r.settledAt,
  }, { transaction: t, silent: true });
  await audit(t, r.requestedAt, ctx.admin, 'refund.request', 'refund', row.id, order, { refunded: 0 }, {
    amount, currency: order.currency, reason: r.reason, lines: allocations.map((a) => a.lineId ?? 'shipping'),
    settlesAs: amount === order.total ? 'refunded' : 'partly_refunded',
  });
  await webhookEvent(t, `${DEMO_EVENT_PREFIX}${seq}_refund_1`, 'charge.refunded', order.id, r.settledAt);

  for (const a of allocations) {
    if (a.lineId === null) continue;
    const line = lines.find((l) => l.id === a.lineId)!;
    const refunded = Math.min(line.subtotal, a.amount);
    await line.update({ refunded, status: refunded === line.subtotal ? 'refunded' : line.status, updatedAt: r.settledAt }, { transaction: t, silent: true });
    const licence = licences.get(line.id);
    if (licence && refunded === line.subtotal) {
      await licence.update({ status: 'revoked', revokedAt: r.settledAt, revokedReason: `Refunded: ${r.reason}`.slice(0, 250), updatedAt: r.settledAt }, { transaction: t, silent: true });
      await audit(t, r.settledAt, null, 'licence.revoke', 'licence', licence.id, order, { status: 'active' }, { status: 'revoked', refund: row.id });
    }
  }
  const shippingBack = allocations.filter((a) => a.lineId === null).reduce((n, a) => n + a.amount, 0);
  const status: OrderStatus = amount === order.total ? 'refunded' : 'partly_refunded';
  await order.update({ refunded: amount, shippingRefunded: shippingBack, status }, { transaction: t, silent: true });
  await audit(t, r.settledAt, null, 'refund.settle', 'refund', row.id, order, { status: 'pending' }, { status: 'succeeded', amount });
  return status;
}

/** Seeds the demo orders relative to `now`. Exported for the tests; `up` runs it with the clock's time. */
export async function seedDemoSales(now = new Date()): Promise<{ written: number; skipped: number }> {
  const cat = await loadCatalogue();
  const planned = plan(now, cat);
  const orders = await price(planned, cat);
  fulfil(orders, now);
  planRefunds(orders, now);

  const firstOrderAt = new Map<string, Date>();
  for (const o of orders) if (!firstOrderAt.has(o.buyer.email)) firstOrderAt.set(o.buyer.email, o.createdAt);
  const users = await ensureBuyerAccounts(firstOrderAt);
  const adminAccount = DEMO_ACCOUNTS.find((a) => a.role === 'admin')!;
  const admin = await db().query<{ id: string; email: string }>('SELECT id, email FROM users WHERE email = $1', { bind: [adminAccount.email], type: QueryTypes.SELECT });
  const ctx: WriteContext = { cat, users, admin: admin[0] ?? null, now };

  return db().transaction(async (t) => {
    const existing = new Set((await Order.findAll({
      where: { stripeSessionId: { [Op.like]: `${DEMO_SESSION_PREFIX}%` } }, attributes: ['stripeSessionId'], transaction: t,
    })).map((o) => o.stripeSessionId));
    let written = 0;
    for (const order of orders) {
      if (existing.has(`${DEMO_SESSION_PREFIX}${String(order.index + 1).padStart(4, '0')}`)) continue;
      await writeOrder(order, ctx, t);
      written++;
    }
    return { written, skipped: orders.length - written };
  });
}

export const up: Seed = async () => {
  // A shop that already holds any seed order has its season: a later run adds nothing.
  const already = await Order.count({ where: { stripeSessionId: { [Op.like]: `${DEMO_SESSION_PREFIX}%` } } });
  if (already > 0) return;
  await seedDemoSales(new Date());
};

export const down: Seed = async ({ context: qi }) => {
  await qi.sequelize.transaction(async (transaction) => {
    const orders = await Order.findAll({ where: { stripeSessionId: { [Op.like]: `${DEMO_SESSION_PREFIX}%` } }, attributes: ['id'], transaction });
    const ids = orders.map((o) => o.id);
    if (ids.length) {
      const lineIds = (await OrderLine.findAll({ where: { orderId: { [Op.in]: ids } }, attributes: ['id'], transaction })).map((l) => l.id);
      await Refund.destroy({ where: { orderId: { [Op.in]: ids } }, transaction });
      await Licence.destroy({ where: { orderLineId: { [Op.in]: lineIds } }, transaction }); // download grants go with them
      await Order.destroy({ where: { id: { [Op.in]: ids } }, transaction }); // lines and edition numbers go with them
      await qi.sequelize.query(`DELETE FROM webhook_events WHERE id LIKE '${DEMO_EVENT_PREFIX}%'`, { transaction });
    }
    // The audit trail is append-only by design: its rows about the demo orders stay.
    await qi.sequelize.query(`DELETE FROM users WHERE email IN (${DEMO_BUYERS.map(() => '?').join(', ')})`, {
      replacements: DEMO_BUYERS.map((b) => b.email), transaction,
    });
  });
};
