import { describe, expect, it } from 'vitest';
import { planRefund, remainingOnOrder, RefundRuleError, settleAgainst, stateAfterRefund, type RefundableOrder } from '~/lib/refunds';
import { formatMoney, parseMajorUnits, toMajorUnitsText } from '~/lib/money';

/** A paid order of 12000 (licence) + 21600 (print) + 900 shipping = 34500 minor units. */
function order(overrides: Partial<RefundableOrder> = {}): RefundableOrder {
  return {
    status: 'paid', total: 34500, shipping: 900, refunded: 0, shippingRefunded: 0, pending: 0, shippingPending: 0,
    lines: [
      { id: 1, kind: 'licence', subtotal: 12000, refunded: 0, pending: 0 },
      { id: 2, kind: 'print', subtotal: 21600, refunded: 0, pending: 0 },
    ],
    ...overrides,
  };
}

const code = (fn: () => unknown) => {
  try {
    fn();
    return 'no error';
  } catch (error) {
    return error instanceof RefundRuleError ? error.code : String(error);
  }
};

describe('refund arithmetic', () => {
  it('refunds a whole order as every line plus shipping, and settles it as refunded', () => {
    const plan = planRefund(order(), { whole: true });
    expect(plan.amount).toBe(34500);
    expect(plan.allocations).toEqual([
      { lineId: 1, amount: 12000, whole: true },
      { lineId: 2, amount: 21600, whole: true },
      { lineId: null, amount: 900, whole: true },
    ]);
    expect(plan.settlesAs).toBe('refunded');
  });

  it('sums partial refunds and knows what remains (Stripe charge semantics: amount 5000, amount_refunded 2000 → 3000 refundable, TRADE-FACTS §3.4)', () => {
    const o = order({ total: 5000, shipping: 0, refunded: 2000, lines: [{ id: 1, kind: 'print', subtotal: 5000, refunded: 2000, pending: 0 }] });
    expect(remainingOnOrder(o)).toBe(3000);
    expect(code(() => planRefund(o, { items: [{ lineId: 1, amount: 3001 }] }))).toBe('too_much');
    const rest = planRefund(o, { items: [{ lineId: 1 }] });
    expect(rest).toMatchObject({ amount: 3000, settlesAs: 'refunded', allocations: [{ lineId: 1, amount: 3000, whole: true }] });
    const part = planRefund(o, { items: [{ lineId: 1, amount: 1000 }] });
    expect(part).toMatchObject({ amount: 1000, settlesAs: 'partly_refunded', allocations: [{ whole: false }] });
  });

  it('counts refunds still pending at the payment service, so two requests cannot together exceed what was paid', () => {
    const o = order({ pending: 21600, lines: [{ id: 1, kind: 'licence', subtotal: 12000, refunded: 0, pending: 0 }, { id: 2, kind: 'print', subtotal: 21600, refunded: 0, pending: 21600 }] });
    expect(code(() => planRefund(o, { items: [{ lineId: 2, amount: 1 }] }))).toBe('nothing_left');
    expect(planRefund(o, { whole: true }).amount).toBe(12900);
  });

  it('refuses orders holding no payment, unknown or repeated lines, and amounts that are not whole minor units', () => {
    expect(code(() => planRefund(order({ status: 'pending_payment' }), { whole: true }))).toBe('not_refundable');
    expect(code(() => planRefund(order({ status: 'expired' }), { whole: true }))).toBe('not_refundable');
    expect(code(() => planRefund(order({ status: 'refunded' }), { whole: true }))).toBe('not_refundable');
    expect(code(() => planRefund(order(), { items: [{ lineId: 9 }] }))).toBe('unknown_line');
    expect(code(() => planRefund(order(), { items: [{ lineId: 1 }, { lineId: 1, amount: 5 }] }))).toBe('duplicate_item');
    expect(code(() => planRefund(order(), { items: [{ lineId: 1, amount: 0 }] }))).toBe('bad_amount');
    expect(code(() => planRefund(order(), { items: [{ lineId: 1, amount: 10.5 }] }))).toBe('bad_amount');
    expect(code(() => planRefund(order(), { items: [] }))).toBe('empty');
    expect(code(() => planRefund(order(), { items: [{ lineId: null, amount: 901 }] }))).toBe('too_much');
  });

  it('works the same in a zero-decimal currency: ¥12,000 is 12000 minor units (Stripe currencies, TRADE-FACTS §3.3)', () => {
    const yen = parseMajorUnits('12000', 'JPY')!;
    expect(yen).toBe(12000);
    const o = order({ total: yen, shipping: 0, lines: [{ id: 1, kind: 'licence', subtotal: yen, refunded: 0, pending: 0 }] });
    const part = planRefund(o, { items: [{ lineId: 1, amount: parseMajorUnits('4500', 'JPY')! }] });
    expect(part.amount).toBe(4500);
    expect(formatMoney(part.amount, 'JPY', 'en-GB')).toBe('JP¥4,500'); // Intl, ISO 4217: JPY has 0 minor digits
    expect(code(() => planRefund({ ...o, refunded: 4500 }, { items: [{ lineId: 1, amount: 7501 }] }))).toBe('too_much');
  });

  it('names the state after a settled amount', () => {
    expect(stateAfterRefund(34500, 34500)).toBe('refunded');
    expect(stateAfterRefund(34500, 1)).toBe('partly_refunded');
    expect(() => stateAfterRefund(34500, 34501)).toThrow(RangeError);
    expect(() => stateAfterRefund(34500, 0)).toThrow(RangeError);
  });

  it('settles pending refunds oldest first against the charge’s cumulative amount_refunded (Stripe Charge object, TRADE-FACTS §3.4)', () => {
    const pending = [{ id: 1, amount: 1000 }, { id: 2, amount: 500 }];
    expect(settleAgainst(0, 1000, pending)).toEqual({ settle: [1], unexplained: 0 });
    expect(settleAgainst(0, 1500, pending)).toEqual({ settle: [1, 2], unexplained: 0 });
    expect(settleAgainst(1000, 1500, [{ id: 2, amount: 500 }])).toEqual({ settle: [2], unexplained: 0 });
    // Refunded outside the shop: nothing pending matches.
    expect(settleAgainst(0, 700, pending)).toEqual({ settle: [], unexplained: 700 });
    expect(settleAgainst(0, 1700, pending)).toEqual({ settle: [1, 2], unexplained: 200 });
  });
});

