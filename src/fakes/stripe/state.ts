/**
 * Everything the payment fake knows, as one JSON document. Object shapes follow the `stripe`
 * package's own types (top-level fields picked from them), trimmed to what a shop reads.
 */
import fs from 'node:fs';
import path from 'node:path';
import type Stripe from 'stripe';

export type Address = Stripe.Address;

export interface ShippingDetails {
  name: string;
  address: Address;
}

export type PriceObject = Pick<
  Stripe.Price,
  'id' | 'object' | 'active' | 'billing_scheme' | 'created' | 'currency' | 'livemode' | 'lookup_key' | 'metadata' | 'nickname' | 'recurring' | 'tax_behavior' | 'type' | 'unit_amount'
> & { product: string };

export type LineItemObject = Pick<
  Stripe.LineItem,
  'id' | 'object' | 'amount_discount' | 'amount_subtotal' | 'amount_tax' | 'amount_total' | 'currency' | 'description' | 'metadata' | 'quantity'
> & { price: PriceObject };

export interface ListObject<T> {
  object: 'list';
  data: T[];
  has_more: boolean;
  url: string;
}

export type SessionObject = Pick<
  Stripe.Checkout.Session,
  | 'id'
  | 'object'
  | 'allowed_payment_method_types'
  | 'amount_subtotal'
  | 'amount_total'
  | 'cancel_url'
  | 'client_reference_id'
  | 'collected_information'
  | 'created'
  | 'currency'
  | 'customer'
  | 'customer_details'
  | 'customer_email'
  | 'expires_at'
  | 'livemode'
  | 'locale'
  | 'metadata'
  | 'mode'
  | 'payment_method_types'
  | 'payment_status'
  | 'shipping_address_collection'
  | 'status'
  | 'submit_type'
  | 'success_url'
  | 'total_details'
  | 'ui_mode'
  | 'url'
> & {
  payment_intent: string | null;
  /** Older API versions put the collected address here; newer ones under `collected_information`. Both are filled. */
  shipping_details: ShippingDetails | null;
};

export interface LastPaymentError {
  type: 'card_error';
  code: string;
  decline_code: string;
  message: string;
  charge: string;
  payment_method: { id: string; object: 'payment_method'; type: 'card' };
  doc_url: string | null;
}

export type PaymentIntentObject = Pick<
  Stripe.PaymentIntent,
  | 'id'
  | 'object'
  | 'amount'
  | 'amount_capturable'
  | 'amount_received'
  | 'canceled_at'
  | 'cancellation_reason'
  | 'capture_method'
  | 'client_secret'
  | 'confirmation_method'
  | 'created'
  | 'currency'
  | 'customer'
  | 'description'
  | 'livemode'
  | 'metadata'
  | 'payment_method_types'
  | 'receipt_email'
  | 'status'
> & {
  last_payment_error: LastPaymentError | null;
  latest_charge: string | null;
  payment_method: string | null;
  shipping: (ShippingDetails & { carrier: null; phone: null; tracking_number: null }) | null;
};

export interface CardDetails {
  brand: string;
  country: string | null;
  exp_month: number;
  exp_year: number;
  funding: 'credit';
  last4: string;
  network: string;
}

export type ChargeObject = Pick<
  Stripe.Charge,
  | 'id'
  | 'object'
  | 'amount'
  | 'amount_captured'
  | 'amount_refunded'
  | 'balance_transaction'
  | 'billing_details'
  | 'captured'
  | 'created'
  | 'currency'
  | 'customer'
  | 'description'
  | 'disputed'
  | 'failure_code'
  | 'failure_message'
  | 'livemode'
  | 'metadata'
  | 'paid'
  | 'receipt_email'
  | 'receipt_url'
  | 'refunded'
  | 'status'
> & {
  payment_intent: string;
  payment_method: string;
  payment_method_details: { type: 'card'; card: CardDetails };
  outcome: {
    network_status: string;
    reason: string | null;
    risk_level: string;
    seller_message: string;
    type: string;
    advice_code: null;
    network_advice_code: null;
    network_decline_code: null;
  };
  shipping: PaymentIntentObject['shipping'];
};

export type RefundObject = Pick<
  Stripe.Refund,
  'id' | 'object' | 'amount' | 'balance_transaction' | 'created' | 'currency' | 'metadata' | 'reason' | 'receipt_number' | 'status'
> & { charge: string; payment_intent: string };

export type ApiObject = SessionObject | PaymentIntentObject | ChargeObject | RefundObject;

export interface EventObject {
  id: string;
  object: 'event';
  api_version: string;
  created: number;
  data: { object: ApiObject; previous_attributes?: Record<string, unknown> };
  livemode: false;
  pending_webhooks: number;
  request: { id: string | null; idempotency_key: string | null };
  type: string;
}

/** What the hosted page knows about a line beyond the API's line item. */
export interface LineDisplay {
  name: string;
  description: string | null;
}

export interface SessionRecord {
  session: SessionObject;
  lineItems: LineItemObject[];
  display: LineDisplay[];
  /** `payment_intent_data[...]` kept for when the buyer pays. */
  paymentIntentData: { metadata: Record<string, string>; description: string | null };
  /** Each card try on the hosted page, in order. */
  attempts: { at: number; last4: string; outcome: 'paid' | 'declined'; code: string | null }[];
}

export interface DeliveryAttempt {
  /** Epoch ms. */
  at: number;
  /** HTTP status, or null when the endpoint could not be reached. */
  status: number | null;
  error: string | null;
  durationMs: number;
}

export interface DeliveryRecord {
  id: string;
  eventId: string;
  eventType: string;
  /** Deliveries with the same group (the checkout session) are sent strictly in creation order. */
  group: string;
  url: string;
  /** Epoch ms. */
  createdAt: number;
  state: 'pending' | 'delivered' | 'failed';
  attempts: DeliveryAttempt[];
  /** Epoch ms of the next try while pending. */
  nextAttemptAt: number | null;
}

export interface IdempotencyRecord {
  /** Method, path and the parameters in canonical form. */
  fingerprint: string;
  status: number;
  body: string;
  createdAt: number;
}

export interface FakeState {
  version: 1;
  sessions: Record<string, SessionRecord>;
  paymentIntents: Record<string, PaymentIntentObject>;
  charges: Record<string, ChargeObject>;
  refunds: Record<string, RefundObject>;
  /** In creation order. */
  events: EventObject[];
  /** In creation order. */
  deliveries: DeliveryRecord[];
  idempotency: Record<string, IdempotencyRecord>;
}

export function emptyState(): FakeState {
  return { version: 1, sessions: {}, paymentIntents: {}, charges: {}, refunds: {}, events: [], deliveries: [], idempotency: {} };
}

/** Reads the state file; a missing file is an empty state, an unreadable one an error. */
export function loadState(file: string): FakeState {
  let text: string;
  try {
    text = fs.readFileSync(file, 'utf8');
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return emptyState();
    throw error;
  }
  const parsed = JSON.parse(text) as Partial<FakeState>;
  if (parsed.version !== 1) throw new Error(`${file} is not a state file this version understands`);
  return { ...emptyState(), ...parsed } as FakeState;
}

let tempCounter = 0;

/** Writes to a temporary file in the same folder, then renames it over the old one. */
export function saveState(file: string, state: FakeState): void {
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const temp = `${file}.${process.pid}.${++tempCounter}.tmp`;
  try {
    fs.writeFileSync(temp, JSON.stringify(state));
    fs.renameSync(temp, file);
  } catch (error) {
    fs.rmSync(temp, { force: true });
    throw error;
  }
}
