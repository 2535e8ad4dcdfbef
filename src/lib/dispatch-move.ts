/** An admin's move of an order through fulfilment. Refunds have their own flow; these are the print steps. */
import { z } from 'zod';
import { CARRIER_IDS } from './tracking';

export const FULFILMENT_STEPS = ['in_production', 'shipped', 'delivered'] as const;

export const orderMoveInput = z.discriminatedUnion('to', [
  z.object({ to: z.literal('in_production') }),
  z.object({ to: z.literal('shipped'), carrier: z.enum(CARRIER_IDS as [string, ...string[]]), trackingNumber: z.string().trim().min(4).max(60) }),
  z.object({ to: z.literal('delivered') }),
]);
export type OrderMoveInput = z.infer<typeof orderMoveInput>;
