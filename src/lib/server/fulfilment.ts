/** What follows a committed Stripe event: automatic refunds for lost editions, and the buyer's mail. */
import type Stripe from 'stripe';
import { QueryTypes } from 'sequelize';
import { db } from './db';
import { stripe } from './stripe';
import { sendMail } from './mail';
import { escapeHtml as escape } from './mail-templates';
import { Order, OrderLine, Licence, ShopSettings } from './models';
import { formatMoney } from '../money';
import { config } from './config';
import { downloadLinkFor } from './deliveries';
import { mailSettledRefund, type SettledRefund } from './refunds';

/** Runs after the event's transaction committed; a failure here is logged and retried by Stripe's next delivery only for refunds. */
export async function afterStripeEvent(
  event: Stripe.Event,
  result: { orderNumber?: string; refund?: { paymentIntent: string; orderNumber: string; reason: string }; settledRefunds?: SettledRefund[] },
): Promise<void> {
  for (const settled of result.settledRefunds ?? []) {
    try {
      await mailSettledRefund(settled);
    } catch (error) {
      console.error(`refund mail for refund ${settled.refundId} failed`, error);
    }
  }
  if (result.refund) {
    await stripe().refunds.create(
      { payment_intent: result.refund.paymentIntent, reason: 'requested_by_customer', metadata: { order_number: result.refund.orderNumber, why: result.refund.reason } },
      { idempotencyKey: `auto-refund-${result.refund.orderNumber}` },
    );
  }
  if (!result.orderNumber) return;
  const order = await Order.findOne({ where: { number: result.orderNumber } });
  if (!order) return;
  try {
    await mailFor(event.type, order);
  } catch (error) {
    // The order stands even when mail cannot be sent; the buyer's account shows everything.
    console.error(`mail for order ${order.number} failed`, error);
  }
}

/**
 * A repeated `checkout.session.completed` is not applied again, but if the first delivery died after
 * its transaction committed and before the buyer's mail was sent or queued, the mail is sent now: the
 * order's mail log is empty exactly then.
 */
export async function afterDuplicateEvent(event: Stripe.Event): Promise<void> {
  if (event.type !== 'checkout.session.completed') return;
  const number = event.data.object.metadata?.order_number;
  const order = number ? await Order.findOne({ where: { number } }) : null;
  if (!order || (order.status !== 'paid' && order.status !== 'refunded')) return;
  const logged = await db().query('SELECT 1 FROM order_mails WHERE order_id = $1 LIMIT 1', { bind: [order.id], type: QueryTypes.SELECT });
  if (logged.length) return;
  try {
    await mailFor(event.type, order);
  } catch (error) {
    console.error(`mail for order ${order.number} failed`, error);
  }
}

async function mailFor(type: string, order: Order): Promise<void> {
  const shopName = (await ShopSettings.findByPk(1))?.shopName ?? 'Stillmark';
  const origin = config().publicOrigin;
  const money = (n: number) => formatMoney(n, order.currency);
  if (type === 'checkout.session.completed' && order.status === 'refunded') {
    await sendMail({
      to: order.email,
      orderId: order.id,
      subject: `${shopName}: your order ${order.number} was refunded`,
      text: `${order.note ?? 'Your payment could not be turned into an order.'} You have been refunded ${money(order.total)} in full; nothing else is owed.\n\n${origin}/account`,
    });
    return;
  }
  if (type === 'checkout.session.completed' && order.status === 'paid') {
    const lines = await OrderLine.findAll({ where: { orderId: order.id } });
    const licences = await Licence.findAll({ where: { orderLineId: lines.map((l) => l.id) } });
    const rows = lines.map((l) => `${(l.snapshot as { workTitle: string }).workTitle} — ${l.description} × ${l.quantity}: ${money(l.subtotal)}`);
    // Each licence's file, by a signed link that works for the buyer once signed in.
    const downloads: string[] = [];
    for (const licence of licences) {
      const link = order.userId ? await downloadLinkFor(licence.id, order.userId) : null;
      if (link) downloads.push(`${licence.id}: ${origin}${link.url} (until ${link.expiresAt.toISOString().slice(0, 10)}, ${link.left} downloads)`);
    }
    const text = [
      `Thank you. Order ${order.number} is paid.`,
      '',
      ...rows,
      order.shipping ? `Shipping: ${money(order.shipping)}` : '',
      `Total: ${money(order.total)} (including VAT ${money(order.taxIncluded)})`,
      '',
      ...(downloads.length ? ['Download the licensed files:', ...downloads, '', 'Certificates and fresh links are always in your account:'] : ['Follow your prints from your account:']),
      `${origin}/account`,
    ].filter((line, i, all) => line !== '' || all[i - 1] !== '').join('\n');
    const html = `<p>Thank you. Order <strong>${escape(order.number)}</strong> is paid.</p><ul>${rows.map((r) => `<li>${escape(r)}</li>`).join('')}</ul><p>Total ${escape(money(order.total))} (including VAT ${escape(money(order.taxIncluded))}).</p>${downloads.length ? `<p>Download the licensed files:</p><ul>${downloads.map((d) => `<li>${escape(d)}</li>`).join('')}</ul>` : ''}<p><a href="${escape(origin)}/account">Your account</a>: certificates and fresh download links.</p>`;
    await sendMail({ to: order.email, orderId: order.id, subject: `${shopName}: receipt for order ${order.number}`, text, html });
    return;
  }
  if (type === 'payment_intent.payment_failed') {
    await sendMail({
      to: order.email,
      orderId: order.id,
      subject: `${shopName}: the payment for order ${order.number} did not go through`,
      text: `${order.note ?? 'The card was declined.'}\n\nNothing was charged. You can try again from your cart: ${origin}/cart`,
    });
  }
}
