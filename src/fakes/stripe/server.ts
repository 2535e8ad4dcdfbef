/**
 * A local stand-in for the payment provider's API, for development and tests: Checkout Sessions, a
 * hosted pay page driven by the documented test cards, payment intents, charges, refunds, events and
 * signed webhooks with retries. It speaks the same HTTP the official SDK speaks (form-encoded bodies,
 * Bearer `sk_test_…` keys, JSON objects and errors), so the app talks to it by pointing the SDK's
 * host/port/protocol here. State lives in one JSON file written after every change, so a restart
 * loses nothing. Never imported by app code; started by `cli.ts` and by the tests.
 */
import { randomBytes } from 'node:crypto';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import Stripe from 'stripe';
import { cardBrand, cardOutcome, luhnValid, normaliseCardNumber } from './cards';
import { canonical, FormError, parseForm, type FormObject, type FormValue } from './form';
import { EMPTY_FORM, renderEventsPage, renderMessagePage, renderPayPage, type PayFormValues } from './html';
import { formatMinor, knownCurrency, THREE_DECIMAL } from './money';
import { signatureHeader } from './signature';
import {
  loadState,
  saveState,
  type ApiObject,
  type ChargeObject,
  type DeliveryRecord,
  type EventObject,
  type FakeState,
  type LineItemObject,
  type PaymentIntentObject,
  type RefundObject,
  type SessionObject,
  type SessionRecord,
  type ShippingDetails,
} from './state';

export type { DeliveryRecord, EventObject } from './state';

export interface StripeFakeOptions {
  /** 0 picks a free port. */
  port: number;
  host?: string;
  /** JSON file holding every object, event and delivery (created with its folder if missing). */
  stateFile: string;
  /** Where events are POSTed; null or empty records events without sending them. */
  webhookUrl?: string | null;
  /** The endpoint secret (`whsec_…`) the signatures are made with. */
  webhookSecret: string;
  /** Base of the hosted pay page URLs given out in `session.url`; defaults to where the fake listens. */
  publicUrl?: string;
  /**
   * Wait before each retry of a failed delivery, in ms; the number of tries is this length + 1.
   * Default 1 s, 2 s, 4 s, … capped at 60 s, 12 retries.
   */
  retryDelaysMs?: readonly number[];
  /** How long one webhook POST may take before it counts as failed. Default 10 s. */
  webhookTimeoutMs?: number;
  /** How often open sessions are checked against `expires_at`. Default 1 s. */
  expirySweepMs?: number;
  /** Epoch milliseconds for timestamps and expiry; tests move it forward. Default Date.now. */
  clock?: () => number;
  /** Shown on the pay page. Default "Stillmark". */
  shopName?: string;
  /** `api_version` on events. Default the installed SDK's version. */
  apiVersion?: string;
}

export interface StripeFake {
  url: string;
  port: number;
  close(): Promise<void>;
  /** Every webhook delivery with its attempts, in creation order (copies). */
  deliveries(): DeliveryRecord[];
  /** Every event, in creation order (copies). */
  events(): EventObject[];
}

export const DEFAULT_RETRY_DELAYS_MS: readonly number[] = [
  1_000, 2_000, 4_000, 8_000, 16_000, 32_000, 60_000, 60_000, 60_000, 60_000, 60_000, 60_000,
];

const MAX_BODY_BYTES = 1024 * 1024;
/** Idempotency results are kept this long (the documented pruning age is at least 24 h). */
const IDEMPOTENCY_TTL_MS = 24 * 60 * 60 * 1000;
const MAX_IDEMPOTENCY_KEY_LENGTH = 255;
/** Largest amount: 8 digits in minor units (TRADE-FACTS §3.3). */
const MAX_AMOUNT = 99_999_999;
const MIN_EXPIRY_S = 30 * 60;
const MAX_EXPIRY_S = 24 * 60 * 60;
/** Requests take a moment to arrive; an `expires_at` this many seconds short of the window still counts. */
const EXPIRY_SLACK_S = 10;
const REFUND_REASONS = new Set(['duplicate', 'fraudulent', 'requested_by_customer']);

// ---------------------------------------------------------------------------------------------
// Errors in the API's shape

class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly type: string,
    message: string,
    readonly code: string | null = null,
    readonly param: string | null = null,
    /** Parameter checks fail before anything runs; such answers are not kept for the idempotency key. */
    readonly beforeExecution = false,
    readonly extra: Record<string, unknown> = {},
  ) {
    super(message);
  }

  toJSON(): { error: Record<string, unknown> } {
    return { error: { type: this.type, code: this.code, message: this.message, param: this.param, ...this.extra } };
  }
}

const invalid = (param: string, message: string, code = 'parameter_invalid_string') =>
  new ApiError(400, 'invalid_request_error', message, code, param, true);
const missing = (param: string) =>
  new ApiError(400, 'invalid_request_error', `Missing required param: ${param}.`, 'parameter_missing', param, true);
const unknownParam = (param: string, hint = '') =>
  new ApiError(400, 'invalid_request_error', `Received unknown parameter: ${param}${hint}`, 'parameter_unknown', param, true);
const noSuch = (what: string, id: string, param: string) =>
  new ApiError(404, 'invalid_request_error', `No such ${what}: '${id}'`, 'resource_missing', param);

// ---------------------------------------------------------------------------------------------
// Reading parameters

function paramName(prefix: string, key: string): string {
  return prefix === '' ? key : `${prefix}[${key}]`;
}

function checkKeys(obj: FormObject, allowed: readonly string[], prefix = '', hints: Record<string, string> = {}): void {
  for (const key of Object.keys(obj)) {
    if (!allowed.includes(key)) throw unknownParam(paramName(prefix, key), hints[key] ?? '');
  }
}

function getString(obj: FormObject, key: string, prefix = ''): string | undefined {
  const value = obj[key];
  if (value === undefined) return undefined;
  if (typeof value !== 'string') throw invalid(paramName(prefix, key), `Invalid string: ${paramName(prefix, key)}`);
  return value;
}

function getObject(obj: FormObject, key: string, prefix = ''): FormObject | undefined {
  const value = obj[key];
  if (value === undefined || value === '') return undefined;
  if (typeof value === 'string' || Array.isArray(value)) {
    throw invalid(paramName(prefix, key), `Invalid object: ${paramName(prefix, key)}`, 'parameter_invalid_object');
  }
  return value;
}

