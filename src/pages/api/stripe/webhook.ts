import type { APIRoute } from 'astro';
import { config } from '~/lib/server/config';
import { jsonError } from '~/lib/server/http';
import { stripe } from '~/lib/server/stripe';
import { applyStripeEvent, EventTooEarlyError } from '~/lib/server/checkout';
import { afterDuplicateEvent, afterStripeEvent } from '~/lib/server/fulfilment';

/** Stripe's events: raw body, signature verified with the SDK (300 s tolerance), each event applied once. */
export const POST = (async ({ request }) => {
  const signature = request.headers.get('stripe-signature');
  if (!signature) return jsonError(400, 'missing_signature', 'The Stripe-Signature header is missing.');
  const raw = await request.text();
  let event;
  try {
    event = await stripe().webhooks.constructEventAsync(raw, signature, config().stripeWebhookSecret);
  } catch {
    return jsonError(400, 'bad_signature', 'The signature does not match this payload.');
  }
  let result;
  try {
    result = await applyStripeEvent(event);
  } catch (error) {
    // Not recorded as seen: any answer but 2xx makes Stripe deliver the event again later.
    if (error instanceof EventTooEarlyError) return jsonError(409, 'event_too_early', error.message);
    throw error;
  }
  if (result.outcome === 'handled') await afterStripeEvent(event, result);
  if (result.outcome === 'duplicate') await afterDuplicateEvent(event);
  return Response.json({ received: true, outcome: result.outcome });
}) satisfies APIRoute;
