import type { APIRoute } from 'astro';
import { quoteRequest } from '~/lib/cart';
import { jsonError, readJson, zodFields } from '~/lib/server/http';
import { quoteCart } from '~/lib/server/quote';

/** Prices a cart from the catalogue; each line is either priced or refused with its reason. Quoted licences price only for their owner. */
export const POST = (async ({ request, locals }) => {
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = quoteRequest.safeParse(body.value);
  if (!parsed.success) {
    const fields = zodFields(parsed.error);
    const [first] = Object.entries(fields);
    return jsonError(400, 'invalid_cart', `Invalid cart: ${first![0]}: ${first![1]}`, fields);
  }
  const quote = await quoteCart(parsed.data.lines, locals?.user?.id ?? null);
  return Response.json(quote, { headers: { 'Cache-Control': 'no-store' } });
}) satisfies APIRoute;
