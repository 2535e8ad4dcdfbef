/** Dispatch → Orders: every order, paged, sorted and filtered in SQL; and one order in full with its timeline. */
import { Op, QueryTypes, literal, type Order as SequelizeOrder, type WhereOptions } from 'sequelize';
import { db } from './db';
import { EditionNumber, Licence, Order, OrderLine, Refund } from './models';
import { auditForOrder } from './audit';
import { refundsForOrder } from './refunds';
import { labPackView } from './lab-pack';
import { labRefusal } from '../lab-pack';
import { formatMoney } from '../money';
import { isOrderState, nextStates, orderKind, ORDER_STATES, type OrderState } from '../order-states';
import type { DispatchOrderDetail, DispatchOrderList, DispatchOrdersQuery, TimelineEntry } from '../dispatch-schemas';

/** Escapes LIKE's wildcards so a search for `50%` finds the text "50%", not everything starting with "50". */
export function likePattern(text: string): string {
  return `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}

const LINE_OF_KIND = (kind: 'licence' | 'print') =>
  `EXISTS (SELECT 1 FROM order_lines ol WHERE ol.order_id = \`Order\`.\`id\` AND ol.kind = '${kind}')`;

const KIND_WHERE = {
  licence: `${LINE_OF_KIND('licence')} AND NOT ${LINE_OF_KIND('print')}`,
  print: `${LINE_OF_KIND('print')} AND NOT ${LINE_OF_KIND('licence')}`,
  both: `${LINE_OF_KIND('licence')} AND ${LINE_OF_KIND('print')}`,
} as const;

/** States sort in the order an order lives through them, not alphabetically. */
const STATE_RANK = `CASE \`Order\`.\`status\` ${ORDER_STATES.map((s, i) => `WHEN '${s}' THEN ${i}`).join(' ')} END`;

const DAY_MS = 86_400_000;

export async function listOrders(query: DispatchOrdersQuery): Promise<DispatchOrderList> {
  const and: WhereOptions[] = [];
  if (query.state) and.push({ status: query.state });
  if (query.kind) and.push(literal(KIND_WHERE[query.kind]));
  // Days are UTC days; `to` takes in the whole of its day.
  if (query.from) and.push({ createdAt: { [Op.gte]: new Date(`${query.from}T00:00:00.000Z`) } });
  if (query.to) and.push({ createdAt: { [Op.lt]: new Date(new Date(`${query.to}T00:00:00.000Z`).getTime() + DAY_MS) } });
  if (query.q) {
    const pattern = db().escape(likePattern(query.q));
    and.push(literal(`(\`Order\`.\`number\` LIKE ${pattern} ESCAPE '\\' OR \`Order\`.\`email\` LIKE ${pattern} ESCAPE '\\')`));
  }
  const dir = query.dir === 'asc' ? 'ASC' : 'DESC';
  const order: SequelizeOrder =
    query.sort === 'status' ? [[literal(STATE_RANK), dir], ['id', dir]] : [[query.sort, dir], ['id', dir]];

  const { rows, count } = await Order.findAndCountAll({
    where: { [Op.and]: and },
    order,
    limit: query.pageSize,
    offset: (query.page - 1) * query.pageSize,
  });
  const lines = rows.length
    ? await OrderLine.findAll({ where: { orderId: rows.map((r) => r.id) }, attributes: ['orderId', 'kind'] })
    : [];
  return {
    rows: rows.map((o) => {
      const own = lines.filter((l) => l.orderId === o.id);
      return {
        number: o.number,
        createdAt: o.createdAt.toISOString(),
        email: o.email,
        status: o.status,
        kind: orderKind(own),
        total: o.total,
        currency: o.currency,
        lines: own.length,
      };
    }),
    total: count,
    page: query.page,
    pageSize: query.pageSize,
  };
}

/** A human label for a payment-service event type, so the timeline reads as sentences. */
function eventLabel(type: string): string {
  const known: Record<string, string> = {
    'checkout.session.completed': 'Payment confirmed by the payment service',
    'checkout.session.expired': 'Payment window closed without payment',
    'payment_intent.payment_failed': 'A payment attempt failed',
    'charge.refunded': 'Refund recorded by the payment service',
  };
  return known[type] ? `${known[type]} (${type})` : `Payment service event: ${type}`;
}

export async function orderDetail(number: string): Promise<DispatchOrderDetail | null> {
  if (number.length > 64) return null;
  const order = await Order.findOne({ where: { number } });
  if (!order) return null;
  const lines = await OrderLine.findAll({ where: { orderId: order.id }, order: [['id', 'ASC']] });
  const ids = lines.map((l) => l.id);
  const [numbers, licences, events, pendingRefunds, mails, audit] = await Promise.all([
    ids.length ? EditionNumber.findAll({ where: { orderLineId: ids }, order: [['number', 'ASC']] }) : [],
    ids.length ? Licence.findAll({ where: { orderLineId: ids } }) : [],
    db().query<{ id: string; type: string; created_at: string }>(
      'SELECT id, type, created_at FROM webhook_events WHERE order_id = $1 ORDER BY created_at ASC, id ASC',
      { bind: [order.id], type: QueryTypes.SELECT },
    ),
    Refund.findAll({ where: { orderId: order.id, status: 'pending' } }),
    db().query<{ recipient: string; subject: string; state: string; error: string | null; created_at: string }>(
      'SELECT recipient, subject, state, error, created_at FROM order_mails WHERE order_id = $1 ORDER BY created_at ASC, id ASC',
      { bind: [order.id], type: QueryTypes.SELECT },
    ),
    auditForOrder(order.id),
  ]);
  const pendingOn = (lineId: number | null) =>
    pendingRefunds.flatMap((r) => r.allocations).filter((a) => a.lineId === lineId).reduce((sum, a) => sum + a.amount, 0);
  const lineLabel = (id: number) => {
    const line = lines.find((l) => l.id === id);
    return line ? `${(line.snapshot as { workTitle?: string }).workTitle ?? line.description} — ${line.description}` : `line ${id}`;
  };

  const timeline: TimelineEntry[] = [{ at: order.createdAt.toISOString(), kind: 'created', label: 'Order placed' }];
  // The payment service stamps whole seconds, so "paid" can read a moment before "placed"; it never comes first.
  if (order.paidAt) timeline.push({ at: new Date(Math.max(order.paidAt.getTime(), order.createdAt.getTime())).toISOString(), kind: 'paid', label: 'Paid' });
  for (const e of events) timeline.push({ at: new Date(e.created_at).toISOString(), kind: 'event', label: eventLabel(e.type) });
  if (order.productionAt) timeline.push({ at: order.productionAt.toISOString(), kind: 'fulfilment', label: 'In production' });
  if (order.shippedAt) timeline.push({ at: order.shippedAt.toISOString(), kind: 'fulfilment', label: `Shipped${order.trackingNumber ? `, tracking ${order.trackingNumber}` : ''}` });
  if (order.deliveredAt) timeline.push({ at: order.deliveredAt.toISOString(), kind: 'fulfilment', label: 'Delivered' });
  const refunds = await refundsForOrder(order.id, lineLabel);
  for (const r of refunds) {
    timeline.push({ at: r.createdAt, kind: 'refund', label: `Refund of ${formatMoney(r.amount, r.currency)} requested${r.requestedBy ? ` by ${r.requestedBy}` : ''}: ${r.reason}` });
    if (r.settledAt) timeline.push({ at: r.settledAt, kind: 'refund', label: `Refund of ${formatMoney(r.amount, r.currency)} settled` });
    if (r.status === 'failed') timeline.push({ at: r.createdAt, kind: 'refund', label: `Refund of ${formatMoney(r.amount, r.currency)} refused: ${r.failure ?? 'no reason given'}` });
  }
  for (const m of mails) timeline.push({ at: new Date(m.created_at).toISOString(), kind: 'mail', label: `${m.state === 'queued' ? 'Mail queued for another try' : m.error ? 'Mail failed' : 'Mailed'}: ${m.subject}` });
  // Stable for equal times: placed before paid before what followed.
  timeline.sort((a, b) => a.at.localeCompare(b.at));
  // The note has no time of its own; the order's last change is the best we know.
  if (order.note) timeline.push({ at: order.updatedAt.toISOString(), kind: 'note', label: order.note });

  const status: OrderState = isOrderState(order.status) ? order.status : 'pending_payment';
  return {
    number: order.number,
    status,
    nextStates: [...nextStates(status)],
    kind: orderKind(lines),
    email: order.email,
    currency: order.currency,
    subtotal: order.subtotal,
    shipping: order.shipping,
    taxIncluded: order.taxIncluded,
    total: order.total,
    refunded: order.refunded,
    shippingRefunded: order.shippingRefunded,
    refundable: {
      order: order.total - order.refunded - pendingRefunds.reduce((sum, r) => sum + r.amount, 0),
      shipping: order.shipping - order.shippingRefunded - pendingOn(null),
    },
    createdAt: order.createdAt.toISOString(),
    paidAt: order.paidAt ? order.paidAt.toISOString() : null,
    shippedAt: order.shippedAt ? order.shippedAt.toISOString() : null,
    note: order.note,
    licensee: { name: order.licenseeName, organisation: order.licenseeOrganisation, intendedUse: order.intendedUse },
    shippingAddress: order.shippingAddress,
    lines: lines.map((l) => {
      const snap = l.snapshot as { workTitle?: string; workSlug?: string; edition?: { total: number | null } | null };
      const licence = licences.find((x) => x.orderLineId === l.id);
      return {
        id: l.id,
        kind: l.kind,
        workTitle: snap.workTitle ?? l.description,
        workSlug: snap.workSlug ?? '',
        description: l.description,
        detail: l.detail,
        quantity: l.quantity,
        unitPrice: l.unitPrice,
        subtotal: l.subtotal,
        editionNumbers: numbers
          .filter((n) => n.orderLineId === l.id)
          .map((n) => ({ label: `${n.number}/${snap.edition?.total ?? '?'}`, state: n.state, certificateSerial: n.certificateSerial })),
        licence: licence ? { id: licence.id, status: licence.status, startsOn: licence.startsOn, endsOn: licence.endsOn, revokedReason: licence.revokedReason } : null,
        refunded: l.refunded,
        refundable: l.subtotal - l.refunded - pendingOn(l.id),
        lab: l.kind === 'print' ? { pack: labPackView(order.number, l.id, l.labPack ?? null), refusal: labRefusal(order.status, l)?.message ?? null } : null,
      };
    }),
    timeline,
    fulfilmentSteps: fulfilmentSteps(status, order, lines),
    refunds,
    mails: mails.map((m) => ({ at: new Date(m.created_at).toISOString(), to: m.recipient, subject: m.subject, error: m.error })),
    audit,
  };
}

/** Where a print order can go next in fulfilment; after a partial refund it goes on from where it was. */
function fulfilmentSteps(status: OrderState, order: Order, lines: OrderLine[]): DispatchOrderDetail['fulfilmentSteps'] {
  const livePrints = lines.filter((l) => l.kind === 'print' && l.refunded < l.subtotal);
  if (livePrints.length === 0) return [];
  const at = status === 'partly_refunded'
    ? (order.shippedAt ? 'shipped' : order.productionAt ? 'in_production' : 'paid')
    : status;
  const next = { paid: 'in_production', in_production: 'shipped', shipped: 'delivered' } as const;
  return at in next ? [next[at as keyof typeof next]] : [];
}
