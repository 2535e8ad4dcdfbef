/**
 * Checkout: re-price the cart, create the order as pending payment with limited-edition numbers
 * reserved, open a Stripe Checkout Session; and fulfil from Stripe's events, never from the redirect.
 */
import crypto from 'node:crypto';
import { Op, QueryTypes, type Transaction } from 'sequelize';
import type Stripe from 'stripe';
import { db } from './db';
import { config } from './config';
import { stripe } from './stripe';
import { quoteCart } from './quote';
import { claimQuote, quoteClaimRefusal, quoteForCheckout } from './licence-quotes';
import { DownloadGrant, Edition, EditionNumber, Licence, LicenceTier, Order, OrderLine, PrintOffer, ShippingZone, ShopSettings, type LicenceQuote } from './models';
import type { LicenceTerms } from './models/Licence';
import { freeEditionNumbers, licenceEndDate, shippingCost, vatIncluded, zoneFor, type CheckoutInput } from '../checkout';
import type { QuotedLineOk } from '../cart';
import type { SessionUser } from './auth-types';
import { settleChargeRefunded, type SettledRefund } from './refunds';
import { printSnapshotFor } from './lab-pack';

export class CheckoutError extends Error {
  constructor(readonly status: number, readonly code: string, message: string, readonly details?: unknown) {
    super(message);
  }
}

/** Order numbers people can read out on the phone: SM-YYMMDD-XXXXXX (no 0/O/1/I). */
export function newOrderNumber(now = new Date()): string {
  const alphabet = 'ABCDEFGHJKLMNPQRSTUVWXYZ23456789';
  const bytes = crypto.randomBytes(6);
  const tail = Array.from(bytes, (b) => alphabet[b % alphabet.length]).join('');
  return `SM-${now.toISOString().slice(2, 10).replace(/-/g, '')}-${tail}`;
}

/** Licence IDs are not guessable: 120 random bits in base32 (OWASP ASVS 7.2.3 asks ≥ 128 bits for session tokens; IDs are not secrets but must not be enumerable). */
export function newLicenceId(): string {
  const alphabet = 'ABCDEFGHJKLMNPQRSTUVWXYZ23456789';
  const bytes = crypto.randomBytes(24);
  return `SML-${Array.from(bytes, (b) => alphabet[b % alphabet.length]).join('').replace(/(.{6})(?=.)/g, '$1-')}`;
}

async function releaseExpiredReservations(transaction: Transaction, now = new Date()) {
  await EditionNumber.destroy({ where: { state: 'reserved', reservedUntil: { [Op.lt]: now } }, transaction });
}

/** Reserves `count` numbers of a limited edition for an order line; null when the edition has too few left. */
async function reserveNumbers(edition: Edition, orderLineId: number, count: number, until: Date, transaction: Transaction): Promise<number[] | null> {
  const taken = await EditionNumber.findAll({ where: { editionId: edition.id }, attributes: ['number'], transaction });
  // Artist's proofs sit outside N and are never sold here.
  const free = freeEditionNumbers(taken.map((t) => t.number), edition.total!, count);
  if (!free) return null;
  for (const number of free) {
    await EditionNumber.create({ editionId: edition.id, number, orderLineId, state: 'reserved', reservedUntil: until, certificateSerial: null }, { transaction });
  }
  return free;
}

export interface StartedCheckout { orderNumber: string; url: string }