describe('typed amounts to minor units', () => {
  it('reads major units without binary floating point (TRADE-FACTS §3.3 check values)', () => {
    expect(parseMajorUnits('10.00', 'USD')).toBe(1000); // toMinor("10.00","usd") = 1000
    expect(parseMajorUnits('500', 'JPY')).toBe(500); // toMinor("500","jpy") = 500
    expect(parseMajorUnits('19.99', 'GBP')).toBe(1999); // 19.99 × 100 is 1998.999… in IEEE-754 (TRADE-FACTS §3.3)
    expect(parseMajorUnits('0.5', 'EUR')).toBe(50);
    expect(parseMajorUnits('5.124', 'KWD')).toBe(5124); // three-decimal currency (ISO 4217 via Intl)
  });

  it('refuses what is not a plain amount in that currency', () => {
    expect(parseMajorUnits('12.5', 'JPY')).toBeNull(); // yen have no decimals
    expect(parseMajorUnits('1.234', 'GBP')).toBeNull();
    expect(parseMajorUnits('-5', 'GBP')).toBeNull();
    expect(parseMajorUnits('1e3', 'GBP')).toBeNull();
    expect(parseMajorUnits('12,50', 'EUR')).toBeNull();
    expect(parseMajorUnits('', 'GBP')).toBeNull();
  });

  it('writes minor units back as major-unit text for form fields', () => {
    expect(toMajorUnitsText(1999, 'GBP')).toBe('19.99');
    expect(toMajorUnitsText(5, 'GBP')).toBe('0.05');
    expect(toMajorUnitsText(4500, 'JPY')).toBe('4500');
  });
});
