/** Dispatch → Orders against a real temporary SQLite database: paging, sorting, filters, search, errors and roles. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { APIContext } from 'astro';
import { db } from '~/lib/server/db';
import { Order, OrderLine } from '~/lib/server/models';
import type { SessionUser } from '~/lib/server/auth-types';
import type { Role } from '~/lib/roles';
import type { DispatchOrderDetail, DispatchOrderList } from '~/lib/dispatch-schemas';
import type { OrderState } from '~/lib/order-states';
import { GET as list } from '~/pages/api/dispatch/orders/index';
import { GET as detail } from '~/pages/api/dispatch/orders/[number]/index';
import { insertSettings, insertWork, useTempDatabase, type TestData } from '../_fixtures';

let data: TestData;
let workId: number;

const admin: SessionUser = { id: 'u-admin', email: 'admin@example.com', name: 'Admin', role: 'admin', emailVerified: true };
const as = (role: Role): SessionUser => ({ ...admin, id: `u-${role}`, email: `${role}@example.com`, role });

function ctx(path: string, user: SessionUser | null, params: Record<string, string> = {}): APIContext {
  const url = new URL(`http://localhost:4321${path}`);
  return { request: new Request(url), url, params, locals: { user, session: null }, clientAddress: '127.0.0.1' } as unknown as APIContext;
}

async function listing(search = '', user: SessionUser | null = admin): Promise<{ status: number; body: DispatchOrderList & { error?: { code: string; message: string; fields?: Record<string, string> } } }> {
  const response = await list(ctx(`/api/dispatch/orders${search ? `?${search}` : ''}`, user));
  return { status: response.status, body: await response.json() };
}
const numbers = async (search: string) => (await listing(search)).body.rows.map((r) => r.number);

interface Made { number: string; email: string; status: OrderState; total: number; createdAt: string; kinds: ('licence' | 'print')[] }

/** Invented test orders; only the relations between them matter. */
const ORDERS: Made[] = [
  { number: 'SM-260101-AAAAAA', email: 'ana@example.com', status: 'paid', total: 12000, createdAt: '2026-01-01T09:00:00.000Z', kinds: ['licence'] },
  { number: 'SM-260102-BBBBBB', email: 'ben@example.com', status: 'shipped', total: 30000, createdAt: '2026-01-02T23:59:59.000Z', kinds: ['print'] },
  { number: 'SM-260103-CCCCCC', email: 'cleo@example.com', status: 'pending_payment', total: 5000, createdAt: '2026-01-03T00:00:00.000Z', kinds: ['licence', 'print'] },
  { number: 'SM-260104-DDDDDD', email: 'ana@example.com', status: 'delivered', total: 45000, createdAt: '2026-01-04T12:00:00.000Z', kinds: ['print', 'print'] },
  { number: 'SM-260105-EEEEEE', email: 'dev_50%@example.com', status: 'refunded', total: 8000, createdAt: '2026-01-05T12:00:00.000Z', kinds: ['licence'] },
];

beforeAll(async () => {
  data = await useTempDatabase();
  await insertSettings();
  workId = (await insertWork('pear', 6000, 4000)).id;
  const now = new Date().toISOString();
  for (const email of new Set(ORDERS.map((o) => o.email))) {
    await db().query('INSERT INTO users (id, name, email, email_verified, role, created_at, updated_at) VALUES ($1, $2, $3, 1, $4, $5, $5)', {
      bind: [`user-${email}`, 'Test buyer', email, 'buyer', now],
    });
  }
  for (const o of ORDERS) {
    const print = o.kinds.includes('print');
    const order = await Order.create({
      number: o.number, userId: `user-${o.email}`, email: o.email, status: o.status, currency: 'GBP',
      subtotal: o.total - (print ? 900 : 0), shipping: print ? 900 : 0, taxIncluded: 0, total: o.total,
      licenseeName: 'Licensee', licenseeOrganisation: null, intendedUse: 'A feature',
      shippingAddress: print ? { name: 'A Collector', line1: '1 Quay Street', line2: '', city: 'Leith', postalCode: 'EH6 6AA', country: 'GB' } : null,
      stripeSessionId: null, stripePaymentIntentId: null, paidAt: o.status === 'pending_payment' ? null : new Date(o.createdAt),
      expiresAt: null, note: o.status === 'refunded' ? 'Refunded at the buyer’s request.' : null,
      createdAt: new Date(o.createdAt),
    });
    for (const kind of o.kinds) {
      await OrderLine.create({
        orderId: order.id, kind, workId, licenceTierId: null, printOfferId: null, editionId: null, mode: kind === 'print' ? 'fill' : null,
        quantity: 1, unitPrice: 1000, subtotal: 1000, description: `pear ${kind}`, detail: '', snapshot: { workTitle: 'pear', workSlug: 'pear' },
      });
    }
  }
  const first = (await Order.findOne({ where: { number: ORDERS[0]!.number } }))!;
  await db().query('INSERT INTO webhook_events (id, type, order_id, created_at) VALUES ($1, $2, $3, $4)', {
    bind: ['evt_test_1', 'checkout.session.completed', first.id, '2026-01-01T09:05:00.000Z'],
  });
});
afterAll(async () => data.cleanup());

