/**
 * Cart lines without a schema library, for the browser: the shapes, the limits, a line's identity and a
 * hand-written check of a stored cart. The cart store runs on every Gallery page, and zod would add about
 * 25 KB (gzip) to each of them for this one check. The server checks every cart with the zod schemas in
 * `cart.ts`, built on the same limits; `tests/unit/cart-lines.test.ts` holds the two checks to the same verdicts.
 */

export const MAX_CART_LINES = 50;
export const MAX_PRINT_QUANTITY = 10;
/** A custom licence quote's id, e.g. SMQ-7K2M-… (see licence-quotes.ts). */
export const QUOTE_ID_PATTERN = /^SMQ-[A-Z2-9-]{20,40}$/;

export interface LicenceLineInput {
  kind: 'licence';
  workId: number;
  tierId: number;
}
export interface PrintLineInput {
  kind: 'print';
  offerId: number;
  mode: 'fill' | 'fit';
  quantity: number;
}
/** A custom licence the studio quoted for this buyer: priced from the quote, for its owner only. */
export interface QuoteLineInput {
  kind: 'quote';
  quoteId: string;
}
export type CartLineInput = LicenceLineInput | PrintLineInput | QuoteLineInput;

/** The identity of a line: the same licence or the same print in the same mode is one line. */
export function lineKey(line: CartLineInput): string {
  if (line.kind === 'quote') return `quote:${line.quoteId}`;
  return line.kind === 'licence' ? `licence:${line.workId}:${line.tierId}` : `print:${line.offerId}:${line.mode}`;
}

/** A database id: a positive whole number that a double holds exactly. */
const isId = (v: unknown): v is number => typeof v === 'number' && Number.isSafeInteger(v) && v > 0;

/** One line in the shape the server accepts (unknown fields dropped), or null. */
export function toCartLine(value: unknown): CartLineInput | null {
  if (typeof value !== 'object' || value === null || Array.isArray(value)) return null;
  const v = value as Record<string, unknown>;
  switch (v.kind) {
    case 'licence':
      return isId(v.workId) && isId(v.tierId) ? { kind: 'licence', workId: v.workId, tierId: v.tierId } : null;
    case 'print': {
      const { offerId, mode, quantity } = v;
      if (!isId(offerId) || (mode !== 'fill' && mode !== 'fit')) return null;
      if (!Number.isSafeInteger(quantity) || (quantity as number) < 1 || (quantity as number) > MAX_PRINT_QUANTITY) return null;
      return { kind: 'print', offerId, mode, quantity: quantity as number };
    }
    case 'quote':
      return typeof v.quoteId === 'string' && QUOTE_ID_PATTERN.test(v.quoteId) ? { kind: 'quote', quoteId: v.quoteId } : null;
    default:
      return null;
  }
}

/** A stored cart: a list of at most MAX_CART_LINES valid lines, else null (one bad line rejects the whole cart, as the server's schema does). */
export function toCartLines(value: unknown): CartLineInput[] | null {
  if (!Array.isArray(value) || value.length > MAX_CART_LINES) return null;
  const lines: CartLineInput[] = [];
  for (const item of value) {
    const line = toCartLine(item);
    if (!line) return null;
    lines.push(line);
  }
  return lines;
}
