import type { APIRoute } from 'astro';
import { ordersQueryFrom } from '~/lib/dispatch-schemas';
import { requireArea } from '~/lib/server/guard';
import { jsonError, zodFields } from '~/lib/server/http';
import { listOrders } from '~/lib/server/dispatch-orders';

/** Dispatch's order list: paged, sorted and filtered on the server by the query string. */
export const GET = (async ({ url, locals }) => {
  const auth = requireArea(locals, 'dispatch');
  if (auth instanceof Response) return auth;
  const parsed = ordersQueryFrom(url.searchParams);
  if (!parsed.success) {
    const fields = zodFields(parsed.error);
    const [path, message] = Object.entries(fields)[0]!;
    return jsonError(400, 'invalid_query', `${path}: ${message}`, fields);
  }
  return Response.json(await listOrders(parsed.data), { headers: { 'Cache-Control': 'no-store' } });
}) satisfies APIRoute;
