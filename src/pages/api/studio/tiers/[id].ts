import type { APIRoute } from 'astro';
import { licenceTierPatch } from '~/lib/settings-schemas';
import { requireArea } from '~/lib/server/guard';
import { jsonError, readJson } from '~/lib/server/http';
import { deleteTier, invalidInput, parseId, settingsErrorResponse, updateTier } from '~/lib/server/settings';

const noStore = { 'Cache-Control': 'no-store' };
const notFound = () => jsonError(404, 'not_found', 'No such licence tier.');

/** Changes some fields of a licence tier; the result must pass the whole schema. */
export const PATCH = (async ({ params, request, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = licenceTierPatch.safeParse(body.value);
  if (!parsed.success) return invalidInput(parsed.error, 'invalid_tier');
  const id = parseId(params.id);
  if (id == null) return notFound();
  try {
    return Response.json({ tier: await updateTier(id, parsed.data) }, { headers: noStore });
  } catch (error) {
    return settingsErrorResponse(error);
  }
}) satisfies APIRoute;

/** Deletes a licence tier, or sets it inactive when anything refers to it (the answer says which, and why). */
export const DELETE = (async ({ params, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const id = parseId(params.id);
  if (id == null) return notFound();
  try {
    return Response.json(await deleteTier(id), { headers: noStore });
  } catch (error) {
    return settingsErrorResponse(error);
  }
}) satisfies APIRoute;