describe('GET /api/dispatch/orders', () => {
  it('checks the role first: 401 signed out, 403 buyer and photographer (Dispatch is admin-only), 200 admin', async () => {
    expect((await listing('', null)).status).toBe(401);
    expect((await listing('', as('buyer'))).status).toBe(403);
    expect((await listing('', as('photographer'))).status).toBe(403);
    expect((await listing('', admin)).status).toBe(200);
    // the role check comes before the query check
    expect((await listing('page=0', null)).status).toBe(401);
    expect((await listing('page=0', as('photographer'))).status).toBe(403);
  });

  it('answers newest first by default, with the row shape, kind and line count', async () => {
    const { body } = await listing();
    expect(body).toMatchObject({ total: 5, page: 1, pageSize: 25 });
    expect(body.rows.map((r) => r.number)).toEqual([...ORDERS].reverse().map((o) => o.number));
    expect(body.rows.find((r) => r.number === 'SM-260103-CCCCCC')).toEqual({
      number: 'SM-260103-CCCCCC', createdAt: '2026-01-03T00:00:00.000Z', email: 'cleo@example.com', status: 'pending_payment',
      kind: 'both', total: 5000, currency: 'GBP', lines: 2,
    });
  });

  it('pages on the server', async () => {
    const { body: one } = await listing('pageSize=10&sort=number&dir=asc');
    expect(one.rows).toHaveLength(5);
    // 12 more orders make a second page of 10
    const extra: number[] = [];
    for (let i = 0; i < 12; i++) {
      const o = await Order.create({
        number: `SM-270101-X${String(i).padStart(5, '0')}`, userId: null, email: 'extra@example.com', status: 'cancelled', currency: 'GBP',
        subtotal: 100, shipping: 0, taxIncluded: 0, total: 100, licenseeName: null, licenseeOrganisation: null, intendedUse: null,
        shippingAddress: null, stripeSessionId: null, stripePaymentIntentId: null, paidAt: null, expiresAt: null, note: null,
        createdAt: new Date('2027-01-01T00:00:00.000Z'),
      });
      await OrderLine.create({ orderId: o.id, kind: 'licence', workId, licenceTierId: null, printOfferId: null, editionId: null, mode: null, quantity: 1, unitPrice: 100, subtotal: 100, description: 'x', detail: '', snapshot: {} });
      extra.push(o.id);
    }
    try {
      const page1 = (await listing('pageSize=10&sort=number&dir=asc&page=1')).body;
      const page2 = (await listing('pageSize=10&sort=number&dir=asc&page=2')).body;
      const page3 = (await listing('pageSize=10&sort=number&dir=asc&page=3')).body;
      expect(page1).toMatchObject({ total: 17, page: 1, pageSize: 10 });
      expect(page1.rows).toHaveLength(10);
      expect(page2.rows).toHaveLength(7);
      expect(page3.rows).toHaveLength(0);
      expect(new Set([...page1.rows, ...page2.rows].map((r) => r.number)).size).toBe(17);
      expect(page1.rows[0]!.number).toBe('SM-260101-AAAAAA');
      expect(page2.rows.at(-1)!.number).toBe('SM-270101-X00011');
    } finally {
      await Order.destroy({ where: { id: extra } });
    }
  });

  it('sorts by each column both ways', async () => {
    const byTotal = [...ORDERS].sort((a, b) => a.total - b.total).map((o) => o.number);
    expect(await numbers('sort=total&dir=asc')).toEqual(byTotal);
    expect(await numbers('sort=total&dir=desc')).toEqual([...byTotal].reverse());
    const byNumber = ORDERS.map((o) => o.number).sort();
    expect(await numbers('sort=number&dir=asc')).toEqual(byNumber);
    expect(await numbers('sort=number&dir=desc')).toEqual([...byNumber].reverse());
    expect(await numbers('sort=createdAt&dir=asc')).toEqual(ORDERS.map((o) => o.number));
    // business rule (PRODUCT.md): states sort in lifecycle order pending payment → paid → … → delivered, then the others
    expect(await numbers('sort=status&dir=asc')).toEqual(['SM-260103-CCCCCC', 'SM-260101-AAAAAA', 'SM-260102-BBBBBB', 'SM-260104-DDDDDD', 'SM-260105-EEEEEE']);
    expect(await numbers('sort=status&dir=desc')).toEqual(['SM-260105-EEEEEE', 'SM-260104-DDDDDD', 'SM-260102-BBBBBB', 'SM-260101-AAAAAA', 'SM-260103-CCCCCC']);
  });

  it('filters by state and by kind', async () => {
    expect(await numbers('state=shipped')).toEqual(['SM-260102-BBBBBB']);
    expect(await numbers('state=expired')).toEqual([]);
    expect(await numbers('kind=licence&sort=number&dir=asc')).toEqual(['SM-260101-AAAAAA', 'SM-260105-EEEEEE']);
    expect(await numbers('kind=print&sort=number&dir=asc')).toEqual(['SM-260102-BBBBBB', 'SM-260104-DDDDDD']);
    expect(await numbers('kind=both')).toEqual(['SM-260103-CCCCCC']);
    expect(await numbers('kind=print&state=delivered')).toEqual(['SM-260104-DDDDDD']);
    expect((await listing('kind=licence')).body.total).toBe(2);
  });

  it('filters by date range, taking in the whole of the last day', async () => {
    expect(await numbers('from=2026-01-02&to=2026-01-02')).toEqual(['SM-260102-BBBBBB']); // made at 23:59:59 that day
    expect(await numbers('from=2026-01-03&sort=createdAt&dir=asc')).toEqual(['SM-260103-CCCCCC', 'SM-260104-DDDDDD', 'SM-260105-EEEEEE']);
    expect(await numbers('to=2026-01-02&sort=createdAt&dir=asc')).toEqual(['SM-260101-AAAAAA', 'SM-260102-BBBBBB']);
    expect(await numbers('from=2026-02-01')).toEqual([]);
  });

  it('searches order numbers and e-mail addresses, with % and _ taken literally', async () => {
    expect(await numbers('q=CCCCCC')).toEqual(['SM-260103-CCCCCC']);
    expect(await numbers('q=sm-260104')).toEqual(['SM-260104-DDDDDD']);
    expect(await numbers('q=ana%40example.com&sort=number&dir=asc')).toEqual(['SM-260101-AAAAAA', 'SM-260104-DDDDDD']);
    expect(await numbers('q=%25')).toEqual(['SM-260105-EEEEEE']); // a bare "%" matches only the address that holds one
    expect(await numbers('q=50%25%40')).toEqual(['SM-260105-EEEEEE']);
    expect(await numbers('q=_')).toEqual(['SM-260105-EEEEEE']);
    expect(await numbers('q=nobody')).toEqual([]);
  });

  it('answers 400 naming the field for bad query values', async () => {
    const cases: [string, string][] = [
      ['page=0', 'page'], ['page=x', 'page'], ['pageSize=5', 'pageSize'], ['pageSize=101', 'pageSize'],
      ['sort=email', 'sort'], ['dir=up', 'dir'], ['state=lost', 'state'], ['kind=poster', 'kind'],
      ['from=2026-13-01', 'from'], ['to=01-02-2026', 'to'], ['from=2026-02-30', 'from'],
      ['from=2026-01-05&to=2026-01-04', 'from'], [`q=${'x'.repeat(101)}`, 'q'],
    ];
    for (const [search, field] of cases) {
      const { status, body } = await listing(search);
      expect(status, search).toBe(400);
      expect(body.error!.code, search).toBe('invalid_query');
      expect(Object.keys(body.error!.fields!), search).toContain(field);
      expect(body.error!.message, search).toMatch(new RegExp(`^${field}: `));
    }
  });
});

