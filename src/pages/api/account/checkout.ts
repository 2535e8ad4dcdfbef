import type { APIRoute } from 'astro';
import { checkoutInput } from '~/lib/checkout';
import { requireArea } from '~/lib/server/guard';
import { jsonError, readJson, zodFields } from '~/lib/server/http';
import { CheckoutError, startCheckout } from '~/lib/server/checkout';
import { config } from '~/lib/server/config';

/** Re-prices the cart on the server, creates the order and returns the payment page to go to. */
export const POST = (async ({ request, locals }) => {
  const user = requireArea(locals, 'account');
  if (user instanceof Response) return user;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = checkoutInput.safeParse(body.value);
  if (!parsed.success) {
    const fields = zodFields(parsed.error);
    return jsonError(400, 'invalid_checkout', Object.values(fields)[0] ?? 'Check the form.', fields);
  }
  try {
    const started = await startCheckout(user, parsed.data, config().publicOrigin);
    return Response.json(started, { status: 201 });
  } catch (error) {
    if (error instanceof CheckoutError) {
      return Response.json({ error: { code: error.code, message: error.message, ...(error.details && typeof error.details === 'object' && 'lines' in error.details ? { lines: (error.details as { lines: unknown }).lines } : {}) } }, { status: error.status });
    }
    throw error;
  }
}) satisfies APIRoute;
