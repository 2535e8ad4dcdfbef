/** The order state machine and what an order holds (licences, prints or both). Pure: used by both sides. */

export const ORDER_STATES = [
  'pending_payment', 'paid', 'in_production', 'shipped', 'delivered',
  'expired', 'cancelled', 'refunded', 'partly_refunded',
] as const;
export type OrderState = (typeof ORDER_STATES)[number];

export const STATE_LABEL: Record<OrderState, string> = {
  pending_payment: 'Pending payment',
  paid: 'Paid',
  in_production: 'In production',
  shipped: 'Shipped',
  delivered: 'Delivered',
  expired: 'Expired',
  cancelled: 'Cancelled',
  refunded: 'Refunded',
  partly_refunded: 'Partly refunded',
};

/** Where an order may go next from each state (PRODUCT.md). Expired, cancelled and refunded are final. */
const MOVES: Record<OrderState, readonly OrderState[]> = {
  pending_payment: ['paid', 'expired', 'cancelled'],
  paid: ['in_production', 'refunded', 'partly_refunded'],
  in_production: ['shipped', 'refunded', 'partly_refunded'],
  shipped: ['delivered', 'partly_refunded', 'refunded'],
  partly_refunded: ['in_production', 'shipped', 'delivered', 'refunded'],
  delivered: ['refunded', 'partly_refunded'],
  expired: [],
  cancelled: [],
  refunded: [],
};

export function isOrderState(value: unknown): value is OrderState {
  return typeof value === 'string' && (ORDER_STATES as readonly string[]).includes(value);
}

export function nextStates(from: OrderState): readonly OrderState[] {
  return MOVES[from];
}

export function isFinal(state: OrderState): boolean {
  return MOVES[state].length === 0;
}

export function canMove(from: OrderState, to: OrderState): boolean {
  return MOVES[from].includes(to);
}

/** Thrown for a move the state machine does not allow; endpoints answer it with 409. */
export class IllegalMoveError extends Error {
  readonly code = 'illegal_move';
  constructor(readonly from: OrderState, readonly to: OrderState) {
    const allowed = MOVES[from].map((s) => STATE_LABEL[s].toLowerCase());
    super(
      `An order cannot go from ${STATE_LABEL[from].toLowerCase()} to ${STATE_LABEL[to].toLowerCase()}: ` +
        (allowed.length ? `from ${STATE_LABEL[from].toLowerCase()} it can only go to ${allowed.join(', ')}.` : `${STATE_LABEL[from].toLowerCase()} is final.`),
    );
    this.name = 'IllegalMoveError';
  }
}

/** Returns `to` when the move is allowed, otherwise throws IllegalMoveError. */
export function moveOrThrow(from: OrderState, to: OrderState): OrderState {
  if (!canMove(from, to)) throw new IllegalMoveError(from, to);
  return to;
}

export const ORDER_KINDS = ['licence', 'print', 'both'] as const;
export type OrderKind = (typeof ORDER_KINDS)[number];

export const KIND_LABEL: Record<OrderKind, string> = { licence: 'Licences', print: 'Prints', both: 'Licences and prints' };

/** What an order holds, from its lines. Checkout never makes an order without lines, so none is an error. */
export function orderKind(lines: readonly { kind: 'licence' | 'print' }[]): OrderKind {
  if (lines.length === 0) throw new RangeError('An order has at least one line.');
  const licence = lines.some((l) => l.kind === 'licence');
  const print = lines.some((l) => l.kind === 'print');
  return licence && print ? 'both' : print ? 'print' : 'licence';
}
