/**
 * Studio → Sales, the SQL half: revenue and refunds by month, top works, edition sell-through, items
 * sold per work, and the rows of the CSV exports. Every value reaches SQLite as a bound parameter.
 *
 * Revenue is the VAT-inclusive price of the goods (licence and print lines) of every order the shop
 * took payment for, counted in the UTC month of `paid_at`; shipping is summed apart. Refunds count in
 * the month the payment service settled them. An order refunded automatically before it was ever
 * marked paid (an edition sold out while the buyer paid) has no `paid_at` and is left out of both.
 */
import { QueryTypes } from 'sequelize';
import { db } from './db';
import { getShop } from './catalogue';
import { toCsv } from '../csv';
import { toMajorUnitsText } from '../money';
import {
  addMonths, averageMinor, lastMonths, monthLabel, monthSeries, monthStart, refundRate, sellThrough, totals,
  type MonthPoint, type RefundRow, type RevenueRow, type SalesExportQuery, type SalesPeriod,
} from '../sales';

/** The states of an order the shop was paid for (PRODUCT.md's order states). */
export const PAID_STATES = ['paid', 'in_production', 'shipped', 'delivered', 'partly_refunded', 'refunded'] as const;
/** Paid and not refunded in full: what still counts as sold. */
const KEPT_STATES = ['paid', 'in_production', 'shipped', 'delivered', 'partly_refunded'] as const;

type Bind = Record<string, string | number>;

/** `$p0, $p1, …` for a list, with the values added to `bind` (SQLite has no array parameter). */
function inList(prefix: string, values: readonly string[], bind: Bind): string {
  return values.map((v, i) => {
    bind[`${prefix}${i}`] = v;
    return `$${prefix}${i}`;
  }).join(', ');
}

function select<T extends object>(sql: string, bind: Bind): Promise<T[]> {
  return db().query<T>(sql, { bind, type: QueryTypes.SELECT });
}

const num = (v: unknown) => Number(v ?? 0);

export interface SalesMonth extends MonthPoint { label: string; longLabel: string }

export interface TopWork { workId: number; title: string; slug: string; revenue: number; refunded: number; licences: number; prints: number }

export interface EditionSales {
  editionId: number;
  workTitle: string;
  workSlug: string;
  sizeLabel: string;
  total: number;
  artistProofs: number;
  sold: number;
  /** Numbers held for a checkout that has not been paid yet. */
  reserved: number;
  ratio: number;
}

export interface SalesOverview {
  currency: string;
  period: SalesPeriod;
  generatedAt: string;
  /** The period's months, oldest first, empty months included. */
  months: SalesMonth[];
  headline: {
    thisMonth: number;
    thisMonthOrders: number;
    last12Months: number;
    last12MonthsNet: number;
    periodGross: number;
    periodRefunds: number;
    periodNet: number;
    periodShipping: number;
    periodOrders: number;
    averageOrder: number | null;
    refundRate: number | null;
  };
  topWorks: TopWork[];
  editions: EditionSales[];
  /** Paid orders in another currency than the shop's (left out of every sum). */
  otherCurrencyOrders: number;
}

async function revenueByMonth(currency: string, from: Date, to: Date): Promise<RevenueRow[]> {
  const bind: Bind = { currency, from: from.toISOString(), to: to.toISOString() };
  const rows = await select<Record<string, unknown>>(
    `SELECT strftime('%Y-%m', o.paid_at) AS month,
            COUNT(*) AS orders,
            SUM(o.shipping) AS shipping,
            SUM((SELECT COALESCE(SUM(ol.subtotal), 0) FROM order_lines ol WHERE ol.order_id = o.id AND ol.kind = 'licence')) AS licences,
            SUM((SELECT COALESCE(SUM(ol.subtotal), 0) FROM order_lines ol WHERE ol.order_id = o.id AND ol.kind = 'print')) AS prints
       FROM orders o
      WHERE o.paid_at IS NOT NULL AND o.status IN (${inList('s', PAID_STATES, bind)}) AND o.currency = $currency
        AND datetime(o.paid_at) >= datetime($from) AND datetime(o.paid_at) < datetime($to)
      GROUP BY month`,
    bind,
  );
  return rows.map((r) => ({ month: String(r.month), orders: num(r.orders), shipping: num(r.shipping), licences: num(r.licences), prints: num(r.prints) }));
}

