import type { APIRoute } from 'astro';
import { requireArea } from '~/lib/server/guard';
import { jsonError } from '~/lib/server/http';
import { orderDetail } from '~/lib/server/dispatch-orders';

/** One order in full for Dispatch: lines, amounts, addresses, licences, edition numbers and its timeline. */
export const GET = (async ({ params, locals }) => {
  const auth = requireArea(locals, 'dispatch');
  if (auth instanceof Response) return auth;
  const order = params.number ? await orderDetail(params.number) : null;
  if (!order) return jsonError(404, 'not_found', 'No such order.');
  return Response.json(order, { headers: { 'Cache-Control': 'no-store' } });
}) satisfies APIRoute;
