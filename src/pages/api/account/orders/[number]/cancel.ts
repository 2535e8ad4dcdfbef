import type { APIRoute } from 'astro';
import { requireArea } from '~/lib/server/guard';
import { jsonError } from '~/lib/server/http';
import { Order } from '~/lib/server/models';
import { stripe } from '~/lib/server/stripe';

/**
 * The buyer left the payment page. Expiring the Checkout Session means it can no longer be paid; the
 * `checkout.session.expired` event that follows releases the held edition numbers. Releasing them here
 * instead could race a payment that has just gone through.
 */
export const POST = (async ({ params, locals }) => {
  const user = requireArea(locals, 'account');
  if (user instanceof Response) return user;
  const order = await Order.findOne({ where: { number: params.number ?? '', userId: user.id } });
  if (!order) return jsonError(404, 'not_found', 'No such order.');
  if (order.status !== 'pending_payment' || !order.stripeSessionId) return Response.json({ status: order.status });
  try {
    await stripe().checkout.sessions.expire(order.stripeSessionId);
  } catch {
    // Already paid or already expired: the webhook settles it either way.
  }
  return Response.json({ status: 'cancelling' }, { status: 202 });
}) satisfies APIRoute;