async function refundsByMonth(currency: string, from: Date, to: Date): Promise<RefundRow[]> {
  const bind: Bind = { currency, from: from.toISOString(), to: to.toISOString() };
  // Each refund's allocations say which line (or shipping, lineId null) its money came from.
  const allocated = (where: string) =>
    `(SELECT COALESCE(SUM(json_extract(a.value, '$.amount')), 0) FROM json_each(r.allocations) a ${where})`;
  const rows = await select<Record<string, unknown>>(
    `SELECT strftime('%Y-%m', r.settled_at) AS month,
            SUM(r.amount) AS amount,
            SUM(${allocated("JOIN order_lines ol ON ol.id = json_extract(a.value, '$.lineId') WHERE ol.kind = 'licence'")}) AS licences,
            SUM(${allocated("JOIN order_lines ol ON ol.id = json_extract(a.value, '$.lineId') WHERE ol.kind = 'print'")}) AS prints,
            SUM(${allocated("WHERE json_extract(a.value, '$.lineId') IS NULL")}) AS shipping
       FROM refunds r JOIN orders o ON o.id = r.order_id
      WHERE r.status = 'succeeded' AND r.settled_at IS NOT NULL AND o.paid_at IS NOT NULL AND r.currency = $currency
        AND datetime(r.settled_at) >= datetime($from) AND datetime(r.settled_at) < datetime($to)
      GROUP BY month`,
    bind,
  );
  return rows.map((r) => ({ month: String(r.month), amount: num(r.amount), licences: num(r.licences), prints: num(r.prints), shipping: num(r.shipping) }));
}

async function topWorks(currency: string, from: Date, to: Date, limit: number): Promise<TopWork[]> {
  const bind: Bind = { currency, from: from.toISOString(), to: to.toISOString(), limit };
  const rows = await select<Record<string, unknown>>(
    `SELECT w.id AS workId, w.title AS title, w.slug AS slug,
            SUM(ol.subtotal) AS revenue, SUM(ol.refunded) AS refunded,
            SUM(CASE WHEN ol.kind = 'licence' THEN ol.quantity ELSE 0 END) AS licences,
            SUM(CASE WHEN ol.kind = 'print' THEN ol.quantity ELSE 0 END) AS prints
       FROM order_lines ol
       JOIN orders o ON o.id = ol.order_id
       JOIN works w ON w.id = ol.work_id
      WHERE o.paid_at IS NOT NULL AND o.status IN (${inList('s', PAID_STATES, bind)}) AND o.currency = $currency
        AND datetime(o.paid_at) >= datetime($from) AND datetime(o.paid_at) < datetime($to)
      GROUP BY w.id
      ORDER BY revenue DESC, w.title ASC
      LIMIT $limit`,
    bind,
  );
  return rows.map((r) => ({
    workId: num(r.workId), title: String(r.title), slug: String(r.slug),
    revenue: num(r.revenue), refunded: num(r.refunded), licences: num(r.licences), prints: num(r.prints),
  }));
}

/** Every limited edition of a published work, with its numbers sold and held (all time). */
export async function editionSales(now = new Date()): Promise<EditionSales[]> {
  const rows = await select<Record<string, unknown>>(
    `SELECT e.id AS editionId, w.title AS workTitle, w.slug AS workSlug, ps.label AS sizeLabel, ps.position AS sizePosition,
            e.total AS total, e.artist_proofs AS artistProofs,
            (SELECT COUNT(*) FROM edition_numbers n WHERE n.edition_id = e.id AND n.state = 'sold') AS sold,
            (SELECT COUNT(*) FROM edition_numbers n WHERE n.edition_id = e.id AND n.state = 'reserved'
                AND datetime(n.reserved_until) > datetime($now)) AS reserved
       FROM editions e
       JOIN works w ON w.id = e.work_id
       JOIN print_sizes ps ON ps.id = e.print_size_id
      WHERE e.kind = 'limited' AND e.total IS NOT NULL AND w.status = 'published'`,
    { now: now.toISOString() },
  );
  return rows
    .map((r) => {
      const s = sellThrough(num(r.sold), num(r.total));
      return {
        editionId: num(r.editionId), workTitle: String(r.workTitle), workSlug: String(r.workSlug), sizeLabel: String(r.sizeLabel),
        total: s.total, artistProofs: num(r.artistProofs), sold: s.sold, reserved: num(r.reserved), ratio: s.ratio,
        position: num(r.sizePosition),
      };
    })
    .sort((a, b) => b.ratio - a.ratio || b.sold - a.sold || a.workTitle.localeCompare(b.workTitle, 'en') || a.position - b.position)
    .map(({ position: _position, ...rest }) => rest);
}

