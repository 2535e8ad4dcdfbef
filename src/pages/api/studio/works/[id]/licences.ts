import type { APIRoute } from 'astro';
import { licencePricesInput } from '~/lib/studio-schemas';
import { requireArea } from '~/lib/server/guard';
import { readJson } from '~/lib/server/http';
import { invalidInput, NO_STORE, saveLicencePrices, studioFailure, workIdParam, workNotFound } from '~/lib/server/studio';

/** Sets the work's rule per licence tier: the tier's default, the work's own price, or withdrawn. */
export const PUT = (async ({ params, request, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = licencePricesInput.safeParse(body.value);
  if (!parsed.success) return invalidInput(parsed.error);
  const id = workIdParam(params.id);
  if (id == null) return workNotFound(params.id);
  try {
    return Response.json(await saveLicencePrices(id, parsed.data, { id: auth.id, email: auth.email }), { headers: NO_STORE });
  } catch (error) {
    return studioFailure(error);
  }
}) satisfies APIRoute;
