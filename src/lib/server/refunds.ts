/**
 * Refunds: Dispatch asks, the payment service pays back, its `charge.refunded` event settles.
 *
 * 1. `requestRefund` checks the request against what is left (settled + pending refunds count), writes
 *    the refund as pending with its idempotency key and an audit row in one transaction, then asks the
 *    payment service with the same key. The same request sent twice finds its row and never refunds twice.
 * 2. `settleChargeRefunded` runs inside the webhook's transaction: the charge's cumulative refunded
 *    amount says how much has really gone back; pending refunds settle oldest first. Settling updates
 *    the order and its lines, revokes licences whose line is refunded in full, and returns the numbers
 *    of limited prints that never shipped to their edition.
 */
import crypto from 'node:crypto';
import { Op, QueryTypes, type Transaction } from 'sequelize';
import type Stripe from 'stripe';
import { db } from './db';
import { stripe } from './stripe';
import { sendMail } from './mail';
import { config } from './config';
import { recordAudit, type AuditActor } from './audit';
import { EditionNumber, Licence, Order, OrderLine, Refund, ShopSettings } from './models';
import type { RefundAllocation } from './models/Refund';
import { planRefund, RefundRuleError, settleAgainst, type RefundableOrder, type RefundRequest } from '../refunds';
import { isOrderState } from '../order-states';
import { formatMoney } from '../money';
import { REFUND_REASONS, type RefundInput, type RefundView } from '../refund-schemas';

export class RefundError extends Error {
  constructor(readonly status: number, readonly code: string, message: string, readonly fields?: Record<string, string>) {
    super(message);
  }
}

async function refundableOrder(order: Order, transaction: Transaction): Promise<RefundableOrder> {
  const [lines, pending] = await Promise.all([
    OrderLine.findAll({ where: { orderId: order.id }, order: [['id', 'ASC']], transaction }),
    Refund.findAll({ where: { orderId: order.id, status: 'pending' }, transaction }),
  ]);
  const pendingOn = (lineId: number | null) =>
    pending.flatMap((r) => r.allocations).filter((a) => a.lineId === lineId).reduce((sum, a) => sum + a.amount, 0);
  return {
    status: isOrderState(order.status) ? order.status : 'pending_payment',
    total: order.total,
    shipping: order.shipping,
    refunded: order.refunded,
    shippingRefunded: order.shippingRefunded,
    pending: pending.reduce((sum, r) => sum + r.amount, 0),
    shippingPending: pendingOn(null),
    lines: lines.map((l) => ({ id: l.id, kind: l.kind, subtotal: l.subtotal, refunded: l.refunded, pending: pendingOn(l.id) })),
  };
}

export interface RequestedRefund { refund: Refund; replayed: boolean }

export async function requestRefund(number: string, actor: AuditActor, input: RefundInput): Promise<RequestedRefund> {
  const reason = `${REFUND_REASONS[input.reason]}${input.note ? ` — ${input.note}` : ''}`;
  const { refund, replayed, paymentIntent, orderNumber } = await db().transaction(async (transaction) => {
    const order = await Order.findOne({ where: { number }, transaction });
    if (!order) throw new RefundError(404, 'not_found', 'No such order.');
    const earlier = await Refund.findOne({ where: { idempotencyKey: input.idempotencyKey }, transaction });
    if (earlier) {
      // A replay is the same order and reason; anything else reusing the key is a mistake worth stopping.
      if (earlier.orderId !== order.id || earlier.reason !== reason) throw new RefundError(409, 'key_reused', 'This request key was already used for a different refund. Reload the page and try again.');
      return { refund: earlier, replayed: true, paymentIntent: order.stripePaymentIntentId, orderNumber: order.number };
    }
    if (!order.stripePaymentIntentId) throw new RefundError(409, 'not_refundable', 'Only a paid order can be refunded; this one holds no payment.');
    let plan;
    try {
      const request: RefundRequest = input.whole ? { whole: true } : { items: input.items ?? [] };
      plan = planRefund(await refundableOrder(order, transaction), request);
    } catch (error) {
      if (error instanceof RefundRuleError) throw new RefundError(error.code === 'not_refundable' ? 409 : 422, error.code, error.message, error.fields);
      throw error;
    }
    const refund = await Refund.create({
      orderId: order.id,
      idempotencyKey: input.idempotencyKey,
      stripeRefundId: null,
      amount: plan.amount,
      currency: order.currency,
      reason,
      allocations: plan.allocations,
      requestedBy: actor.id,
    }, { transaction });
    await recordAudit(actor, {
      action: 'refund.request', subjectType: 'refund', subjectId: refund.id, orderId: order.id, userId: order.userId,
      before: { refunded: order.refunded },
      after: { amount: plan.amount, currency: order.currency, reason, lines: plan.allocations.map((a) => a.lineId ?? 'shipping'), settlesAs: plan.settlesAs },
    }, transaction);
    return { refund, replayed: false, paymentIntent: order.stripePaymentIntentId, orderNumber: order.number };
  });

  // Already answered by the payment service (or failed there): a replay changes nothing.
  if (replayed && (refund.stripeRefundId || refund.status !== 'pending')) return { refund, replayed };
  try {
    const made = await stripe().refunds.create(
      {
        payment_intent: paymentIntent!,
        amount: refund.amount,
        reason: 'requested_by_customer',
        metadata: { order_number: orderNumber, refund_id: String(refund.id) },
      },
      // The same key every time this refund is asked for, so the service never pays it back twice.
      { idempotencyKey: `refund-${refund.idempotencyKey}` },
    );
    await Refund.update({ stripeRefundId: made.id }, { where: { id: refund.id, stripeRefundId: null } });
    await refund.reload();
    return { refund, replayed };
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    // A refused refund frees its amount again; a network failure leaves it pending so a replay can finish it.
    const refused = typeof error === 'object' && error !== null && 'type' in error && (error as { type: string }).type === 'StripeInvalidRequestError';
    if (refused) {
      await db().transaction(async (transaction) => {
        await refund.update({ status: 'failed', failure: message.slice(0, 250) }, { transaction });
        await recordAudit(null, { action: 'refund.fail', subjectType: 'refund', subjectId: refund.id, orderId: refund.orderId, before: { status: 'pending' }, after: { status: 'failed', failure: message.slice(0, 250) } }, transaction);
      });
      throw new RefundError(409, 'refused_by_payment_service', `The payment service refused the refund: ${message}`);
    }
    throw new RefundError(502, 'payment_service_unavailable', 'The payment service did not answer. The refund is recorded as pending; send the same request again to finish it.');
  }
}

