/** Dispatch → Orders: the list query (shared by the API, the page and the island) and what the server answers. */
import { z } from 'zod';
import type { ShippingAddress } from './checkout';
import type { AuditView } from './audit-types';
import type { RefundView } from './refund-schemas';
import type { LabPackView } from './lab-pack';
import { ORDER_KINDS, ORDER_STATES, type OrderKind, type OrderState } from './order-states';

export const ORDER_SORTS = ['createdAt', 'total', 'number', 'status'] as const;
export type OrderSort = (typeof ORDER_SORTS)[number];

export const PAGE_SIZES = [10, 25, 50, 100] as const;

/** A calendar day as YYYY-MM-DD that really exists (no 2026-02-30). Days are UTC days. */
const day = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'Give the date as YYYY-MM-DD.')
  .refine((v) => {
    const d = new Date(`${v}T00:00:00Z`);
    return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === v;
  }, 'No such date.');

export const dispatchOrdersQuery = z
  .object({
    page: z.coerce.number().int('The page is a whole number.').min(1, 'Pages start at 1.').max(100000, 'No such page.').default(1),
    pageSize: z.coerce.number().int('The page size is a whole number.').min(10, 'Show at least 10 orders a page.').max(100, 'Show at most 100 orders a page.').default(25),
    sort: z.enum(ORDER_SORTS, `Sort by one of: ${ORDER_SORTS.join(', ')}.`).default('createdAt'),
    dir: z.enum(['asc', 'desc'], 'The direction is asc or desc.').default('desc'),
    state: z.enum(ORDER_STATES, `The state is one of: ${ORDER_STATES.join(', ')}.`).optional(),
    kind: z.enum(ORDER_KINDS, `The kind is one of: ${ORDER_KINDS.join(', ')}.`).optional(),
    from: day.optional(),
    to: day.optional(),
    q: z.string().trim().max(100, 'Search with at most 100 characters.').optional(),
  })
  .refine((v) => !v.from || !v.to || v.from <= v.to, { path: ['from'], message: 'The first day must not come after the last.' });
export type DispatchOrdersQuery = z.infer<typeof dispatchOrdersQuery>;

export const DEFAULT_ORDERS_QUERY: DispatchOrdersQuery = dispatchOrdersQuery.parse({});

/** Reads the query from URL search parameters; empty values count as absent. */
export function ordersQueryFrom(params: URLSearchParams): ReturnType<typeof dispatchOrdersQuery.safeParse> {
  return dispatchOrdersQuery.safeParse(Object.fromEntries([...params].filter(([, value]) => value.trim() !== '')));
}

/** The query as URL search parameters, leaving out defaults so a shared link stays short. */
export function ordersQuerySearch(query: DispatchOrdersQuery): URLSearchParams {
  const search = new URLSearchParams();
  for (const key of Object.keys(query) as (keyof DispatchOrdersQuery)[]) {
    const value = query[key];
    if (value === undefined || value === '' || value === DEFAULT_ORDERS_QUERY[key]) continue;
    search.set(key, String(value));
  }
  return search;
}

export interface DispatchOrderRow {
  number: string;
  createdAt: string;
  email: string;
  status: OrderState;
  kind: OrderKind;
  total: number;
  currency: string;
  /** How many lines the order has. */
  lines: number;
}

export interface DispatchOrderList {
  rows: DispatchOrderRow[];
  total: number;
  page: number;
  pageSize: number;
}

export interface TimelineEntry {
  at: string;
  kind: 'created' | 'paid' | 'event' | 'fulfilment' | 'refund' | 'mail' | 'note';
  label: string;
}

export interface DispatchOrderDetail {
  number: string;
  status: OrderState;
  nextStates: OrderState[];
  kind: OrderKind;
  email: string;
  currency: string;
  subtotal: number;
  shipping: number;
  taxIncluded: number;
  total: number;
  refunded: number;
  shippingRefunded: number;
  /** What can still be refunded: settled and pending refunds taken off. */
  refundable: { order: number; shipping: number };
  createdAt: string;
  paidAt: string | null;
  shippedAt: string | null;
  note: string | null;
  licensee: { name: string | null; organisation: string | null; intendedUse: string | null };
  shippingAddress: ShippingAddress | null;
  lines: {
    id: number;
    kind: 'licence' | 'print';
    workTitle: string;
    workSlug: string;
    description: string;
    detail: string;
    quantity: number;
    unitPrice: number;
    subtotal: number;
    editionNumbers: { label: string; state: 'reserved' | 'sold'; certificateSerial: string | null }[];
    licence: { id: string; status: string; startsOn: string; endsOn: string | null; revokedReason: string | null } | null;
    refunded: number;
    refundable: number;
    /** Print lines: the lab pack if prepared, and why it cannot be prepared now (null when it can). */
    lab: { pack: LabPackView | null; refusal: string | null } | null;
  }[];
  timeline: TimelineEntry[];
  /** The fulfilment steps open now (none for licence-only orders or when every print was refunded). */
  fulfilmentSteps: ('in_production' | 'shipped' | 'delivered')[];
  refunds: RefundView[];
  mails: { at: string; to: string; subject: string; error: string | null }[];
  audit: AuditView[];
}
