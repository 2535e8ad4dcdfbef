import type { APIRoute } from 'astro';
import { printOffersInput } from '~/lib/studio-schemas';
import { requireArea } from '~/lib/server/guard';
import { readJson } from '~/lib/server/http';
import { invalidInput, NO_STORE, savePrintOffers, studioFailure, workIdParam, workNotFound } from '~/lib/server/studio';

/** Sets which sizes and papers the work is printed on, and each size's edition. */
export const PUT = (async ({ params, request, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = printOffersInput.safeParse(body.value);
  if (!parsed.success) return invalidInput(parsed.error);
  const id = workIdParam(params.id);
  if (id == null) return workNotFound(params.id);
  try {
    return Response.json(await savePrintOffers(id, parsed.data, { id: auth.id, email: auth.email }), { headers: NO_STORE });
  } catch (error) {
    return studioFailure(error);
  }
}) satisfies APIRoute;
