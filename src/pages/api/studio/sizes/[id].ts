import type { APIRoute } from 'astro';
import { printSizePatch } from '~/lib/settings-schemas';
import { requireArea } from '~/lib/server/guard';
import { jsonError, readJson } from '~/lib/server/http';
import { deleteSize, invalidInput, parseId, settingsErrorResponse, updateSize } from '~/lib/server/settings';

const noStore = { 'Cache-Control': 'no-store' };
const notFound = () => jsonError(404, 'not_found', 'No such print size.');

/** Changes some fields of a print size; the result must pass the whole schema. */
export const PATCH = (async ({ params, request, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = printSizePatch.safeParse(body.value);
  if (!parsed.success) return invalidInput(parsed.error, 'invalid_size');
  const id = parseId(params.id);
  if (id == null) return notFound();
  try {
    return Response.json({ size: await updateSize(id, parsed.data) }, { headers: noStore });
  } catch (error) {
    return settingsErrorResponse(error);
  }
}) satisfies APIRoute;

/** Deletes a print size, or sets it inactive when anything refers to it (the answer says which, and why). */
export const DELETE = (async ({ params, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const id = parseId(params.id);
  if (id == null) return notFound();
  try {
    return Response.json(await deleteSize(id), { headers: noStore });
  } catch (error) {
    return settingsErrorResponse(error);
  }
}) satisfies APIRoute;
