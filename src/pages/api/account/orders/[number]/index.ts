import type { APIRoute } from 'astro';
import { requireArea } from '~/lib/server/guard';
import { jsonError } from '~/lib/server/http';
import { orderForUser } from '~/lib/server/orders';

/** One of the signed-in person's orders; someone else's order is simply not found. */
export const GET = (async ({ params, locals }) => {
  const user = requireArea(locals, 'account');
  if (user instanceof Response) return user;
  const order = await orderForUser(user.id, params.number ?? '');
  if (!order) return jsonError(404, 'not_found', 'No such order.');
  return Response.json({ order }, { headers: { 'Cache-Control': 'no-store' } });
}) satisfies APIRoute;