export async function startCheckout(user: SessionUser, input: CheckoutInput, origin: string): Promise<StartedCheckout> {
  const quote = await quoteCart(input.lines, user.id);
  const refused = quote.lines.filter((l) => !l.ok);
  if (refused.length) throw new CheckoutError(409, 'cart_changed', 'Some items can no longer be bought as they are. Review the cart.', { lines: quote.lines });
  const settings = (await ShopSettings.findByPk(1))!;
  const priced = quote.lines as QuotedLineOk[];
  const prints = input.lines.filter((l) => l.kind === 'print').reduce((n, l) => n + l.quantity, 0);
  let shipping = 0;
  if (prints > 0) {
    const zones = await ShippingZone.findAll({ order: [['position', 'ASC']] });
    const zone = zoneFor(zones, input.shipping!.country);
    if (!zone) throw new CheckoutError(422, 'no_shipping', 'The shop does not ship prints to that country yet.', { fields: { 'shipping.country': 'Not shipped to.' } });
    shipping = shippingCost(zone, prints);
  }
  const total = quote.subtotal + shipping;
  const now = new Date();
  const holdUntil = new Date(now.getTime() + Math.max(30, settings.reservationMinutes) * 60_000);

  const order = await db().transaction(async (transaction) => {
    await releaseExpiredReservations(transaction, now);
    // Quoted licences are read again inside the transaction: one paid or expired since pricing is not sold.
    const quotes = new Map<string, LicenceQuote>();
    for (const line of input.lines.filter((l) => l.kind === 'quote')) {
      const found = await quoteForCheckout(line.quoteId, user.id, quote.currency, transaction, now);
      if (typeof found === 'string') throw new CheckoutError(409, 'quote_unavailable', found);
      quotes.set(line.quoteId, found);
    }
    const quoted = [...quotes.values()][0];
    const order = await Order.create({
      number: newOrderNumber(now), userId: user.id, email: user.email, currency: quote.currency,
      subtotal: quote.subtotal, shipping, taxIncluded: vatIncluded(total, settings.vatRateBp), total,
      licenseeName: input.licensee?.name ?? quoted?.licenseeName ?? null, licenseeOrganisation: (input.licensee ? input.licensee.organisation : quoted?.licenseeOrganisation) || null,
      intendedUse: input.licensee?.intendedUse ?? null, shippingAddress: input.shipping ?? null,
      stripeSessionId: null, stripePaymentIntentId: null, paidAt: null, expiresAt: holdUntil, note: null,
    }, { transaction });
    for (const [index, line] of input.lines.entries()) {
      const q = priced[index]!;
      if (line.kind === 'quote') {
        // A quoted licence is a licence line with the quote's terms and no tier.
        const row = quotes.get(line.quoteId)!;
        await OrderLine.create({
          orderId: order.id, kind: 'licence', workId: row.workId, licenceTierId: null, printOfferId: null, editionId: null, mode: null,
          quantity: 1, unitPrice: q.unitPrice, subtotal: q.subtotal, description: q.description, detail: q.detail, licenceQuoteId: row.id,
          snapshot: { workTitle: q.workTitle, workSlug: q.workSlug, terms: row.terms },
        }, { transaction });
      } else if (line.kind === 'licence') {
        const tier = (await LicenceTier.findByPk(line.tierId, { transaction }))!;
        const terms: LicenceTerms = { tierName: tier.name, use: tier.use, terms: tier.terms, media: tier.media, cap: tier.cap, capUnit: tier.capUnit, territory: tier.territory, termMonths: tier.termMonths };
        await OrderLine.create({
          orderId: order.id, kind: 'licence', workId: line.workId, licenceTierId: tier.id, printOfferId: null, editionId: null, mode: null,
          quantity: 1, unitPrice: q.unitPrice, subtotal: q.subtotal, description: q.description, detail: q.detail,
          snapshot: { workTitle: q.workTitle, workSlug: q.workSlug, terms },
        }, { transaction });
      } else {
        const offer = (await PrintOffer.findByPk(line.offerId, { include: [{ model: Edition, as: 'edition' }], transaction }))!;
        const orderLine = await OrderLine.create({
          orderId: order.id, kind: 'print', workId: offer.workId, licenceTierId: null, printOfferId: offer.id, editionId: offer.editionId, mode: line.mode,
          quantity: line.quantity, unitPrice: q.unitPrice, subtotal: q.subtotal, description: q.description, detail: q.detail,
          snapshot: {
            workTitle: q.workTitle, workSlug: q.workSlug, edition: offer.edition ? { kind: offer.edition.kind, total: offer.edition.total, artistProofs: offer.edition.artistProofs } : null,
            // The size, paper and crop as the buyer saw them, so the lab makes what was bought.
            print: await printSnapshotFor(offer.id, line.mode, transaction),
          },
        }, { transaction });
        if (offer.edition?.kind === 'limited') {
          const numbers = await reserveNumbers(offer.edition, orderLine.id, line.quantity, holdUntil, transaction);
          if (!numbers) throw new CheckoutError(409, 'sold_out', `“${q.workTitle}” at this size has no numbers left in its edition.`);
        }
      }
    }
    return order;
  });

  try {
    const session = await stripe().checkout.sessions.create(
      {
        mode: 'payment',
        customer_email: user.email,
        client_reference_id: String(order.id),
        metadata: { order_number: order.number },
        payment_intent_data: { metadata: { order_number: order.number } },
        line_items: [
          ...priced.map((l) => ({
            quantity: l.quantity,
            price_data: { currency: quote.currency.toLowerCase(), unit_amount: l.unitPrice, product_data: { name: `${l.workTitle} — ${l.description}`, description: l.detail } },
          })),
          ...(shipping > 0 ? [{ quantity: 1, price_data: { currency: quote.currency.toLowerCase(), unit_amount: shipping, product_data: { name: 'Shipping' } } }] : []),
        ],
        success_url: `${origin}/checkout/complete?order=${order.number}&session_id={CHECKOUT_SESSION_ID}`,
        cancel_url: `${origin}/cart?cancelled=${order.number}`,
        expires_at: Math.floor(holdUntil.getTime() / 1000),
      },
      { idempotencyKey: `checkout-${order.number}` },
    );
    await order.update({ stripeSessionId: session.id });
    return { orderNumber: order.number, url: session.url! };
  } catch (error) {
    // No session, no payment: give the reserved numbers back at once.
    await db().transaction(async (transaction) => {
      await order.update({ status: 'cancelled', note: 'Payment could not be started.' }, { transaction });
      await EditionNumber.destroy({ where: { orderLineId: { [Op.in]: (await OrderLine.findAll({ where: { orderId: order.id }, transaction })).map((l) => l.id) } }, transaction });
    });
    throw new CheckoutError(502, 'payment_unavailable', 'Payment could not be started. Nothing was charged; try again in a moment.', { cause: String(error) });
  }
}

