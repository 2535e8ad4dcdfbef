/** Cart lines as the browser keeps them: ids and choices only, never prices. Shared by the store and the quote API. */
import { z } from 'zod';

export const MAX_CART_LINES = 50;
export const MAX_PRINT_QUANTITY = 10;

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
  quoteId: z.string().regex(/^SMQ-[A-Z2-9-]{20,40}$/, { message: 'Not a quote id.' }),
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

export type LicenceLineInput = z.infer<typeof licenceLineInput>;
export type PrintLineInput = z.infer<typeof printLineInput>;
export type QuoteLineInput = z.infer<typeof quoteLineInput>;
export type CartLineInput = z.infer<typeof cartLineInput>;
export type QuoteRequest = z.infer<typeof quoteRequest>;

/** The identity of a line: the same licence or the same print in the same mode is one line. */
export function lineKey(line: CartLineInput): string {
  if (line.kind === 'quote') return `quote:${line.quoteId}`;
  return line.kind === 'licence' ? `licence:${line.workId}:${line.tierId}` : `print:${line.offerId}:${line.mode}`;
}

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