/** The whole Sales page for a period of `period` months ending with the month of `now`. */
export async function salesOverview(period: SalesPeriod, now = new Date()): Promise<SalesOverview> {
  const { currency } = await getShop();
  // Twelve months are always read: the headline's "last 12 months" does not depend on the period.
  const span = Math.max(12, period);
  const keys = lastMonths(now, span);
  const from = monthStart(keys[0]!);
  const to = monthStart(addMonths(keys.at(-1)!, 1));
  const periodKeys = keys.slice(-period);
  const periodFrom = monthStart(periodKeys[0]!);

  const bind: Bind = { currency };
  const [revenue, refunds, top, editions, other] = await Promise.all([
    revenueByMonth(currency, from, to),
    refundsByMonth(currency, from, to),
    topWorks(currency, periodFrom, to, 10),
    editionSales(now),
    select<{ n: number }>(
      `SELECT COUNT(*) AS n FROM orders WHERE paid_at IS NOT NULL AND currency <> $currency AND status IN (${inList('s', PAID_STATES, bind)})`,
      bind,
    ),
  ]);

  const all = monthSeries(keys, revenue, refunds);
  const inPeriod = all.slice(-period);
  const year = totals(all.slice(-12));
  const p = totals(inPeriod);
  const current = all.at(-1)!;
  return {
    currency,
    period,
    generatedAt: now.toISOString(),
    months: inPeriod.map((m) => ({ ...m, label: monthLabel(m.month, 'axis'), longLabel: monthLabel(m.month, 'long') })),
    headline: {
      thisMonth: current.gross,
      thisMonthOrders: current.orders,
      last12Months: year.gross,
      last12MonthsNet: year.net,
      periodGross: p.gross,
      periodRefunds: p.refunds,
      periodNet: p.net,
      periodShipping: p.shipping,
      periodOrders: p.orders,
      averageOrder: averageMinor(p.gross, p.orders),
      refundRate: refundRate(p.gross, p.refunds),
    },
    topWorks: top,
    editions,
    otherCurrencyOrders: num(other[0]?.n),
  };
}

/**
 * Items sold per work id: licences and prints (by quantity) on orders that were paid and not refunded
 * in full, leaving out lines refunded in full.
 */
export async function itemsSoldByWork(): Promise<Map<number, number>> {
  const bind: Bind = {};
  const rows = await select<{ workId: number; n: number }>(
    `SELECT ol.work_id AS workId, SUM(ol.quantity) AS n
       FROM order_lines ol JOIN orders o ON o.id = ol.order_id
      WHERE o.paid_at IS NOT NULL AND o.status IN (${inList('s', KEPT_STATES, bind)}) AND ol.refunded < ol.subtotal
      GROUP BY ol.work_id`,
    bind,
  );
  return new Map(rows.map((r) => [num(r.workId), num(r.n)]));
}

// ---------------------------------------------------------------------------------------------
// CSV exports

/** UTC days of the export query as SQL bounds: `from` at 00:00, the day after `to` at 00:00. */
function dayRange(query: SalesExportQuery, column: string, bind: Bind): string {
  const where: string[] = [];
  if (query.from) {
    bind.fromDay = query.from;
    where.push(`datetime(${column}) >= datetime($fromDay)`);
  }
  if (query.to) {
    bind.toDay = query.to;
    where.push(`datetime(${column}) < datetime($toDay, '+1 day')`);
  }
  return where.length ? `WHERE ${where.join(' AND ')}` : '';
}

const ISO = (column: string) => `strftime('%Y-%m-%dT%H:%M:%SZ', ${column})`;

export interface OrderExportRow {
  number: string;
  createdAt: string;
  paidAt: string | null;
  shippedAt: string | null;
  deliveredAt: string | null;
  status: string;
  email: string;
  kind: 'licence' | 'print' | 'both' | 'none';
  lineCount: number;
  items: string;
  subtotal: number;
  shipping: number;
  taxIncluded: number;
  total: number;
  refunded: number;
  currency: string;
  paymentReference: string | null;
}

