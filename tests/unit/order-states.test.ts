import { describe, expect, it } from 'vitest';
import { canMove, IllegalMoveError, isFinal, moveOrThrow, nextStates, orderKind, ORDER_STATES, type OrderState } from '~/lib/order-states';

// business rule (PRODUCT.md): the legal moves between order states
const LEGAL: [OrderState, OrderState[]][] = [
  ['pending_payment', ['paid', 'expired', 'cancelled']],
  ['paid', ['in_production', 'refunded', 'partly_refunded']],
  ['in_production', ['shipped', 'refunded', 'partly_refunded']],
  ['shipped', ['delivered', 'partly_refunded', 'refunded']],
  ['partly_refunded', ['in_production', 'shipped', 'delivered', 'refunded']],
  ['delivered', ['refunded', 'partly_refunded']],
  ['expired', []],
  ['cancelled', []],
  ['refunded', []],
];

describe('order states', () => {
  it('knows the nine states', () => {
    // business rule (PRODUCT.md): pending payment → paid → in production → shipped → delivered; expired, cancelled, refunded, partly refunded
    expect([...ORDER_STATES].sort()).toEqual(['cancelled', 'delivered', 'expired', 'in_production', 'paid', 'partly_refunded', 'pending_payment', 'refunded', 'shipped']);
    expect(LEGAL.map(([from]) => from).sort()).toEqual([...ORDER_STATES].sort());
  });

  for (const [from, tos] of LEGAL) {
    it(`${from} may go to exactly ${tos.join(', ') || 'nothing'}`, () => {
      expect([...nextStates(from)].sort()).toEqual([...tos].sort()); // business rule (PRODUCT.md)
      for (const to of tos) {
        expect(canMove(from, to), `${from} → ${to}`).toBe(true);
        expect(moveOrThrow(from, to)).toBe(to);
      }
      for (const to of ORDER_STATES.filter((s) => !tos.includes(s))) {
        expect(canMove(from, to), `${from} → ${to}`).toBe(false);
        expect(() => moveOrThrow(from, to), `${from} → ${to}`).toThrow(IllegalMoveError);
      }
    });
  }

  it('refuses representative illegal moves with a clear message', () => {
    // business rule (PRODUCT.md): no skipping payment or production, no going back, nothing out of a final state
    const cases: [OrderState, OrderState, RegExp][] = [
      ['pending_payment', 'shipped', /cannot go from pending payment to shipped: from pending payment it can only go to paid, expired, cancelled\./],
      ['paid', 'delivered', /cannot go from paid to delivered/],
      ['shipped', 'paid', /cannot go from shipped to paid/],
      ['delivered', 'in_production', /cannot go from delivered to in production/],
      ['pending_payment', 'refunded', /cannot go from pending payment to refunded/],
      ['refunded', 'paid', /cannot go from refunded to paid: refunded is final\./],
      ['expired', 'paid', /expired is final/],
      ['cancelled', 'pending_payment', /cancelled is final/],
    ];
    for (const [from, to, message] of cases) {
      let thrown: unknown;
      try {
        moveOrThrow(from, to);
      } catch (error) {
        thrown = error;
      }
      expect(thrown, `${from} → ${to}`).toBeInstanceOf(IllegalMoveError);
      expect((thrown as IllegalMoveError).message).toMatch(message);
      expect(thrown).toMatchObject({ from, to, code: 'illegal_move' });
    }
  });

  it('a state cannot move to itself', () => {
    for (const s of ORDER_STATES) expect(canMove(s, s), s).toBe(false); // business rule (PRODUCT.md): no self-moves listed
  });

  it('expired, cancelled and refunded are final and have no moves', () => {
    for (const s of ['expired', 'cancelled', 'refunded'] as const) {
      expect(nextStates(s)).toEqual([]); // business rule (PRODUCT.md)
      expect(isFinal(s)).toBe(true);
    }
    for (const s of ORDER_STATES.filter((x) => !['expired', 'cancelled', 'refunded'].includes(x))) expect(isFinal(s), s).toBe(false);
  });
});

describe('orderKind', () => {
  it('names what an order holds', () => {
    // business rule (PRODUCT.md): the shop sells licences and prints from one catalogue
    expect(orderKind([{ kind: 'licence' }])).toBe('licence');
    expect(orderKind([{ kind: 'licence' }, { kind: 'licence' }])).toBe('licence');
    expect(orderKind([{ kind: 'print' }])).toBe('print');
    expect(orderKind([{ kind: 'print' }, { kind: 'licence' }])).toBe('both');
  });

  it('refuses an order without lines', () => {
    expect(() => orderKind([])).toThrow(/at least one line/);
  });
});