function getArray(obj: FormObject, key: string, prefix = ''): FormValue[] | undefined {
  const value = obj[key];
  if (value === undefined || value === '') return undefined;
  if (!Array.isArray(value)) throw invalid(paramName(prefix, key), `Invalid array: ${paramName(prefix, key)}`, 'parameter_invalid_array');
  return value;
}

function getInteger(obj: FormObject, key: string, prefix = ''): number | undefined {
  const text = getString(obj, key, prefix);
  if (text === undefined || text === '') return undefined;
  const name = paramName(prefix, key);
  if (!/^-?\d+$/.test(text) || !Number.isSafeInteger(Number(text))) {
    throw invalid(name, `Invalid integer: ${text}`, 'parameter_invalid_integer');
  }
  return Number(text);
}

function getMetadata(obj: FormObject, key: string, prefix = ''): Record<string, string> {
  const value = getObject(obj, key, prefix);
  const out: Record<string, string> = {};
  if (!value) return out;
  for (const [k, v] of Object.entries(value)) {
    const name = `${paramName(prefix, key)}[${k}]`;
    if (typeof v !== 'string') throw invalid(name, `Invalid string: ${name}`);
    if (k.length > 40) throw invalid(name, 'Metadata keys can be at most 40 characters long.');
    if (v.length > 500) throw invalid(name, 'Metadata values can be at most 500 characters long.');
    if (v !== '') out[k] = v;
  }
  if (Object.keys(out).length > 50) throw invalid(paramName(prefix, key), 'Metadata can have at most 50 keys.');
  return out;
}

function getExpand(params: FormObject, allowed: readonly string[]): string[] {
  const list = getArray(params, 'expand') ?? [];
  return list.map((item, i) => {
    if (typeof item !== 'string') throw invalid(`expand[${i}]`, `Invalid string: expand[${i}]`);
    if (!allowed.includes(item)) {
      throw new ApiError(400, 'invalid_request_error', `This property cannot be expanded (${item}).`, null, `expand[${i}]`, true);
    }
    return item;
  });
}

function checkUrl(value: string, param: string): string {
  let parsed: URL | null = null;
  try {
    // The placeholder's braces are not valid in every URL position; check the URL without it.
    parsed = new URL(value.replaceAll('{CHECKOUT_SESSION_ID}', 'x'));
  } catch {
    parsed = null;
  }
  if (!parsed || (parsed.protocol !== 'http:' && parsed.protocol !== 'https:') || value.length > 5000) {
    throw invalid(param, 'Not a valid URL', 'url_invalid');
  }
  return value;
}

const EMAIL_PATTERN = /^[^\s@]+@[^\s@]+\.[^\s@]+$/;

// ---------------------------------------------------------------------------------------------
// Small helpers

const ALPHABET = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz';
function randomId(prefix: string, length = 24): string {
  const bytes = randomBytes(length);
  let out = prefix;
  for (const b of bytes) out += ALPHABET[b % ALPHABET.length];
  return out;
}

function clone<T>(value: T): T {
  return structuredClone(value);
}

function readBody(req: http.IncomingMessage): Promise<string> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let size = 0;
    req.on('data', (chunk: Buffer) => {
      size += chunk.length;
      if (size > MAX_BODY_BYTES) {
        reject(new ApiError(413, 'invalid_request_error', 'The request body is too large.'));
        req.destroy();
        return;
      }
      chunks.push(chunk);
    });
    req.on('end', () => resolve(Buffer.concat(chunks).toString('utf8')));
    req.on('error', reject);
  });
}

function successUrlFor(session: SessionObject): string {
  return (session.success_url ?? '').replaceAll('{CHECKOUT_SESSION_ID}', session.id);
}

// ---------------------------------------------------------------------------------------------