export type EventOutcome = 'handled' | 'duplicate' | 'ignored';

/** An event that depends on one not yet received: nothing is recorded, and the endpoint asks for it again later. */
export class EventTooEarlyError extends Error {}

/**
 * Applies one verified Stripe event. The event id is recorded in the same transaction as its effects,
 * so the same event delivered again changes nothing. Returns follow-up work (refunds, mail) to run after commit.
 */
export async function applyStripeEvent(event: Stripe.Event): Promise<{ outcome: EventOutcome; orderNumber?: string; refund?: { paymentIntent: string; orderNumber: string; reason: string }; settledRefunds?: SettledRefund[] }> {
  const { downloadDays, downloadLimit } = config();
  return db().transaction(async (transaction) => {
    const [, inserted] = (await db().query('INSERT OR IGNORE INTO webhook_events (id, type, created_at) VALUES ($1, $2, $3)', {
      bind: [event.id, event.type, new Date().toISOString()],
      type: QueryTypes.INSERT,
      transaction,
    })) as [unknown, number];
    const created = inserted === 1;
    if (!created) return { outcome: 'duplicate' as const };

    const orderOf = async (number: string | undefined | null) => (number ? Order.findOne({ where: { number }, transaction }) : null);
    switch (event.type) {
      case 'checkout.session.completed': {
        const session = event.data.object;
        const order = await orderOf(session.metadata?.order_number);
        if (!order) return { outcome: 'ignored' as const };
        if (order.status !== 'pending_payment' && order.status !== 'expired') return { outcome: 'ignored' as const, orderNumber: order.number };
        if (session.payment_status !== 'paid') return { outcome: 'ignored' as const, orderNumber: order.number };
        const paymentIntent = typeof session.payment_intent === 'string' ? session.payment_intent : session.payment_intent?.id ?? null;
        const lines = await OrderLine.findAll({ where: { orderId: order.id }, transaction });
        const paidAt = new Date(event.created * 1000);

        // A quoted licence is sold once: a payment for a quote another order already paid is refunded, not issued twice.
        for (const line of lines.filter((l) => l.licenceQuoteId)) {
          const refusal = await quoteClaimRefusal(line.licenceQuoteId!, order, transaction);
          if (!refusal) continue;
          await order.update({ status: 'refunded', stripePaymentIntentId: paymentIntent, note: refusal }, { transaction });
          await EditionNumber.destroy({ where: { orderLineId: { [Op.in]: lines.map((l) => l.id) } }, transaction });
          return { outcome: 'handled' as const, orderNumber: order.number, refund: paymentIntent ? { paymentIntent, orderNumber: order.number, reason: 'quote already paid' } : undefined };
        }

        // Each limited print keeps its reserved numbers; a reservation that lapsed is re-made if numbers remain.
        for (const line of lines.filter((l) => l.kind === 'print' && l.editionId)) {
          const edition = (await Edition.findByPk(line.editionId!, { transaction }))!;
          if (edition.kind !== 'limited') continue;
          const held = await EditionNumber.count({ where: { orderLineId: line.id }, transaction });
          if (held < line.quantity) {
            await releaseExpiredReservations(transaction, new Date());
            const numbers = await reserveNumbers(edition, line.id, line.quantity - held, new Date(), transaction);
            if (!numbers) {
              await order.update({ status: 'refunded', stripePaymentIntentId: paymentIntent, note: 'The edition sold out before payment arrived; refunded in full.' }, { transaction });
              await EditionNumber.destroy({ where: { orderLineId: { [Op.in]: lines.map((l) => l.id) } }, transaction });
              return { outcome: 'handled' as const, orderNumber: order.number, refund: paymentIntent ? { paymentIntent, orderNumber: order.number, reason: 'edition sold out' } : undefined };
            }
          }
          const mine = await EditionNumber.findAll({ where: { orderLineId: line.id }, transaction });
          for (const n of mine) {
            await n.update({ state: 'sold', reservedUntil: null, certificateSerial: `SMC-${order.number.slice(3)}-${String(n.number).padStart(3, '0')}` }, { transaction });
          }
        }

        const startsOn = paidAt.toISOString().slice(0, 10);
        for (const line of lines.filter((l) => l.kind === 'licence')) {
          const terms = (line.snapshot as { terms: LicenceTerms }).terms;
          // A quoted licence names the licensee the studio quoted for, and is marked paid by this order.
          const quoted = line.licenceQuoteId ? await claimQuote(line.licenceQuoteId, order, transaction) : null;
          const licence = await Licence.create({
            id: newLicenceId(), orderLineId: line.id, workId: line.workId, userId: order.userId,
            licenseeName: quoted?.licenseeName ?? order.licenseeName ?? order.email, licenseeOrganisation: quoted ? quoted.licenseeOrganisation : order.licenseeOrganisation,
            intendedUse: quoted ? quoted.request.message : order.intendedUse,
            terms, startsOn, endsOn: terms.termMonths ? licenceEndDate(startsOn, terms.termMonths) : null,
            price: line.unitPrice, currency: order.currency,
          }, { transaction });
          await DownloadGrant.create({ licenceId: licence.id, expiresAt: new Date(paidAt.getTime() + downloadDays * 86_400_000), maxDownloads: downloadLimit }, { transaction });
        }
        await order.update({ status: 'paid', paidAt, stripePaymentIntentId: paymentIntent, expiresAt: null }, { transaction });
        await db().query('UPDATE webhook_events SET order_id = $1 WHERE id = $2', { bind: [order.id, event.id], transaction });
        return { outcome: 'handled' as const, orderNumber: order.number };
      }
      case 'checkout.session.expired': {
        const order = await orderOf(event.data.object.metadata?.order_number);
        if (!order || order.status !== 'pending_payment') return { outcome: 'ignored' as const };
        const lineIds = (await OrderLine.findAll({ where: { orderId: order.id }, transaction })).map((l) => l.id);
        await EditionNumber.destroy({ where: { orderLineId: { [Op.in]: lineIds }, state: 'reserved' }, transaction });
        await order.update({ status: 'expired', expiresAt: null }, { transaction });
        return { outcome: 'handled' as const, orderNumber: order.number };
      }
      case 'payment_intent.payment_failed': {
        const intent = event.data.object;
        const order = await orderOf(intent.metadata?.order_number);
        if (!order || order.status !== 'pending_payment') return { outcome: 'ignored' as const };
        const reason = intent.last_payment_error?.message ?? 'The card was declined.';
        await order.update({ note: `Payment attempt failed: ${reason}` }, { transaction });
        return { outcome: 'handled' as const, orderNumber: order.number };
      }
      case 'charge.refunded': {
        const charge = event.data.object;
        const result = await settleChargeRefunded(charge, transaction);
        if (!result) {
          // Events are not delivered in order: a refund can overtake the checkout.session.completed of its
          // payment. Refused unrecorded, it comes again with Stripe's retries, after the payment is in.
          const waiting = await orderOf(charge.metadata?.order_number);
          if (waiting && !waiting.stripePaymentIntentId && (waiting.status === 'pending_payment' || waiting.status === 'expired')) {
            throw new EventTooEarlyError(`The refund for order ${waiting.number} arrived before its payment; send it again later.`);
          }
          return { outcome: 'ignored' as const };
        }
        await db().query('UPDATE webhook_events SET order_id = (SELECT id FROM orders WHERE number = $1) WHERE id = $2', { bind: [result.orderNumber, event.id], transaction });
        return { outcome: 'handled' as const, settledRefunds: result.settled };
      }
      default:
        return { outcome: 'ignored' as const };
    }
  });
}
