import type { APIRoute } from 'astro';
import { enquiryInput } from '~/lib/quote-schemas';
import { requireArea } from '~/lib/server/guard';
import { jsonError, readJson, zodFields } from '~/lib/server/http';
import { createEnquiry, QuoteError } from '~/lib/server/licence-quotes';

/** A signed-in buyer asks the studio for a custom licence quote; the studio is mailed. */
export const POST = (async ({ request, locals }) => {
  const user = requireArea(locals, 'account');
  if (user instanceof Response) return user;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = enquiryInput.safeParse(body.value);
  if (!parsed.success) {
    const fields = zodFields(parsed.error);
    return jsonError(400, 'invalid_enquiry', Object.values(fields)[0] ?? 'Check the form.', fields);
  }
  try {
    const quote = await createEnquiry(user, parsed.data);
    return Response.json({ id: quote.id, state: quote.state, url: `/account/quotes/${quote.id}` }, { status: 201 });
  } catch (error) {
    if (error instanceof QuoteError) return jsonError(error.status, error.code, error.message, error.fields);
    throw error;
  }
}) satisfies APIRoute;
