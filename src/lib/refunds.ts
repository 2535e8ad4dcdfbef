/**
 * Refund arithmetic, pure. All amounts are integers in the currency's minor unit (a yen is 1, a pound
 * is 100 pence), so the same rules hold for two-decimal and zero-decimal currencies alike.
 *
 * What is still refundable counts both settled refunds and refunds asked for but not yet settled by
 * the payment service, so two requests made one after the other can never together exceed what was paid.
 */
import { assertMinorUnits } from './money';
import type { OrderState } from './order-states';

export interface RefundableLine {
  id: number;
  kind: 'licence' | 'print';
  subtotal: number;
  /** Settled refunds on this line. */
  refunded: number;
  /** Refunds asked for on this line and not settled yet. */
  pending: number;
}

export interface RefundableOrder {
  status: OrderState;
  total: number;
  shipping: number;
  refunded: number;
  shippingRefunded: number;
  /** Pending refunds: their total, and the part of it that goes to shipping. */
  pending: number;
  shippingPending: number;
  lines: RefundableLine[];
}

/** One part of a refund request: a line (or shipping, lineId null) and an amount; no amount = all that is left of it. */
export interface RefundItem {
  lineId: number | null;
  amount?: number;
}

export type RefundRequest = { whole: true } | { items: RefundItem[] };

export interface PlannedAllocation {
  lineId: number | null;
  amount: number;
  /** True when this refund takes the line (or shipping) to fully refunded. */
  whole: boolean;
}

export interface RefundPlan {
  amount: number;
  allocations: PlannedAllocation[];
  /** The state the order will be in once this refund settles. */
  settlesAs: 'refunded' | 'partly_refunded';
}

export class RefundRuleError extends Error {
  constructor(readonly code: string, message: string, readonly fields?: Record<string, string>) {
    super(message);
    this.name = 'RefundRuleError';
  }
}

/** Orders that hold money the buyer paid. Pending, expired and cancelled orders never took any; refunded ones have none left. */
export const REFUNDABLE_STATES: readonly OrderState[] = ['paid', 'in_production', 'shipped', 'delivered', 'partly_refunded'];

export function remainingOnOrder(order: Pick<RefundableOrder, 'total' | 'refunded' | 'pending'>): number {
  return order.total - order.refunded - order.pending;
}

export function remainingOnLine(line: Pick<RefundableLine, 'subtotal' | 'refunded' | 'pending'>): number {
  return line.subtotal - line.refunded - line.pending;
}

export function remainingOnShipping(order: Pick<RefundableOrder, 'shipping' | 'shippingRefunded' | 'shippingPending'>): number {
  return order.shipping - order.shippingRefunded - order.shippingPending;
}

/** The order's state after `settled` of `total` has been refunded. */
export function stateAfterRefund(total: number, settled: number): 'refunded' | 'partly_refunded' {
  assertMinorUnits(total);
  assertMinorUnits(settled);
  if (settled <= 0 || settled > total) throw new RangeError(`a settled refund must be within 1..${total}, got ${settled}`);
  return settled === total ? 'refunded' : 'partly_refunded';
}

/**
 * Turns a request into allocations, or throws RefundRuleError naming what is wrong. Never allows more
 * than is left on a line, on shipping, or on the order as a whole.
 */
export function planRefund(order: RefundableOrder, request: RefundRequest): RefundPlan {
  if (!REFUNDABLE_STATES.includes(order.status)) {
    throw new RefundRuleError('not_refundable', order.status === 'refunded'
      ? 'This order has already been refunded in full.'
      : 'Only a paid order can be refunded; this one holds no payment.');
  }
  const orderLeft = remainingOnOrder(order);
  if (orderLeft <= 0) throw new RefundRuleError('nothing_left', 'Everything paid on this order has been refunded or is being refunded.');

  const allocations: PlannedAllocation[] = [];
  if ('whole' in request) {
    for (const line of order.lines) {
      const left = remainingOnLine(line);
      if (left > 0) allocations.push({ lineId: line.id, amount: left, whole: true });
    }
    const shippingLeft = remainingOnShipping(order);
    if (shippingLeft > 0) allocations.push({ lineId: null, amount: shippingLeft, whole: true });
  } else {
    if (request.items.length === 0) throw new RefundRuleError('empty', 'Choose at least one line (or shipping) to refund.', { items: 'Nothing chosen.' });
    const seen = new Set<string>();
    for (const [index, item] of request.items.entries()) {
      const key = String(item.lineId);
      if (seen.has(key)) throw new RefundRuleError('duplicate_item', 'Each line can appear once in a refund.', { [`items.${index}.lineId`]: 'Listed twice.' });
      seen.add(key);
      const line = item.lineId === null ? null : order.lines.find((l) => l.id === item.lineId);
      if (item.lineId !== null && !line) throw new RefundRuleError('unknown_line', 'That line is not on this order.', { [`items.${index}.lineId`]: 'Not on this order.' });
      const left = line ? remainingOnLine(line) : remainingOnShipping(order);
      const what = line ? 'this line' : 'shipping';
      if (left <= 0) throw new RefundRuleError('nothing_left', `Nothing is left to refund on ${what}.`, { [`items.${index}.amount`]: 'Already refunded.' });
      const amount = item.amount ?? left;
      if (!Number.isSafeInteger(amount) || amount < 1) {
        throw new RefundRuleError('bad_amount', 'A refund amount is a whole number of the currency’s smallest unit, at least 1.', { [`items.${index}.amount`]: 'Not a valid amount.' });
      }
      if (amount > left) {
        throw new RefundRuleError('too_much', `That is more than is left to refund on ${what}.`, { [`items.${index}.amount`]: `At most ${left} (smallest units).` });
      }
      allocations.push({ lineId: item.lineId, amount, whole: amount === left });
    }
  }
  const amount = allocations.reduce((sum, a) => sum + a.amount, 0);
  if (amount < 1) throw new RefundRuleError('nothing_left', 'Everything paid on this order has been refunded or is being refunded.');
  // Lines and shipping add up to the total, so this holds whenever the parts do; checked anyway, as the last word.
  if (amount > orderLeft) throw new RefundRuleError('too_much', 'That is more than is left to refund on this order.', { amount: `At most ${orderLeft} (smallest units).` });
  return { amount, allocations, settlesAs: stateAfterRefund(order.total, order.refunded + order.pending + amount) };
}

/**
 * Which pending refunds a payment-service total covers. The service reports the charge's cumulative
 * refunded amount; pending refunds settle oldest first while they fit. Whatever is left over was
 * refunded outside the shop (e.g. in the service's own dashboard).
 */
export function settleAgainst(settledSoFar: number, reportedTotal: number, pending: readonly { id: number; amount: number }[]): { settle: number[]; unexplained: number } {
  assertMinorUnits(settledSoFar);
  assertMinorUnits(reportedTotal);
  let delta = reportedTotal - settledSoFar;
  const settle: number[] = [];
  for (const refund of pending) {
    if (refund.amount > delta) break;
    settle.push(refund.id);
    delta -= refund.amount;
  }
  return { settle, unexplained: Math.max(0, delta) };
}