/** Every order created in the range (all states), oldest first, with its lines summed up. */
export async function ordersForExport(query: SalesExportQuery): Promise<OrderExportRow[]> {
  const bind: Bind = {};
  const orders = await select<Record<string, unknown>>(
    `SELECT o.id AS id, o.number AS number, ${ISO('o.created_at')} AS createdAt, ${ISO('o.paid_at')} AS paidAt,
            ${ISO('o.shipped_at')} AS shippedAt, ${ISO('o.delivered_at')} AS deliveredAt, o.status AS status, o.email AS email,
            o.subtotal AS subtotal, o.shipping AS shipping, o.tax_included AS taxIncluded, o.total AS total, o.refunded AS refunded,
            o.currency AS currency, COALESCE(o.stripe_payment_intent_id, o.stripe_session_id) AS paymentReference
       FROM orders o ${dayRange(query, 'o.created_at', bind)}
      ORDER BY datetime(o.created_at) ASC, o.id ASC`,
    bind,
  );
  const lineBind: Bind = {};
  const lines = orders.length
    ? await select<Record<string, unknown>>(
        `SELECT ol.order_id AS orderId, ol.kind AS kind, ol.quantity AS quantity, ol.description AS description,
                json_extract(ol.snapshot, '$.workTitle') AS workTitle
           FROM order_lines ol JOIN orders o ON o.id = ol.order_id ${dayRange(query, 'o.created_at', lineBind)}
          ORDER BY ol.order_id, ol.id`,
        lineBind,
      )
    : [];
  const byOrder = new Map<number, Record<string, unknown>[]>();
  for (const line of lines) {
    const id = num(line.orderId);
    byOrder.set(id, [...(byOrder.get(id) ?? []), line]);
  }
  return orders.map((o) => {
    const own = byOrder.get(num(o.id)) ?? [];
    const licence = own.some((l) => l.kind === 'licence');
    const print = own.some((l) => l.kind === 'print');
    return {
      number: String(o.number),
      createdAt: String(o.createdAt),
      paidAt: (o.paidAt as string | null) ?? null,
      shippedAt: (o.shippedAt as string | null) ?? null,
      deliveredAt: (o.deliveredAt as string | null) ?? null,
      status: String(o.status),
      email: String(o.email),
      kind: licence && print ? 'both' : licence ? 'licence' : print ? 'print' : 'none',
      lineCount: own.length,
      items: own.map((l) => `${num(l.quantity)} × ${l.workTitle ? `${String(l.workTitle)} — ` : ''}${String(l.description)}`).join('; '),
      subtotal: num(o.subtotal),
      shipping: num(o.shipping),
      taxIncluded: num(o.taxIncluded),
      total: num(o.total),
      refunded: num(o.refunded),
      currency: String(o.currency),
      paymentReference: (o.paymentReference as string | null) ?? null,
    };
  });
}

export interface LicenceExportRow {
  id: string;
  status: string;
  revokedAt: string | null;
  revokedReason: string | null;
  workId: number;
  workTitle: string;
  tierName: string;
  licenseeName: string;
  licenseeOrganisation: string | null;
  licenseeEmail: string;
  use: string;
  media: string;
  cap: number | null;
  capUnit: string | null;
  territory: string;
  startsOn: string;
  endsOn: string | null;
  exclusivity: string;
  price: number;
  currency: string;
  orderNumber: string;
  paymentReference: string | null;
  issuedAt: string;
  intendedUse: string | null;
}

