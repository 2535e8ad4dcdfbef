/**
 * The browser's hand-written check of a stored cart (src/lib/cart-lines.ts) must give the same verdict and
 * the same cleaned lines as the server's zod schema (src/lib/cart.ts). The expected value of every case is
 * what zod 4 itself answers for it (the reference implementation), never a value written here.
 */
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { cartLineInput } from '../../src/lib/cart';
import { MAX_CART_LINES, MAX_PRINT_QUANTITY, toCartLines } from '../../src/lib/cart-lines';

const storedCart = z.array(cartLineInput).max(MAX_CART_LINES);

/** zod's verdict: the parsed lines, or null when it refuses. */
function zodVerdict(value: unknown) {
  const parsed = storedCart.safeParse(value);
  return parsed.success ? parsed.data : null;
}

const licence = { kind: 'licence', workId: 3, tierId: 2 };
const print = { kind: 'print', offerId: 17, mode: 'fill', quantity: 2 };
const quote = { kind: 'quote', quoteId: 'SMQ-7K2M-9QRT-XW4P-HJ3N-ABCD' };

const lineCases: [string, unknown][] = [
  ['a licence line', licence],
  ['a print line', print],
  ['a print line in fit mode at the largest quantity', { ...print, mode: 'fit', quantity: MAX_PRINT_QUANTITY }],
  ['a quote line', quote],
  ['extra fields (dropped, not refused)', { ...licence, price: 1, note: 'x' }],
  ['an unknown kind', { ...licence, kind: 'gift' }],
  ['no kind', { workId: 3, tierId: 2 }],
  ['an id given as text', { ...licence, workId: '3' }],
  ['a zero id', { ...licence, tierId: 0 }],
  ['a negative id', { ...print, offerId: -4 }],
  ['a fractional id', { ...licence, workId: 2.5 }],
  ['an id past the safe integer range', { ...licence, workId: 2 ** 53 }],
  ['the largest safe integer id', { ...licence, workId: Number.MAX_SAFE_INTEGER }],
  ['NaN as an id', { ...licence, workId: Number.NaN }],
  ['Infinity as a quantity', { ...print, quantity: Number.POSITIVE_INFINITY }],
  ['a quantity of 0', { ...print, quantity: 0 }],
  ['a quantity one past the limit', { ...print, quantity: MAX_PRINT_QUANTITY + 1 }],
  ['a fractional quantity', { ...print, quantity: 1.5 }],
  ['an unknown print mode', { ...print, mode: 'crop' }],
  ['a missing quantity', { kind: 'print', offerId: 17, mode: 'fill' }],
  ['a quote id in lower case', { ...quote, quoteId: quote.quoteId.toLowerCase() }],
  ['a quote id too short', { ...quote, quoteId: 'SMQ-ABCD' }],
  ['a quote id with a letter the alphabet leaves out', { ...quote, quoteId: 'SMQ-7K2M-9QRT-XW4P-HJ3N-ABC0' }],
  ['a quote id that is a number', { ...quote, quoteId: 12 }],
  ['null', null],
  ['a string', 'licence:3:2'],
  ['an array', [licence]],
];

describe('stored cart check (browser) against the zod schema (server)', () => {
  it.each(lineCases)('one line: %s', (_name, line) => {
    expect(toCartLines([line])).toEqual(zodVerdict([line]));
  });

  it.each(lineCases)('a good line followed by: %s', (_name, line) => {
    expect(toCartLines([licence, line])).toEqual(zodVerdict([licence, line]));
  });

  it('takes an empty cart and a cart at the line limit, refuses one line more', () => {
    const full = Array.from({ length: MAX_CART_LINES }, (_, i) => ({ kind: 'licence', workId: i + 1, tierId: 1 }));
    for (const cart of [[], full, [...full, licence]]) expect(toCartLines(cart)).toEqual(zodVerdict(cart));
    expect(zodVerdict([...full, licence])).toBeNull();
  });

  it.each([['an object', { lines: [licence] }], ['null', null], ['a number', 3], ['text', '[]']])('refuses a stored value that is not a list: %s', (_name, value) => {
    expect(toCartLines(value)).toEqual(zodVerdict(value));
    expect(toCartLines(value)).toBeNull();
  });
});
