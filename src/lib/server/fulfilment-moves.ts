/** Moves a paid order through production, shipping and delivery, checked against the state machine. */
import { db } from './db';
import { config } from './config';
import { sendMail } from './mail';
import { recordAudit, type AuditActor } from './audit';
import { Order, OrderLine, ShopSettings } from './models';
import { IllegalMoveError, isOrderState, moveOrThrow } from '../order-states';
import { CARRIERS, normaliseTracking, type Carrier } from '../tracking';
import { needsLabPack } from '../lab-pack';
import type { OrderMoveInput } from '../dispatch-move';

export class MoveError extends Error {
  constructor(readonly status: number, readonly code: string, message: string, readonly fields?: Record<string, string>) {
    super(message);
  }
}

export async function moveOrder(number: string, move: OrderMoveInput, actor?: AuditActor): Promise<Order> {
  const moved = await db().transaction(async (transaction) => {
    const order = await Order.findOne({ where: { number }, transaction });
    if (!order) throw new MoveError(404, 'not_found', 'No such order.');
    const from = isOrderState(order.status) ? order.status : null;
    if (!from) throw new MoveError(409, 'illegal_move', `The order is in an unknown state (${order.status}).`);
    try {
      moveOrThrow(from, move.to);
    } catch (error) {
      if (error instanceof IllegalMoveError) throw new MoveError(409, error.code, error.message);
      throw error;
    }
    const prints = await OrderLine.findAll({ where: { orderId: order.id, kind: 'print' }, transaction });
    if (prints.length === 0) throw new MoveError(409, 'nothing_to_ship', 'This order holds only licences; there is nothing to produce or ship.');
    if (prints.every((p) => p.refunded >= p.subtotal)) {
      throw new MoveError(409, 'prints_refunded', 'Every print on this order was refunded; there is nothing left to produce or ship.');
    }
    // After a partial refund the order keeps its place in fulfilment: it can only go on from where it was.
    if (from === 'partly_refunded') {
      const expected = order.shippedAt ? 'delivered' : order.productionAt ? 'shipped' : 'in_production';
      if (move.to !== expected) {
        throw new MoveError(409, 'illegal_move', `This partly refunded order is ${order.shippedAt ? 'shipped' : order.productionAt ? 'in production' : 'paid'}; it can only go on to ${expected.replace('_', ' ')}.`);
      }
    }
    // Production starts from the lab packs: every print still to be made needs its file and job sheet.
    if (move.to === 'in_production') {
      const unprepared = prints.filter(needsLabPack);
      if (unprepared.length) {
        const which = unprepared.map((p) => `“${(p.snapshot as { workTitle?: string }).workTitle ?? p.description}” (line ${p.id})`).join(', ');
        throw new MoveError(409, 'lab_pack_missing', `Prepare the lab pack of every print first; not yet prepared: ${which}.`);
      }
    }
    const before = { status: order.status, carrier: order.carrier, trackingNumber: order.trackingNumber };
    const now = new Date();
    if (move.to === 'in_production') await order.update({ status: 'in_production', productionAt: now }, { transaction });
    if (move.to === 'delivered') await order.update({ status: 'delivered', deliveredAt: now }, { transaction });
    if (move.to === 'shipped') {
      const tracking = normaliseTracking(move.carrier as Carrier, move.trackingNumber);
      if (!tracking) {
        const example = CARRIERS[move.carrier as Carrier].example;
        throw new MoveError(422, 'bad_tracking', `That is not a ${CARRIERS[move.carrier as Carrier].name} tracking number (they look like ${example}).`, { trackingNumber: 'Does not match the carrier’s format.' });
      }
      await order.update({ status: 'shipped', carrier: move.carrier, trackingNumber: tracking, shippedAt: now }, { transaction });
    }
    if (actor) {
      await recordAudit(actor, {
        action: 'order.move', subjectType: 'order', subjectId: order.number, orderId: order.id, userId: order.userId,
        before, after: { status: order.status, carrier: order.carrier, trackingNumber: order.trackingNumber },
      }, transaction);
    }
    return order;
  });
  if (move.to === 'shipped') {
    const shopName = (await ShopSettings.findByPk(1))?.shopName ?? 'Stillmark';
    const carrier = CARRIERS[moved.carrier as Carrier].name;
    try {
      await sendMail({
        to: moved.email,
        orderId: moved.id,
        subject: `${shopName}: your prints are on their way (order ${moved.number})`,
        text: `Your prints for order ${moved.number} have left the studio.\n\nCarrier: ${carrier}\nTracking number: ${moved.trackingNumber}\n\nYour order: ${config().publicOrigin}/account`,
      });
    } catch (error) {
      console.error(`shipping mail for ${moved.number} failed`, error);
    }
  }
  return moved;
}
