import type { APIRoute } from 'astro';
import { refundInput } from '~/lib/refund-schemas';
import { requireArea } from '~/lib/server/guard';
import { jsonError, readJson, zodFields } from '~/lib/server/http';
import { requestRefund, RefundError } from '~/lib/server/refunds';

/**
 * Asks for a refund of the whole order or of some lines (and shipping). Answers 202: the order changes
 * when the payment service's event settles the refund. The same idempotency key sent again answers
 * with the refund it already made.
 */
export const POST = (async ({ params, request, locals }) => {
  const auth = requireArea(locals, 'dispatch');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = refundInput.safeParse(body.value);
  if (!parsed.success) return jsonError(400, 'invalid_refund', 'Say what to refund, why, and send a request key.', zodFields(parsed.error));
  try {
    const { refund, replayed } = await requestRefund(params.number ?? '', { id: auth.id, email: auth.email }, parsed.data);
    return Response.json(
      { id: refund.id, amount: refund.amount, currency: refund.currency, status: refund.status, replayed },
      { status: replayed ? 200 : 202 },
    );
  } catch (error) {
    if (error instanceof RefundError) return jsonError(error.status, error.code, error.message, error.fields);
    throw error;
  }
}) satisfies APIRoute;