export async function startStripeFake(options: StripeFakeOptions): Promise<StripeFake> {
  const host = options.host ?? '127.0.0.1';
  const stateFile = options.stateFile;
  const webhookUrl = options.webhookUrl ? options.webhookUrl : null;
  const secret = options.webhookSecret;
  const retryDelays = [...(options.retryDelaysMs ?? DEFAULT_RETRY_DELAYS_MS)];
  const maxAttempts = retryDelays.length + 1;
  const webhookTimeoutMs = options.webhookTimeoutMs ?? 10_000;
  const clock = options.clock ?? Date.now;
  const shopName = options.shopName ?? 'Stillmark';
  const apiVersion = options.apiVersion ?? Stripe.API_VERSION;
  const nowS = () => Math.floor(clock() / 1000);

  const state: FakeState = loadState(stateFile);
  const eventsById = new Map(state.events.map((ev) => [ev.id, ev]));
  let publicUrl = options.publicUrl?.replace(/\/+$/, '') ?? '';

  let closing = false;
  let closed = false;

  function persist(): void {
    if (closed) return;
    saveState(stateFile, state);
  }

  // -------------------------------------------------------------------------------------------
  // Events and webhook deliveries

  const busy = new Set<string>();
  const timers = new Map<string, NodeJS.Timeout>();
  const inflight = new Map<AbortController, Promise<void>>();

  function emit(type: string, object: ApiObject, group: string, request: EventObject['request']): EventObject {
    const event: EventObject = {
      id: randomId('evt_'),
      object: 'event',
      api_version: apiVersion,
      created: nowS(),
      data: { object: clone(object) },
      livemode: false,
      pending_webhooks: webhookUrl ? 1 : 0,
      request,
      type,
    };
    state.events.push(event);
    eventsById.set(event.id, event);
    if (webhookUrl) {
      state.deliveries.push({
        id: randomId('whd_'),
        eventId: event.id,
        eventType: type,
        group,
        url: webhookUrl,
        createdAt: Date.now(),
        state: 'pending',
        attempts: [],
        nextAttemptAt: Date.now(),
      });
      // After the current request has saved the new event.
      setImmediate(() => pump(group));
    }
    return event;
  }

  /** Sends the oldest pending delivery of a group, then the next; one at a time per group. */
  function pump(group: string): void {
    if (closing || busy.has(group)) return;
    const head = state.deliveries.find((d) => d.group === group && d.state === 'pending');
    const timer = timers.get(group);
    if (timer) {
      clearTimeout(timer);
      timers.delete(group);
    }
    if (!head) return;
    const wait = (head.nextAttemptAt ?? 0) - Date.now();
    if (wait > 0) {
      timers.set(
        group,
        setTimeout(() => {
          timers.delete(group);
          pump(group);
        }, wait),
      );
      return;
    }
    busy.add(group);
    void attempt(head).finally(() => {
      busy.delete(group);
      pump(group);
    });
  }

  function attempt(delivery: DeliveryRecord): Promise<void> {
    const controller = new AbortController();
    const run = (async () => {
      const event = eventsById.get(delivery.eventId);
      if (!event) {
        delivery.state = 'failed';
        delivery.nextAttemptAt = null;
        persist();
        return;
      }
      const payload = JSON.stringify(event, null, 2);
      const started = Date.now();
      let status: number | null = null;
      let error: string | null = null;
      const timeout = setTimeout(() => controller.abort(new Error('timed out')), webhookTimeoutMs);
      try {
        const response = await fetch(delivery.url, {
          method: 'POST',
          headers: {
            'content-type': 'application/json; charset=utf-8',
            'stripe-signature': signatureHeader(secret, payload),
            'user-agent': 'stillmark-payment-fake/1',
          },
          body: payload,
          redirect: 'manual',
          signal: controller.signal,
        });
        status = response.status;
        await response.arrayBuffer().catch(() => undefined);
      } catch (err) {
        if (closing) return; // Shut down mid-send: stays pending and is resumed on the next start.
        const cause = err instanceof Error ? ((err.cause as Error | undefined)?.message ?? err.message) : String(err);
        error = controller.signal.aborted ? 'timed out' : cause;
      } finally {
        clearTimeout(timeout);
      }
      if (closing) return;
      delivery.attempts.push({ at: started, status, error, durationMs: Date.now() - started });
      if (status !== null && status >= 200 && status < 300) {
        delivery.state = 'delivered';
        delivery.nextAttemptAt = null;
      } else if (delivery.attempts.length >= maxAttempts) {
        delivery.state = 'failed';
        delivery.nextAttemptAt = null;
      } else {
        delivery.nextAttemptAt = Date.now() + (retryDelays[delivery.attempts.length - 1] ?? 0);
      }
      persist();
    })();
    inflight.set(controller, run);
    return run.finally(() => inflight.delete(controller));
  }

  /** The group a PaymentIntent's events are ordered in: its checkout session. */
  function groupOfPaymentIntent(piId: string): string {
    for (const record of Object.values(state.sessions)) {
      if (record.session.payment_intent === piId) return record.session.id;
    }
    return piId;
  }

  // -------------------------------------------------------------------------------------------
  // Sessions

  function expireSession(record: SessionRecord, request: EventObject['request']): void {
    const s = record.session;
    s.status = 'expired';
    s.url = null;
    if (s.payment_intent) {
      const pi = state.paymentIntents[s.payment_intent];
      if (pi && pi.status !== 'succeeded' && pi.status !== 'canceled') {
        pi.status = 'canceled';
        pi.canceled_at = nowS();
        pi.cancellation_reason = 'abandoned';
      }
    }
    emit('checkout.session.expired', s, s.id, request);
  }

  /** Expires an open session whose time is up; true when it did. */
  function expireIfDue(record: SessionRecord): boolean {
    if (record.session.status === 'open' && record.session.expires_at <= nowS()) {
      expireSession(record, { id: null, idempotency_key: null });
      return true;
    }
    return false;
  }

  function sweep(): void {
    if (closing) return;
    let changed = false;
    for (const record of Object.values(state.sessions)) changed = expireIfDue(record) || changed;
    const cutoff = Date.now() - IDEMPOTENCY_TTL_MS;
    for (const [key, rec] of Object.entries(state.idempotency)) {
      if (rec.createdAt < cutoff) {
        delete state.idempotency[key];
        changed = true;
      }
    }
    if (changed) persist();
  }

  function createSession(params: FormObject): SessionObject {
    checkKeys(params, [
      'mode',
      'line_items',
      'customer_email',
      'client_reference_id',
      'metadata',
      'success_url',
      'cancel_url',
      'shipping_address_collection',
      'expires_at',
      'payment_intent_data',
      'payment_method_types',
      'allowed_payment_method_types',
      'expand',
      'locale',
      'submit_type',
      'ui_mode',
    ]);
    const mode = getString(params, 'mode');
    if (!mode) throw missing('mode');
    if (mode !== 'payment') throw invalid('mode', `This test server only handles mode "payment", not "${mode}".`, 'parameter_invalid_string');
    const uiMode = getString(params, 'ui_mode');
    if (uiMode !== undefined && uiMode !== 'hosted') throw invalid('ui_mode', 'Only the hosted page is available here.');
    // Older API versions call it payment_method_types, newer ones allowed_payment_method_types.
    let allowedTypes: string[] | null = null;
    for (const name of ['payment_method_types', 'allowed_payment_method_types']) {
      const types = getArray(params, name);
      if (!types) continue;
      types.forEach((t, i) => {
        if (t !== 'card') throw invalid(`${name}[${i}]`, `The payment method type "${String(t)}" is not available here; use card.`);
      });
      if (name === 'allowed_payment_method_types') allowedTypes = ['card'];
    }

    const rawItems = getArray(params, 'line_items');
    if (!rawItems || rawItems.length === 0) throw missing('line_items');
    const created = nowS();
    const lineItems: LineItemObject[] = [];
    const display: SessionRecord['display'] = [];
    let currency: string | null = null;
    rawItems.forEach((raw, i) => {
      const prefix = `line_items[${i}]`;
      if (typeof raw !== 'object' || Array.isArray(raw)) throw invalid(prefix, `Invalid object: ${prefix}`, 'parameter_invalid_object');
      checkKeys(raw, ['price_data', 'quantity'], prefix, { price: ' (this test server takes price_data only)' });
      const priceData = getObject(raw, 'price_data', prefix);
      if (!priceData) throw missing(`${prefix}[price_data]`);
      const pdPrefix = `${prefix}[price_data]`;
      checkKeys(priceData, ['currency', 'unit_amount', 'product_data'], pdPrefix, { product: ' (use product_data)' });
      const itemCurrency = getString(priceData, 'currency', pdPrefix);
      if (!itemCurrency) throw missing(`${pdPrefix}[currency]`);
      if (!/^[a-z]{3}$/.test(itemCurrency) || !knownCurrency(itemCurrency)) {
        throw invalid(`${pdPrefix}[currency]`, `Invalid currency: ${itemCurrency}. Use a lowercase ISO 4217 code such as gbp.`, 'parameter_invalid_string');
      }
      if (currency !== null && currency !== itemCurrency) {
        throw invalid(`${pdPrefix}[currency]`, 'All line items must use the same currency.');
      }
      currency = itemCurrency;
      const unitAmount = getInteger(priceData, 'unit_amount', pdPrefix);
      if (unitAmount === undefined) throw missing(`${pdPrefix}[unit_amount]`);
      if (unitAmount < 0) throw invalid(`${pdPrefix}[unit_amount]`, 'The unit amount must be zero or more.', 'parameter_invalid_integer');
      if (THREE_DECIMAL.has(itemCurrency) && unitAmount % 10 !== 0) {
        throw invalid(`${pdPrefix}[unit_amount]`, `Amounts in ${itemCurrency} must end in 0.`, 'invalid_charge_amount');
      }
      const productData = getObject(priceData, 'product_data', pdPrefix);
      if (!productData) throw missing(`${pdPrefix}[product_data]`);
      const prodPrefix = `${pdPrefix}[product_data]`;
      checkKeys(productData, ['name', 'description', 'metadata', 'images'], prodPrefix);
      const name = getString(productData, 'name', prodPrefix);
      if (name === undefined) throw missing(`${prodPrefix}[name]`);
      const description = getString(productData, 'description', prodPrefix) ?? null;
      // The API takes an empty string as "unset", which these fields cannot be: it refuses them.
      for (const [field, value] of [['name', name], ['description', description]] as const) {
        if (value !== null && value.trim() === '') {
          throw invalid(
            `${prodPrefix}[${field}]`,
            `${prodPrefix}[${field}] was an empty string, which would unset it, and it cannot be unset. Leave it out or give a value.`,
            'parameter_invalid_empty',
          );
        }
      }
      getMetadata(productData, 'metadata', prodPrefix);
      const quantity = getInteger(raw, 'quantity', prefix);
      if (quantity === undefined) throw missing(`${prefix}[quantity]`);
      if (quantity < 1 || quantity > 999_999) throw invalid(`${prefix}[quantity]`, 'The quantity must be between 1 and 999999.', 'parameter_invalid_integer');
      const amount = unitAmount * quantity;
      lineItems.push({
        id: randomId('li_'),
        object: 'item',
        amount_discount: 0,
        amount_subtotal: amount,
        amount_tax: 0,
        amount_total: amount,
        currency: itemCurrency,
        description: name,
        metadata: {},
        quantity,
        price: {
          id: randomId('price_'),
          object: 'price',
          active: false,
          billing_scheme: 'per_unit',
          created,
          currency: itemCurrency,
          livemode: false,
          lookup_key: null,
          metadata: {},
          nickname: null,
          product: randomId('prod_', 14),
          recurring: null,
          tax_behavior: 'unspecified',
          type: 'one_time',
          unit_amount: unitAmount,
        },
      });
      display.push({ name, description });
    });
    const total = lineItems.reduce((sum, item) => sum + item.amount_total, 0);
    if (total > MAX_AMOUNT) {
      throw new ApiError(400, 'invalid_request_error', `The total must be at most ${MAX_AMOUNT} in minor units.`, 'amount_too_large', 'line_items', true);
    }
    if (total <= 0 || (currency === 'usd' && total < 50)) {
      throw new ApiError(400, 'invalid_request_error', 'The total is below the smallest amount that can be charged.', 'amount_too_small', 'line_items', true);
    }

    const successUrl = getString(params, 'success_url');
    if (!successUrl) throw missing('success_url');
    checkUrl(successUrl, 'success_url');
    const cancelUrl = getString(params, 'cancel_url') || null;
    if (cancelUrl) checkUrl(cancelUrl, 'cancel_url');

    const customerEmail = getString(params, 'customer_email') || null;
    if (customerEmail && !EMAIL_PATTERN.test(customerEmail)) throw invalid('customer_email', `Invalid email address: ${customerEmail}`, 'email_invalid');
    const clientReferenceId = getString(params, 'client_reference_id') || null;
    if (clientReferenceId && clientReferenceId.length > 200) throw invalid('client_reference_id', 'client_reference_id can be at most 200 characters long.');
    const metadata = getMetadata(params, 'metadata');

    let allowedCountries: string[] | null = null;
    const sac = getObject(params, 'shipping_address_collection');
    if (sac) {
      checkKeys(sac, ['allowed_countries'], 'shipping_address_collection');
      const list = getArray(sac, 'allowed_countries', 'shipping_address_collection');
      if (!list || list.length === 0) throw missing('shipping_address_collection[allowed_countries]');
      allowedCountries = list.map((c, i) => {
        if (typeof c !== 'string' || !/^[A-Z]{2}$/.test(c)) {
          throw invalid(`shipping_address_collection[allowed_countries][${i}]`, `Invalid country code: ${String(c)}`);
        }
        return c;
      });
    }

    const expiresAt = getInteger(params, 'expires_at') ?? created + MAX_EXPIRY_S;
    if (expiresAt < created + MIN_EXPIRY_S - EXPIRY_SLACK_S || expiresAt > created + MAX_EXPIRY_S + EXPIRY_SLACK_S) {
      throw invalid('expires_at', 'expires_at must be between 30 minutes and 24 hours from now.', 'parameter_invalid_integer');
    }

    const pid = getObject(params, 'payment_intent_data');
    let piMetadata: Record<string, string> = {};
    let piDescription: string | null = null;
    if (pid) {
      checkKeys(pid, ['metadata', 'description'], 'payment_intent_data');
      piMetadata = getMetadata(pid, 'metadata', 'payment_intent_data');
      piDescription = getString(pid, 'description', 'payment_intent_data') || null;
    }
    const locale = getString(params, 'locale') || null;
    const submitType = getString(params, 'submit_type') || null;
    getExpand(params, ['line_items']);

    const id = randomId('cs_test_', 58);
    const session: SessionObject = {
      id,
      object: 'checkout.session',
      allowed_payment_method_types: allowedTypes,
      amount_subtotal: total,
      amount_total: total,
      cancel_url: cancelUrl,
      client_reference_id: clientReferenceId,
      collected_information: null,
      created,
      currency,
      customer: null,
      customer_details: null,
      customer_email: customerEmail,
      expires_at: expiresAt,
      livemode: false,
      locale: locale as SessionObject['locale'],
      metadata,
      mode: 'payment',
      payment_intent: null,
      payment_method_types: ['card'],
      payment_status: 'unpaid',
      shipping_address_collection: allowedCountries
        ? { allowed_countries: allowedCountries as NonNullable<SessionObject['shipping_address_collection']>['allowed_countries'] }
        : null,
      shipping_details: null,
      status: 'open',
      submit_type: submitType as SessionObject['submit_type'],
      success_url: successUrl,
      total_details: { amount_discount: 0, amount_shipping: 0, amount_tax: 0 },
      ui_mode: 'hosted',
      url: `${publicUrl}/pay/${id}`,
    };
    state.sessions[id] = {
      session,
      lineItems,
      display,
      paymentIntentData: { metadata: piMetadata, description: piDescription },
      attempts: [],
    };
    return session;
  }

  function lineItemList(record: SessionRecord) {
    return {
      object: 'list' as const,
      data: clone(record.lineItems),
      has_more: false,
      url: `/v1/checkout/sessions/${record.session.id}/line_items`,
    };
  }

  function sessionView(record: SessionRecord, expand: string[]): Record<string, unknown> {
    const out: Record<string, unknown> = clone(record.session);
    if (expand.includes('line_items')) out.line_items = lineItemList(record);
    const piId = record.session.payment_intent;
    if (piId && (expand.includes('payment_intent') || expand.includes('payment_intent.latest_charge'))) {
      const pi = state.paymentIntents[piId];
      if (pi) out.payment_intent = paymentIntentView(pi, expand.includes('payment_intent.latest_charge') ? ['latest_charge'] : []);
    }
    return out;
  }

  function paymentIntentView(pi: PaymentIntentObject, expand: string[]): Record<string, unknown> {
    const out: Record<string, unknown> = clone(pi);
    if (expand.includes('latest_charge') && pi.latest_charge) out.latest_charge = clone(state.charges[pi.latest_charge]) ?? pi.latest_charge;
    return out;
  }

  function findSession(id: string): SessionRecord {
    const record = state.sessions[id];
    if (!record) throw noSuch('checkout.session', id, 'session');
    return record;
  }

  // -------------------------------------------------------------------------------------------
  // Refunds

  function createRefund(params: FormObject, request: EventObject['request']): RefundObject {
    checkKeys(params, ['payment_intent', 'charge', 'amount', 'reason', 'metadata', 'expand']);
    const piId = getString(params, 'payment_intent') || null;
    const chargeId = getString(params, 'charge') || null;
    const amountParam = getInteger(params, 'amount');
    const reason = getString(params, 'reason') || null;
    const metadata = getMetadata(params, 'metadata');
    getExpand(params, []);
    if (!piId && !chargeId) {
      throw new ApiError(400, 'invalid_request_error', 'One of charge or payment_intent is required.', 'parameter_missing', 'payment_intent', true);
    }
    if (reason !== null && !REFUND_REASONS.has(reason)) {
      throw invalid('reason', `Invalid reason: must be one of ${[...REFUND_REASONS].join(', ')}`);
    }
    if (amountParam !== undefined && amountParam < 1) throw invalid('amount', 'Invalid positive integer', 'parameter_invalid_integer');

    let charge: ChargeObject | undefined;
    if (piId) {
      const pi = state.paymentIntents[piId];
      if (!pi) throw noSuch('payment_intent', piId, 'payment_intent');
      charge = pi.status === 'succeeded' && pi.latest_charge ? state.charges[pi.latest_charge] : undefined;
      if (!charge) {
        throw new ApiError(400, 'invalid_request_error', `This PaymentIntent (${piId}) does not have a successful charge to refund.`, 'payment_intent_unexpected_state', 'payment_intent');
      }
      if (chargeId && chargeId !== charge.id) {
        throw invalid('charge', `Charge ${chargeId} does not belong to PaymentIntent ${piId}.`);
      }
    } else if (chargeId) {
      charge = state.charges[chargeId];
      if (!charge) throw noSuch('charge', chargeId, 'charge');
      if (charge.status !== 'succeeded') {
        throw new ApiError(400, 'invalid_request_error', `Charge ${chargeId} was not paid, so it cannot be refunded.`, 'charge_not_refundable', 'charge');
      }
    }
    if (!charge) throw noSuch('charge', chargeId ?? '', 'charge');

    const remaining = charge.amount - charge.amount_refunded;
    if (remaining <= 0) {
      throw new ApiError(400, 'invalid_request_error', `Charge ${charge.id} has already been refunded.`, 'charge_already_refunded', 'charge');
    }
    const amount = amountParam ?? remaining;
    if (amount > remaining) {
      throw new ApiError(
        400,
        'invalid_request_error',
        `Refund amount (${formatMinor(amount, charge.currency)}) is greater than unrefunded amount on charge (${formatMinor(remaining, charge.currency)})`,
        'amount_too_large',
        'amount',
      );
    }
    const refund: RefundObject = {
      id: randomId('re_'),
      object: 'refund',
      amount,
      balance_transaction: randomId('txn_'),
      charge: charge.id,
      created: nowS(),
      currency: charge.currency,
      metadata,
      payment_intent: charge.payment_intent,
      reason: reason as RefundObject['reason'],
      receipt_number: null,
      status: 'succeeded',
    };
    state.refunds[refund.id] = refund;
    charge.amount_refunded += amount;
    charge.refunded = charge.amount_refunded === charge.amount;
    const group = groupOfPaymentIntent(charge.payment_intent);
    emit('charge.refunded', charge, group, request);
    emit('refund.created', refund, group, request);
    return refund;
  }

  // -------------------------------------------------------------------------------------------
  // The API

  function authenticate(req: http.IncomingMessage): void {
    const header = req.headers.authorization ?? '';
    let key = '';
    const bearer = /^Bearer\s+(\S+)$/i.exec(header);
    const basic = /^Basic\s+(\S+)$/i.exec(header);
    if (bearer) key = bearer[1] ?? '';
    else if (basic) key = Buffer.from(basic[1] ?? '', 'base64').toString('utf8').split(':')[0] ?? '';
    if (key === '') {
      throw new ApiError(401, 'invalid_request_error', 'No API key given. Send a test secret key as "Authorization: Bearer sk_test_…".');
    }
    if (!/^sk_test_\S+$/.test(key)) {
      const shown = key.length > 12 ? `${key.slice(0, 8)}…${key.slice(-4)}` : '…';
      throw new ApiError(401, 'invalid_request_error', `Invalid API key provided: ${shown}. This test server takes sk_test_ keys only.`);
    }
  }

  interface ApiAnswer {
    status: number;
    body: unknown;
  }

  function route(method: string, pathname: string, params: FormObject, request: EventObject['request']): ApiAnswer {
    let parts: string[]; // ['v1', ...]
    try {
      parts = pathname.split('/').filter(Boolean).map(decodeURIComponent);
    } catch {
      throw new ApiError(404, 'invalid_request_error', `Unrecognized request URL (${method}: ${pathname}).`);
    }
    const [, a, b, c, d] = parts;
    const n = parts.length;

    if (a === 'checkout' && b === 'sessions') {
      if (n === 3 && method === 'POST') return { status: 200, body: createSession(params) };
      if (n === 4 && method === 'GET' && c) {
        const record = findSession(c);
        expireIfDue(record);
        return { status: 200, body: sessionView(record, getExpand(params, ['line_items', 'payment_intent', 'payment_intent.latest_charge'])) };
      }
      if (n === 5 && method === 'GET' && c && d === 'line_items') {
        return { status: 200, body: lineItemList(findSession(c)) };
      }
      if (n === 5 && method === 'POST' && c && d === 'expire') {
        const record = findSession(c);
        const expand = getExpand(params, ['line_items', 'payment_intent']);
        checkKeys(params, ['expand']);
        expireIfDue(record);
        if (record.session.status !== 'open') {
          throw new ApiError(
            400,
            'invalid_request_error',
            `Only Checkout Sessions with status "open" can be expired; this one is "${record.session.status}".`,
            null,
            'session',
          );
        }
        expireSession(record, request);
        return { status: 200, body: sessionView(record, expand) };
      }
    }
    if (a === 'payment_intents' && n === 3 && method === 'GET' && b) {
      const pi = state.paymentIntents[b];
      if (!pi) throw noSuch('payment_intent', b, 'intent');
      return { status: 200, body: paymentIntentView(pi, getExpand(params, ['latest_charge'])) };
    }
    if (a === 'charges' && n === 3 && method === 'GET' && b) {
      const charge = state.charges[b];
      if (!charge) throw noSuch('charge', b, 'id');
      return { status: 200, body: charge };
    }
    if (a === 'refunds') {
      if (n === 2 && method === 'POST') return { status: 200, body: createRefund(params, request) };
      if (n === 3 && method === 'GET' && b) {
        const refund = state.refunds[b];
        if (!refund) throw noSuch('refund', b, 'id');
        return { status: 200, body: refund };
      }
    }
    if (a === 'events') {
      if (n === 3 && method === 'GET' && b) {
        const event = eventsById.get(b);
        if (!event) throw noSuch('event', b, 'id');
        return { status: 200, body: event };
      }
      if (n === 2 && method === 'GET') {
        const limit = Math.min(Math.max(getInteger(params, 'limit') ?? 10, 1), 100);
        const type = getString(params, 'type');
        const matching = [...state.events].reverse().filter((ev) => !type || ev.type === type);
        return {
          status: 200,
          body: { object: 'list', data: matching.slice(0, limit), has_more: matching.length > limit, url: '/v1/events' },
        };
      }
    }
    throw new ApiError(404, 'invalid_request_error', `Unrecognized request URL (${method}: ${pathname}).`);
  }

  function sendJson(res: http.ServerResponse, status: number, body: string, headers: Record<string, string>): void {
    res.writeHead(status, {
      'content-type': 'application/json',
      'cache-control': 'no-cache, no-store',
      'content-length': Buffer.byteLength(body),
      ...headers,
    });
    res.end(body);
  }

  async function handleApi(req: http.IncomingMessage, res: http.ServerResponse, url: URL): Promise<void> {
    const method = req.method ?? 'GET';
    const requestId = randomId('req_', 14);
    const headers: Record<string, string> = {
      'request-id': requestId,
      'stripe-version': String(req.headers['stripe-version'] ?? apiVersion),
    };
    const rawKey = req.headers['idempotency-key'];
    const idempotencyKey = method === 'POST' && typeof rawKey === 'string' && rawKey !== '' ? rawKey : null;
    if (idempotencyKey) headers['idempotency-key'] = idempotencyKey;
    let fingerprint = '';
    try {
      authenticate(req);
      const text = method === 'POST' ? await readBody(req) : url.search.slice(1);
      let params: FormObject;
      try {
        params = parseForm(text);
      } catch (error) {
        if (error instanceof FormError) throw new ApiError(400, 'invalid_request_error', error.message, 'parameter_invalid_string', error.param, true);
        throw error;
      }
      if (idempotencyKey) {
        if (idempotencyKey.length > MAX_IDEMPOTENCY_KEY_LENGTH) {
          throw new ApiError(400, 'invalid_request_error', `Idempotency keys can be at most ${MAX_IDEMPOTENCY_KEY_LENGTH} characters long.`, null, null, true);
        }
        fingerprint = `${method} ${url.pathname} ${canonical(params)}`;
        const previous = state.idempotency[idempotencyKey];
        if (previous) {
          if (previous.fingerprint !== fingerprint) {
            throw new ApiError(
              400,
              'idempotency_error',
              `Keys for idempotent requests can only be used with the same parameters they were first used with. Try a key other than '${idempotencyKey}' for a different request.`,
              null,
              null,
              true,
            );
          }
          sendJson(res, previous.status, previous.body, { ...headers, 'idempotent-replayed': 'true' });
          return;
        }
      }
      const request = { id: requestId, idempotency_key: idempotencyKey };
      let answer: ApiAnswer;
      try {
        answer = route(method, url.pathname, params, request);
      } catch (error) {
        if (!(error instanceof ApiError) || error.beforeExecution || !idempotencyKey) throw error;
        answer = { status: error.status, body: error.toJSON() };
      }
      const body = JSON.stringify(answer.body, null, 2);
      if (idempotencyKey) {
        state.idempotency[idempotencyKey] = { fingerprint, status: answer.status, body, createdAt: Date.now() };
      }
      // Also after a GET: reading a session whose time is up expires it.
      persist();
      sendJson(res, answer.status, body, headers);
    } catch (error) {
      const apiError =
        error instanceof ApiError ? error : new ApiError(500, 'api_error', 'Something went wrong inside the test server.');
      if (!(error instanceof ApiError)) console.error('payment fake:', error);
      sendJson(res, apiError.status, JSON.stringify(apiError.toJSON(), null, 2), headers);
    }
  }

  // -------------------------------------------------------------------------------------------
  // The hosted pay page

  function sendHtml(res: http.ServerResponse, status: number, html: string, extra: Record<string, string> = {}): void {
    res.writeHead(status, {
      'content-type': 'text/html; charset=utf-8',
      'cache-control': 'no-store',
      'content-security-policy': "default-src 'none'; style-src 'unsafe-inline'; img-src data:; frame-ancestors 'none'; base-uri 'none'",
      'referrer-policy': 'no-referrer',
      'x-content-type-options': 'nosniff',
      ...extra,
    });
    res.end(html);
  }

  function closedPage(res: http.ServerResponse, record: SessionRecord, forPost: boolean): void {
    const s = record.session;
    if (s.status === 'complete') {
      sendHtml(
        res,
        forPost ? 409 : 200,
        renderMessagePage({
          shopName,
          title: 'This order is paid',
          message: 'The payment for this order has already gone through.',
          link: { href: successUrlFor(s), label: 'Back to the shop' },
        }),
      );
    } else {
      sendHtml(
        res,
        410,
        renderMessagePage({
          shopName,
          title: 'This checkout has expired',
          message: 'Nothing was charged. Go back to the shop to start again.',
          link: s.cancel_url ? { href: s.cancel_url, label: 'Back to the shop' } : null,
        }),
      );
    }
  }

  function parseExpiry(text: string): { month: number; year: number } | null {
    const match = /^\s*(\d{1,2})\s*\/\s*(\d{2}|\d{4})\s*$/.exec(text);
    if (!match) return null;
    const month = Number(match[1]);
    let year = Number(match[2]);
    if (year < 100) year += 2000;
    if (month < 1 || month > 12) return null;
    return { month, year };
  }

  /** Checks the form; returns the problem to show, or null when the card can be tried. */
  function checkPayForm(record: SessionRecord, v: PayFormValues): string | null {
    if (!EMAIL_PATTERN.test(v.email.trim())) return 'Your e-mail address is not valid.';
    if (v.cardholder_name.trim() === '') return 'Enter the name on the card.';
    const digits = normaliseCardNumber(v.card_number);
    if (!digits || !luhnValid(digits)) return 'Your card number is not valid.';
    const expiry = parseExpiry(v.card_expiry);
    if (!expiry) return "Your card's expiry date is incomplete.";
    const now = new Date(clock());
    if (expiry.year * 12 + expiry.month < now.getUTCFullYear() * 12 + now.getUTCMonth() + 1) {
      return "Your card's expiry date is in the past.";
    }
    const cvcLength = cardBrand(digits) === 'amex' ? 4 : 3;
    if (!new RegExp(`^\\d{${cvcLength}}$`).test(v.card_cvc.trim())) return "Your card's security code is incomplete.";
    const countries = record.session.shipping_address_collection?.allowed_countries ?? [];
    if (countries.length > 0) {
      if (v.shipping_name.trim() === '') return 'Enter the name to ship to.';
      if (v.shipping_line1.trim() === '') return 'Enter the first line of the shipping address.';
      if (v.shipping_city.trim() === '') return 'Enter the town or city.';
      if (v.shipping_postal_code.trim() === '') return 'Enter the postal code.';
      if (!(countries as string[]).includes(v.shipping_country)) return 'Choose a country we ship to.';
    }
    return null;
  }

  function readPayForm(text: string): PayFormValues {
    const form = new URLSearchParams(text);
    const values = { ...EMPTY_FORM };
    for (const key of Object.keys(values) as (keyof PayFormValues)[]) values[key] = (form.get(key) ?? '').slice(0, 500);
    return values;
  }

  function pay(record: SessionRecord, v: PayFormValues): { paid: true } | { paid: false; message: string } {
    const s = record.session;
    const digits = normaliseCardNumber(v.card_number) as string;
    const expiry = parseExpiry(v.card_expiry) as { month: number; year: number };
    const outcome = cardOutcome(digits);
    const email = v.email.trim();
    const name = v.cardholder_name.trim();
    const created = nowS();
    const shipping: ShippingDetails | null = s.shipping_address_collection
      ? {
          name: v.shipping_name.trim(),
          address: {
            city: v.shipping_city.trim(),
            country: v.shipping_country,
            line1: v.shipping_line1.trim(),
            line2: v.shipping_line2.trim() || null,
            postal_code: v.shipping_postal_code.trim(),
            state: null,
          },
        }
      : null;
    const piShipping = shipping ? { ...clone(shipping), carrier: null, phone: null, tracking_number: null } : null;

    let pi = s.payment_intent ? state.paymentIntents[s.payment_intent] : undefined;
    if (!pi) {
      const piId = randomId('pi_');
      pi = {
        id: piId,
        object: 'payment_intent',
        amount: s.amount_total ?? 0,
        amount_capturable: 0,
        amount_received: 0,
        canceled_at: null,
        cancellation_reason: null,
        capture_method: 'automatic',
        client_secret: `${piId}_secret_${randomId('', 24)}`,
        confirmation_method: 'automatic',
        created,
        currency: s.currency ?? 'usd',
        customer: null,
        description: record.paymentIntentData.description,
        last_payment_error: null,
        latest_charge: null,
        livemode: false,
        metadata: { ...record.paymentIntentData.metadata },
        payment_method: null,
        payment_method_types: ['card'],
        receipt_email: null,
        shipping: null,
        status: 'requires_payment_method',
      };
      state.paymentIntents[piId] = pi;
      s.payment_intent = piId;
    }
    const brand = cardBrand(digits);
    const paymentMethod = randomId('pm_');
    const charge: ChargeObject = {
      id: randomId('ch_'),
      object: 'charge',
      amount: pi.amount,
      amount_captured: 0,
      amount_refunded: 0,
      balance_transaction: null,
      billing_details: { address: null, email, name, phone: null, tax_id: null },
      captured: false,
      created,
      currency: pi.currency,
      customer: null,
      description: pi.description,
      disputed: false,
      failure_code: null,
      failure_message: null,
      livemode: false,
      metadata: { ...pi.metadata },
      outcome: {
        network_status: 'approved_by_network',
        reason: null,
        risk_level: 'normal',
        seller_message: 'Payment complete.',
        type: 'authorized',
        advice_code: null,
        network_advice_code: null,
        network_decline_code: null,
      },
      paid: false,
      payment_intent: pi.id,
      payment_method: paymentMethod,
      payment_method_details: {
        type: 'card',
        card: {
          brand,
          country: null,
          exp_month: expiry.month,
          exp_year: expiry.year,
          funding: 'credit',
          last4: digits.slice(-4),
          network: brand,
        },
      },
      receipt_email: email,
      receipt_url: null,
      refunded: false,
      shipping: piShipping,
      status: 'succeeded',
    };
    state.charges[charge.id] = charge;
    pi.latest_charge = charge.id;
    pi.payment_method = paymentMethod;
    const noRequest = { id: null, idempotency_key: null };

    if (outcome.kind === 'declined') {
      charge.status = 'failed';
      charge.failure_code = outcome.code;
      charge.failure_message = outcome.message;
      charge.outcome = {
        ...charge.outcome,
        network_status: 'declined_by_network',
        reason: outcome.declineCode,
        seller_message: 'The bank declined the payment.',
        type: 'issuer_declined',
      };
      pi.status = 'requires_payment_method';
      pi.payment_method = null;
      pi.last_payment_error = {
        type: 'card_error',
        code: outcome.code,
        decline_code: outcome.declineCode,
        message: outcome.message,
        charge: charge.id,
        payment_method: { id: paymentMethod, object: 'payment_method', type: 'card' },
        doc_url: null,
      };
      record.attempts.push({ at: clock(), last4: digits.slice(-4), outcome: 'declined', code: outcome.declineCode });
      emit('payment_intent.payment_failed', pi, s.id, noRequest);
      return { paid: false, message: outcome.message };
    }

    charge.paid = true;
    charge.captured = true;
    charge.amount_captured = charge.amount;
    charge.balance_transaction = randomId('txn_');
    pi.status = 'succeeded';
    pi.amount_received = pi.amount;
    pi.last_payment_error = null;
    pi.receipt_email = email;
    pi.shipping = piShipping;
    s.status = 'complete';
    s.payment_status = 'paid';
    s.url = null;
    s.customer_details = {
      address: shipping ? clone(shipping.address) : null,
      business_name: null,
      email,
      individual_name: null,
      name,
      phone: null,
      tax_exempt: 'none',
      tax_ids: [],
    };
    s.shipping_details = shipping ? clone(shipping) : null;
    s.collected_information = shipping ? { business_name: null, individual_name: null, shipping_details: clone(shipping) } : null;
    record.attempts.push({ at: clock(), last4: digits.slice(-4), outcome: 'paid', code: null });
    emit('payment_intent.succeeded', pi, s.id, noRequest);
    emit('checkout.session.completed', s, s.id, noRequest);
    return { paid: true };
  }

  async function handlePay(req: http.IncomingMessage, res: http.ServerResponse, id: string): Promise<void> {
    const record = state.sessions[id];
    const method = req.method ?? 'GET';
    if (!record) {
      sendHtml(res, 404, renderMessagePage({ shopName, title: 'No such checkout', message: 'This payment link is not known here.', link: null }));
      return;
    }
    if (expireIfDue(record)) persist();
    if (method === 'GET' || method === 'HEAD') {
      if (record.session.status !== 'open') return closedPage(res, record, false);
      const values = { ...EMPTY_FORM, email: record.session.customer_email ?? '' };
      sendHtml(res, 200, renderPayPage({ shopName, record, values, problem: null }));
      return;
    }
    if (method !== 'POST') {
      res.writeHead(405, { allow: 'GET, POST' }).end();
      return;
    }
    let text: string;
    try {
      text = await readBody(req);
    } catch {
      sendHtml(res, 413, renderMessagePage({ shopName, title: 'Too much data', message: 'The form was too large.', link: null }));
      return;
    }
    // The body was read asynchronously; look again in case the session changed meanwhile.
    if (expireIfDue(record)) persist();
    if (record.session.status !== 'open') return closedPage(res, record, true);
    const values = readPayForm(text);
    const problem = checkPayForm(record, values);
    if (problem) {
      sendHtml(res, 400, renderPayPage({ shopName, record, values, problem }));
      return;
    }
    const result = pay(record, values);
    persist();
    if (result.paid) {
      res.writeHead(303, { location: successUrlFor(record.session), 'cache-control': 'no-store' }).end();
      return;
    }
    sendHtml(res, 402, renderPayPage({ shopName, record, values, problem: result.message }));
  }

  // -------------------------------------------------------------------------------------------
  // Server

  async function handle(req: http.IncomingMessage, res: http.ServerResponse): Promise<void> {
    const url = new URL(req.url ?? '/', 'http://fake.invalid');
    const method = req.method ?? 'GET';
    if (url.pathname.startsWith('/v1/')) return handleApi(req, res, url);
    const payMatch = /^\/pay\/([A-Za-z0-9_]+)\/?$/.exec(url.pathname);
    if (payMatch?.[1]) return handlePay(req, res, payMatch[1]);
    if (url.pathname === '/' && (method === 'GET' || method === 'HEAD')) {
      sendHtml(res, 200, renderEventsPage({ shopName, events: state.events, deliveries: state.deliveries, webhookUrl }));
      return;
    }
    sendHtml(res, 404, renderMessagePage({ shopName, title: 'Not found', message: 'Nothing lives at this address.', link: null }));
  }

  const server = http.createServer((req, res) => {
    handle(req, res).catch((error: unknown) => {
      console.error('payment fake:', error);
      if (!res.headersSent) res.writeHead(500, { 'content-type': 'text/plain' });
      res.end('internal error');
    });
  });

  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(options.port, host, () => {
      server.off('error', reject);
      resolve();
    });
  });
  const port = (server.address() as AddressInfo).port;
  const url = `http://${host.includes(':') ? `[${host}]` : host}:${port}`;
  if (!publicUrl) publicUrl = url;

  // Pages handed out before a restart keep working: open sessions point at the current public URL.
  for (const record of Object.values(state.sessions)) {
    if (record.session.status === 'open') record.session.url = `${publicUrl}/pay/${record.session.id}`;
  }
  // Resume deliveries left pending by the last run, right away and to the current endpoint.
  const groups = new Set<string>();
  for (const delivery of state.deliveries) {
    if (delivery.state !== 'pending') continue;
    if (webhookUrl) delivery.url = webhookUrl;
    delivery.nextAttemptAt = Math.min(delivery.nextAttemptAt ?? Date.now(), Date.now());
    groups.add(delivery.group);
  }
  sweep();
  persist();
  if (webhookUrl) for (const group of groups) pump(group);
  const sweeper = setInterval(sweep, options.expirySweepMs ?? 1000);
  sweeper.unref();

  return {
    url,
    port,
    deliveries: () => clone(state.deliveries),
    events: () => clone(state.events),
    async close() {
      if (closing) return;
      closing = true;
      clearInterval(sweeper);
      for (const timer of timers.values()) clearTimeout(timer);
      timers.clear();
      for (const controller of inflight.keys()) controller.abort(new Error('shutting down'));
      await Promise.allSettled([...inflight.values()]);
      await new Promise<void>((resolve) => {
        server.close(() => resolve());
        server.closeAllConnections();
      });
      saveState(stateFile, state);
      closed = true;
    },
  };
}
