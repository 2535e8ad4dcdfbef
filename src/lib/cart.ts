/**
 * Cart lines as the browser keeps them: ids and choices only, never prices. The zod schemas the server
 * checks every cart with; the shapes, limits and `lineKey` live in `cart-lines.ts`, which the browser's
 * cart store uses without zod.
 */
import { z } from 'zod';
import { MAX_CART_LINES, MAX_PRINT_QUANTITY, QUOTE_ID_PATTERN, lineKey, type CartLineInput } from './cart-lines';

export { MAX_CART_LINES, MAX_PRINT_QUANTITY, lineKey };
export type { CartLineInput, LicenceLineInput, PrintLineInput, QuoteLineInput } from './cart-lines';

export const licenceLineInput = z.object({
  kind: z.literal('licence'),
  workId: z.number().int().positive(),
  tierId: z.number().int().positive(),
});

export const printLineInput = z.object({
  kind: z.literal('print'),
  offerId: z.number().int().positive(),
  mode: z.enum(['fill', 'fit']),
  quantity: z.number().int().min(1).max(MAX_PRINT_QUANTITY),
});

/** A custom licence the studio quoted for this buyer: priced from the quote, for its owner only. */
export const quoteLineInput = z.object({
  kind: z.literal('quote'),
  quoteId: z.string().regex(QUOTE_ID_PATTERN, { message: 'Not a quote id.' }),
});

export const cartLineInput = z.discriminatedUnion('kind', [licenceLineInput, printLineInput, quoteLineInput]);
export const quoteRequest = z.object({
  lines: z
    .array(cartLineInput)
    .max(MAX_CART_LINES)
    .superRefine((lines, ctx) => {
      const seen = new Set<string>();
      lines.forEach((line, index) => {
        const key = lineKey(line);
        if (seen.has(key)) ctx.addIssue({ code: 'custom', path: [index], message: 'the same item appears twice' });
        seen.add(key);
      });
    }),
});

export type QuoteRequest = z.infer<typeof quoteRequest>;

// The hand-written line types must be exactly what the schema parses to (a compile error otherwise).
type Same<A, B> = [A] extends [B] ? ([B] extends [A] ? true : false) : false;
const linesMatchSchema: Same<z.infer<typeof cartLineInput>, CartLineInput> = true;
void linesMatchSchema;

export interface QuotedLineOk {
  key: string;
  ok: true;
  kind: 'licence' | 'print' | 'quote';
  workSlug: string;
  workTitle: string;
  thumb: { src: string; width: number; height: number; alt: string };
  description: string;
  detail: string;
  unitPrice: number;
  quantity: number;
  subtotal: number;
}
export interface QuotedLineError {
  key: string;
  ok: false;
  kind: 'licence' | 'print' | 'quote';
  error: string;
}
export type QuotedLine = QuotedLineOk | QuotedLineError;

export interface CartQuote {
  currency: string;
  lines: QuotedLine[];
  itemCount: number;
  subtotal: number;
  total: number;
}