/** Every licence issued in the range (active and revoked), oldest first: the rights register. */
export async function licencesForExport(query: SalesExportQuery): Promise<LicenceExportRow[]> {
  const bind: Bind = {};
  const rows = await select<Record<string, unknown>>(
    `SELECT l.id AS id, l.status AS status, ${ISO('l.revoked_at')} AS revokedAt, l.revoked_reason AS revokedReason,
            l.work_id AS workId, w.title AS workTitle, l.licensee_name AS licenseeName, l.licensee_organisation AS licenseeOrganisation,
            o.email AS licenseeEmail, l.terms AS terms, l.starts_on AS startsOn, l.ends_on AS endsOn, l.price AS price, l.currency AS currency,
            o.number AS orderNumber, COALESCE(o.stripe_payment_intent_id, o.stripe_session_id) AS paymentReference,
            ${ISO('l.created_at')} AS issuedAt, l.intended_use AS intendedUse
       FROM licences l
       JOIN order_lines ol ON ol.id = l.order_line_id
       JOIN orders o ON o.id = ol.order_id
       JOIN works w ON w.id = l.work_id
       ${dayRange(query, 'l.created_at', bind)}
      ORDER BY datetime(l.created_at) ASC, l.id ASC`,
    bind,
  );
  return rows.map((r) => {
    const terms = (typeof r.terms === 'string' ? JSON.parse(r.terms) : r.terms ?? {}) as {
      tierName?: string; use?: string; media?: string; cap?: number | null; capUnit?: string | null; territory?: string; exclusivity?: string;
    };
    return {
      id: String(r.id),
      status: String(r.status),
      revokedAt: (r.revokedAt as string | null) ?? null,
      revokedReason: (r.revokedReason as string | null) ?? null,
      workId: num(r.workId),
      workTitle: String(r.workTitle),
      tierName: terms.tierName ?? '',
      licenseeName: String(r.licenseeName),
      licenseeOrganisation: (r.licenseeOrganisation as string | null) ?? null,
      licenseeEmail: String(r.licenseeEmail),
      use: terms.use ?? '',
      media: terms.media ?? '',
      cap: terms.cap ?? null,
      capUnit: terms.capUnit ?? null,
      territory: terms.territory ?? '',
      startsOn: String(r.startsOn),
      endsOn: (r.endsOn as string | null) ?? null,
      exclusivity: terms.exclusivity ?? 'none',
      price: num(r.price),
      currency: String(r.currency),
      orderNumber: String(r.orderNumber),
      paymentReference: (r.paymentReference as string | null) ?? null,
      issuedAt: String(r.issuedAt),
      intendedUse: (r.intendedUse as string | null) ?? null,
    };
  });
}

/** The export's file name: what it holds and the days it covers, or the day it was made. */
export function exportFileName(what: 'orders' | 'licences', query: SalesExportQuery, now = new Date()): string {
  const today = now.toISOString().slice(0, 10);
  const days = query.from || query.to ? `${query.from ?? 'start'}_to_${query.to ?? today}` : today;
  return `stillmark-${what}-${days}.csv`;
}

const money = (amount: number, currency: string) => toMajorUnitsText(amount, currency);

export const ORDER_CSV_HEADER = [
  'order_number', 'created_at', 'paid_at', 'shipped_at', 'delivered_at', 'state', 'buyer_email', 'kind', 'lines', 'items',
  'subtotal', 'shipping', 'vat_included', 'total', 'refunded', 'currency', 'payment_reference',
] as const;

/** Orders as CSV: money in major units as plain decimals beside its currency, times in ISO 8601 UTC. */
export async function ordersCsv(query: SalesExportQuery): Promise<string> {
  const rows = await ordersForExport(query);
  return toCsv(ORDER_CSV_HEADER, rows.map((o) => [
    o.number, o.createdAt, o.paidAt, o.shippedAt, o.deliveredAt, o.status, o.email, o.kind, o.lineCount, o.items,
    money(o.subtotal, o.currency), money(o.shipping, o.currency), money(o.taxIncluded, o.currency), money(o.total, o.currency),
    money(o.refunded, o.currency), o.currency, o.paymentReference,
  ]));
}

/** The rights register's columns (TRADE-FACTS §7.2): who may use which work, how, where, when, for what price. */
export const LICENCE_CSV_HEADER = [
  'licence_id', 'status', 'revoked_at', 'revoked_reason', 'work_id', 'work_title', 'licence', 'licensee_name', 'licensee_organisation',
  'licensee_email', 'use', 'media', 'cap', 'cap_unit', 'territory', 'term_start', 'term_end', 'exclusivity', 'price', 'currency',
  'order_number', 'payment_reference', 'issued_at', 'intended_use',
] as const;

export async function licencesCsv(query: SalesExportQuery): Promise<string> {
  const rows = await licencesForExport(query);
  return toCsv(LICENCE_CSV_HEADER, rows.map((l) => [
    l.id, l.status, l.revokedAt, l.revokedReason, l.workId, l.workTitle, l.tierName, l.licenseeName, l.licenseeOrganisation,
    l.licenseeEmail, l.use, l.media, l.cap, l.capUnit, l.territory, l.startsOn,
    // TRADE-FACTS §7.2: a term has an end date or is perpetual.
    l.endsOn ?? 'perpetual', l.exclusivity, money(l.price, l.currency), l.currency,
    l.orderNumber, l.paymentReference, l.issuedAt, l.intendedUse,
  ]));
}
