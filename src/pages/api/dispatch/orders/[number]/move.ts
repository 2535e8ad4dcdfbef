import type { APIRoute } from 'astro';
import { orderMoveInput } from '~/lib/dispatch-move';
import { requireArea } from '~/lib/server/guard';
import { jsonError, readJson, zodFields } from '~/lib/server/http';
import { moveOrder, MoveError } from '~/lib/server/fulfilment-moves';

/** Moves an order to in production, shipped (with carrier and tracking number) or delivered. */
export const POST = (async ({ params, request, locals }) => {
  const auth = requireArea(locals, 'dispatch');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = orderMoveInput.safeParse(body.value);
  if (!parsed.success) return jsonError(400, 'invalid_move', 'Say where the order goes next (and, for shipping, the carrier and tracking number).', zodFields(parsed.error));
  try {
    const order = await moveOrder(params.number ?? '', parsed.data, { id: auth.id, email: auth.email });
    return Response.json({ status: order.status, carrier: order.carrier, trackingNumber: order.trackingNumber });
  } catch (error) {
    if (error instanceof MoveError) return jsonError(error.status, error.code, error.message, error.fields);
    throw error;
  }
}) satisfies APIRoute;