describe('GET /api/dispatch/orders/[number]', () => {
  const get = async (number: string, user: SessionUser | null = admin) => detail(ctx(`/api/dispatch/orders/${number}`, user, { number }));

  it('checks the role, then answers 404 for an unknown order', async () => {
    expect((await get('SM-260101-AAAAAA', null)).status).toBe(401);
    expect((await get('SM-260101-AAAAAA', as('buyer'))).status).toBe(403);
    expect((await get('SM-260101-AAAAAA', as('photographer'))).status).toBe(403);
    const missing = await get('SM-000000-NOTHER');
    expect(missing.status).toBe(404);
    expect((await missing.json()).error.code).toBe('not_found');
  });

  it('gives the order with its lines, amounts and a timeline with its webhook events', async () => {
    const response = await get('SM-260101-AAAAAA');
    expect(response.status).toBe(200);
    const order = (await response.json()) as DispatchOrderDetail;
    expect(order).toMatchObject({ number: 'SM-260101-AAAAAA', status: 'paid', kind: 'licence', total: 12000, currency: 'GBP', email: 'ana@example.com' });
    // business rule (PRODUCT.md): paid → in production | refunded | partly refunded
    expect(order.nextStates).toEqual(['in_production', 'refunded', 'partly_refunded']);
    expect(order.lines).toHaveLength(1);
    expect(order.timeline.map((t) => [t.kind, t.at])).toEqual([
      ['created', '2026-01-01T09:00:00.000Z'],
      ['paid', '2026-01-01T09:00:00.000Z'],
      ['event', '2026-01-01T09:05:00.000Z'],
    ]);
    expect(order.timeline[2]!.label).toContain('checkout.session.completed');
  });

  it('puts the order’s note on the timeline and keeps the shipping address', async () => {
    const refunded = (await (await get('SM-260105-EEEEEE')).json()) as DispatchOrderDetail;
    expect(refunded.timeline.at(-1)).toMatchObject({ kind: 'note', label: 'Refunded at the buyer’s request.' });
    expect(refunded.nextStates).toEqual([]); // business rule (PRODUCT.md): refunded is final
    const shipped = (await (await get('SM-260102-BBBBBB')).json()) as DispatchOrderDetail;
    expect(shipped.shippingAddress).toMatchObject({ city: 'Leith', country: 'GB' });
  });
});
