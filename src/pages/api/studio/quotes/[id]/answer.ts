import type { APIRoute } from 'astro';
import { answerInput } from '~/lib/quote-schemas';
import { getShop } from '~/lib/server/catalogue';
import { requireArea } from '~/lib/server/guard';
import { jsonError, readJson, zodFields } from '~/lib/server/http';
import { answerQuote, QuoteError } from '~/lib/server/licence-quotes';

/** The Studio answers an enquiry with terms, a price in the shop's currency and a validity; the buyer is mailed. */
export const POST = (async ({ params, request, locals }) => {
  const user = requireArea(locals, 'studio');
  if (user instanceof Response) return user;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const { currency } = await getShop();
  const parsed = answerInput(currency).safeParse(body.value);
  if (!parsed.success) {
    const fields = zodFields(parsed.error);
    return jsonError(400, 'invalid_answer', Object.values(fields)[0] ?? 'Check the form.', fields);
  }
  try {
    const quote = await answerQuote({ id: user.id, email: user.email }, params.id ?? '', parsed.data);
    return Response.json({ id: quote.id, state: quote.state, price: quote.price, currency: quote.currency, expiresAt: quote.expiresAt });
  } catch (error) {
    if (error instanceof QuoteError) return jsonError(error.status, error.code, error.message, error.fields);
    throw error;
  }
}) satisfies APIRoute;
