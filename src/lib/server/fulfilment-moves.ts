/** Moves a paid order through production, shipping and delivery, checked against the state machine. */
import { db } from './db';
import { config } from './config';
import { sendMail } from './mail';
import { Order, OrderLine, ShopSettings } from './models';
import { IllegalMoveError, isOrderState, moveOrThrow } from '../order-states';
import { CARRIERS, normaliseTracking, type Carrier } from '../tracking';
import type { OrderMoveInput } from '../dispatch-move';

export class MoveError extends Error {
  constructor(readonly status: number, readonly code: string, message: string, readonly fields?: Record<string, string>) {
    super(message);
  }
}

export async function moveOrder(number: string, move: OrderMoveInput): Promise<Order> {
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
    const prints = await OrderLine.count({ where: { orderId: order.id, kind: 'print' }, transaction });
    if (prints === 0) throw new MoveError(409, 'nothing_to_ship', 'This order holds only licences; there is nothing to produce or ship.');
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
    return order;
  });
  if (move.to === 'shipped') {
    const shopName = (await ShopSettings.findByPk(1))?.shopName ?? 'Stillmark';
    const carrier = CARRIERS[moved.carrier as Carrier].name;
    try {
      await sendMail({
        to: moved.email,
        subject: `${shopName}: your prints are on their way (order ${moved.number})`,
        text: `Your prints for order ${moved.number} have left the studio.\n\nCarrier: ${carrier}\nTracking number: ${moved.trackingNumber}\n\nYour order: ${config().publicOrigin}/account`,
      });
    } catch (error) {
      console.error(`shipping mail for ${moved.number} failed`, error);
    }
  }
  return moved;
}