export interface SettledRefund { refundId: number; orderId: number; mail: boolean }

/**
 * Applies a `charge.refunded` event inside the webhook transaction. Returns the refunds it settled
 * (their mails go out after commit) or null when the charge belongs to no order.
 */
export async function settleChargeRefunded(charge: Stripe.Charge, transaction: Transaction): Promise<{ orderNumber: string; settled: SettledRefund[] } | null> {
  const paymentIntent = typeof charge.payment_intent === 'string' ? charge.payment_intent : charge.payment_intent?.id;
  if (!paymentIntent) return null;
  const order = await Order.findOne({ where: { stripePaymentIntentId: paymentIntent }, transaction });
  if (!order) return null;
  const pending = await Refund.findAll({ where: { orderId: order.id, status: 'pending' }, order: [['id', 'ASC']], transaction });
  // Refused at payment (edition sold out, quote already sold): the buyer was told when the order was refused.
  const announcedAtPayment = order.status === 'refunded' && order.refunded === 0;
  // Events can arrive out of order: an older total never undoes a newer one.
  const reported = Math.min(charge.amount_refunded, order.total);
  if (reported <= order.refunded) return { orderNumber: order.number, settled: [] };
  const { settle, unexplained } = settleAgainst(order.refunded, reported, pending);
  const now = new Date();
  const settled: SettledRefund[] = [];

  for (const refund of pending.filter((r) => settle.includes(r.id))) {
    await applyAllocations(order, refund.allocations, refund.id, refund.reason, now, transaction);
    await refund.update({ status: 'succeeded', settledAt: now }, { transaction });
    await recordAudit(null, { action: 'refund.settle', subjectType: 'refund', subjectId: refund.id, orderId: order.id, userId: order.userId, before: { status: 'pending' }, after: { status: 'succeeded', amount: refund.amount } }, transaction);
    settled.push({ refundId: refund.id, orderId: order.id, mail: true });
  }
  if (unexplained > 0) {
    // Refunded outside the shop (the service's dashboard, or the automatic refund for a sold-out edition).
    const everything = unexplained === order.total - order.refunded;
    const allocations: RefundAllocation[] = everything ? await wholeAllocations(order, transaction) : [];
    const refund = await Refund.create({
      orderId: order.id, idempotencyKey: `external-${charge.id}-${reported}-${crypto.randomUUID()}`, stripeRefundId: null,
      amount: unexplained, currency: order.currency, reason: 'Refunded at the payment service', allocations,
      requestedBy: null, status: 'succeeded', settledAt: now,
    }, { transaction });
    await applyAllocations(order, allocations, refund.id, refund.reason, now, transaction, unexplained);
    await recordAudit(null, { action: 'refund.settle', subjectType: 'refund', subjectId: refund.id, orderId: order.id, userId: order.userId, before: { refunded: order.refunded - unexplained }, after: { refunded: order.refunded, amount: unexplained } }, transaction);
    settled.push({ refundId: refund.id, orderId: order.id, mail: !announcedAtPayment });
  }
  return { orderNumber: order.number, settled };
}

async function wholeAllocations(order: Order, transaction: Transaction): Promise<RefundAllocation[]> {
  const lines = await OrderLine.findAll({ where: { orderId: order.id }, transaction });
  const allocations: RefundAllocation[] = lines
    .filter((l) => l.subtotal > l.refunded)
    .map((l) => ({ lineId: l.id, amount: l.subtotal - l.refunded, whole: true }));
  if (order.shipping > order.shippingRefunded) allocations.push({ lineId: null, amount: order.shipping - order.shippingRefunded, whole: true });
  return allocations;
}

