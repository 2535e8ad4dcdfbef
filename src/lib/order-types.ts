/** The buyer's view of an order, as pages and islands receive it. */
export interface OrderView {
  number: string;
  status: string;
  currency: string;
  subtotal: number;
  shipping: number;
  taxIncluded: number;
  total: number;
  createdAt: string;
  paidAt: string | null;
  note: string | null;
  /** Set once the prints have shipped. */
  tracking: { carrier: string; number: string } | null;
  lines: {
    kind: 'licence' | 'print';
    workTitle: string;
    workSlug: string;
    description: string;
    detail: string;
    quantity: number;
    subtotal: number;
    /** Sold numbers as "n/N", each with its certificate of authenticity's serial. */
    editionNumbers: { label: string; serial: string | null }[];
    licence: { id: string; status: string; startsOn: string; endsOn: string | null } | null;
  }[];
}
