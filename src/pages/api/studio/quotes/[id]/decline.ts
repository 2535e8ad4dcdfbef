import type { APIRoute } from 'astro';
import { declineInput } from '~/lib/quote-schemas';
import { requireArea } from '~/lib/server/guard';
import { jsonError, readJson, zodFields } from '~/lib/server/http';
import { declineQuote, QuoteError } from '~/lib/server/licence-quotes';

/** The Studio declines an enquiry with a reason; the buyer is told. */
export const POST = (async ({ params, request, locals }) => {
  const user = requireArea(locals, 'studio');
  if (user instanceof Response) return user;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = declineInput.safeParse(body.value);
  if (!parsed.success) {
    const fields = zodFields(parsed.error);
    return jsonError(400, 'invalid_decline', Object.values(fields)[0] ?? 'Check the form.', fields);
  }
  try {
    const quote = await declineQuote({ id: user.id, email: user.email }, params.id ?? '', parsed.data.reason);
    return Response.json({ id: quote.id, state: quote.state });
  } catch (error) {
    if (error instanceof QuoteError) return jsonError(error.status, error.code, error.message, error.fields);
    throw error;
  }
}) satisfies APIRoute;
