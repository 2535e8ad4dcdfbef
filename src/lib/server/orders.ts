/** The buyer's view of their orders: only ever their own (another person's order reads as not found). */
import { Op } from 'sequelize';
import { EditionNumber, Licence, Order, OrderLine } from './models';
import type { Licence as LicenceRow } from './models/Licence';
import type { OrderView } from '../order-types';
import { CARRIERS, type Carrier } from '../tracking';

export type { OrderView };


function licenceView(l: LicenceRow | undefined) {
  return l ? { id: l.id, status: l.status, startsOn: l.startsOn, endsOn: l.endsOn } : null;
}

export async function orderForUser(userId: string, number: string): Promise<OrderView | null> {
  const order = await Order.findOne({ where: { number, userId } });
  return order ? viewOf(order) : null;
}

export async function ordersForUser(userId: string): Promise<OrderView[]> {
  const orders = await Order.findAll({ where: { userId, status: { [Op.ne]: 'cancelled' } }, order: [['createdAt', 'DESC']], limit: 100 });
  return Promise.all(orders.map(viewOf));
}

async function viewOf(order: Order): Promise<OrderView> {
  const lines = await OrderLine.findAll({ where: { orderId: order.id }, order: [['id', 'ASC']] });
  const ids = lines.map((l) => l.id);
  const [numbers, licences] = await Promise.all([
    EditionNumber.findAll({ where: { orderLineId: ids, state: 'sold' }, order: [['number', 'ASC']] }),
    Licence.findAll({ where: { orderLineId: ids } }),
  ]);
  return {
    number: order.number,
    status: order.status,
    currency: order.currency,
    subtotal: order.subtotal,
    shipping: order.shipping,
    taxIncluded: order.taxIncluded,
    total: order.total,
    createdAt: order.createdAt.toISOString(),
    paidAt: order.paidAt ? order.paidAt.toISOString() : null,
    note: order.note,
    tracking: order.carrier && order.trackingNumber ? { carrier: CARRIERS[order.carrier as Carrier]?.name ?? order.carrier, number: order.trackingNumber } : null,
    lines: lines.map((l) => {
      const snap = l.snapshot as { workTitle: string; workSlug: string; edition?: { total: number | null } | null };
      return {
        kind: l.kind,
        workTitle: snap.workTitle,
        workSlug: snap.workSlug,
        description: l.description,
        detail: l.detail,
        quantity: l.quantity,
        subtotal: l.subtotal,
        editionNumbers: numbers.filter((n) => n.orderLineId === l.id).map((n) => ({ label: `${n.number}/${snap.edition?.total ?? '?'}`, serial: n.certificateSerial })),
        licence: licenceView(licences.find((x) => x.orderLineId === l.id)),
      };
    }),
  };
}
