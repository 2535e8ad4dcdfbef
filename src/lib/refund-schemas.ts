/** What Dispatch sends to ask for a refund. Amounts arrive in minor units; the form converts what the admin typed. */
import { z } from 'zod';

export const REFUND_REASONS = {
  requested_by_customer: 'The buyer asked for it',
  damaged_in_transit: 'The print arrived damaged',
  not_as_described: 'Not what the buyer was told',
  duplicate: 'Paid twice',
  goodwill: 'Goodwill',
  other: 'Other',
} as const;
export type RefundReason = keyof typeof REFUND_REASONS;

const item = z.object({
  lineId: z.number().int().positive().nullable(),
  amount: z.number().int().positive().max(99_999_999).optional(),
});

export const refundInput = z.object({
  // Stripe's own limit for idempotency keys is 255 characters (TRADE-FACTS §3.3).
  idempotencyKey: z.string().trim().min(16, 'Too short to be unique.').max(200).regex(/^[\w-]+$/, 'Letters, digits, - and _ only.'),
  reason: z.enum(Object.keys(REFUND_REASONS) as [RefundReason, ...RefundReason[]]),
  note: z.string().trim().max(500).optional().default(''),
  whole: z.literal(true).optional(),
  items: z.array(item).max(100).optional(),
}).refine((v) => (v.whole === true) !== (v.items !== undefined), { message: 'Ask for the whole order or for some lines, not both.', path: ['items'] });
export type RefundInput = z.infer<typeof refundInput>;

export interface RefundView {
  id: number;
  amount: number;
  currency: string;
  reason: string;
  note: string | null;
  status: 'pending' | 'succeeded' | 'failed';
  failure: string | null;
  requestedBy: string | null;
  createdAt: string;
  settledAt: string | null;
  allocations: { lineId: number | null; amount: number; whole: boolean; label: string }[];
}