/** Moves the money on the order and its lines, then takes back what a fully refunded line gave. */
async function applyAllocations(order: Order, allocations: RefundAllocation[], refundId: number, reason: string, now: Date, transaction: Transaction, unallocated = 0): Promise<void> {
  let amount = unallocated;
  for (const allocation of allocations) {
    amount += allocation.amount;
    if (allocation.lineId === null) {
      await order.update({ shippingRefunded: Math.min(order.shipping, order.shippingRefunded + allocation.amount) }, { transaction });
      continue;
    }
    const line = await OrderLine.findByPk(allocation.lineId, { transaction });
    if (!line) continue;
    const refunded = Math.min(line.subtotal, line.refunded + allocation.amount);
    await line.update({ refunded, status: refunded === line.subtotal ? 'refunded' : line.status }, { transaction });
    if (refunded < line.subtotal) continue;
    if (line.kind === 'licence') {
      const licences = await Licence.findAll({ where: { orderLineId: line.id, status: 'active' }, transaction });
      for (const licence of licences) {
        await licence.update({ status: 'revoked', revokedAt: now, revokedReason: `Refunded: ${reason}`.slice(0, 250) }, { transaction });
        await recordAudit(null, { action: 'licence.revoke', subjectType: 'licence', subjectId: licence.id, orderId: order.id, userId: order.userId, before: { status: 'active' }, after: { status: 'revoked', refund: refundId } }, transaction);
      }
    } else if (!order.shippedAt) {
      // A print that never left the studio gives its numbers back; a shipped one keeps its place in the edition.
      const numbers = await EditionNumber.findAll({ where: { orderLineId: line.id }, transaction });
      if (numbers.length) {
        await EditionNumber.destroy({ where: { id: { [Op.in]: numbers.map((n) => n.id) } }, transaction });
        await recordAudit(null, {
          action: 'edition.return', subjectType: 'order_line', subjectId: line.id, orderId: order.id, userId: order.userId,
          before: { numbers: numbers.map((n) => n.number), serials: numbers.map((n) => n.certificateSerial) }, after: { numbers: [], refund: refundId },
        }, transaction);
      }
    }
  }
  const refunded = Math.min(order.total, order.refunded + amount);
  const state = refunded === order.total ? 'refunded' : 'partly_refunded';
  await order.update({ refunded, status: state }, { transaction });
}

/** The buyer's mail for a settled refund, sent after the webhook's transaction committed. */
export async function mailSettledRefund(settled: SettledRefund): Promise<void> {
  if (!settled.mail) return;
  const refund = await Refund.findByPk(settled.refundId);
  const order = await Order.findByPk(settled.orderId);
  if (!refund || !order) return;
  const shopName = (await ShopSettings.findByPk(1))?.shopName ?? 'Stillmark';
  const money = (n: number) => formatMoney(n, order.currency);
  const lines = await OrderLine.findAll({ where: { orderId: order.id } });
  const parts = refund.allocations.map((a) => {
    const line = lines.find((l) => l.id === a.lineId);
    const what = line ? `${(line.snapshot as { workTitle?: string }).workTitle ?? line.description} — ${line.description}` : 'Shipping';
    return `${what}: ${money(a.amount)}${line?.kind === 'licence' && a.whole ? ' (the licence is withdrawn)' : ''}`;
  });
  const text = [
    `We have refunded ${money(refund.amount)} for order ${order.number}.`,
    `Reason: ${refund.reason}`,
    '',
    ...parts,
    '',
    order.refunded === order.total ? 'The order is now refunded in full.' : `Refunded so far: ${money(order.refunded)} of ${money(order.total)}.`,
    'Your card issuer usually shows the money back within 5–10 working days.',
    '',
    `${config().publicOrigin}/account`,
  ].join('\n');
  await sendMail({ to: order.email, orderId: order.id, subject: `${shopName}: refund of ${money(refund.amount)} for order ${order.number}`, text });
}

export async function refundsForOrder(orderId: number, lineLabel: (lineId: number) => string): Promise<RefundView[]> {
  const refunds = await Refund.findAll({ where: { orderId }, order: [['id', 'ASC']] });
  const requesters = refunds.map((r) => r.requestedBy).filter((id): id is string => Boolean(id));
  const emails = new Map<string, string>();
  if (requesters.length) {
    const rows = await db().query<{ id: string; email: string }>('SELECT id, email FROM users WHERE id IN (:ids)', { replacements: { ids: requesters }, type: QueryTypes.SELECT });
    for (const row of rows) emails.set(row.id, row.email);
  }
  return refunds.map((r) => ({
    id: r.id,
    amount: r.amount,
    currency: r.currency,
    reason: r.reason,
    note: null,
    status: r.status,
    failure: r.failure,
    requestedBy: r.requestedBy ? emails.get(r.requestedBy) ?? 'a former account' : null,
    createdAt: r.createdAt.toISOString(),
    settledAt: r.settledAt ? r.settledAt.toISOString() : null,
    allocations: r.allocations.map((a) => ({ lineId: a.lineId, amount: a.amount, whole: a.whole, label: a.lineId === null ? 'Shipping' : lineLabel(a.lineId) })),
  }));
}
