import type { APIRoute } from 'astro';
import { workDetailsPatch } from '~/lib/studio-schemas';
import { requireArea } from '~/lib/server/guard';
import { readJson } from '~/lib/server/http';
import { getWorkEditor, invalidInput, NO_STORE, saveWorkDetails, studioFailure, workIdParam, workNotFound } from '~/lib/server/studio';

/** Everything the work editor shows: details, licence rules, each size's grades, offers and editions. */
export const GET = (async ({ params, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const id = workIdParam(params.id);
  if (id == null) return workNotFound(params.id);
  try {
    const editor = await getWorkEditor(id);
    return editor ? Response.json(editor, { headers: NO_STORE }) : workNotFound(params.id);
  } catch (error) {
    return studioFailure(error);
  }
}) satisfies APIRoute;

/** Saves some or all of the work's details (title, caption, alt text, keywords, series, focal point, release). */
export const PATCH = (async ({ params, request, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = workDetailsPatch.safeParse(body.value);
  if (!parsed.success) return invalidInput(parsed.error);
  const id = workIdParam(params.id);
  if (id == null) return workNotFound(params.id);
  try {
    return Response.json(await saveWorkDetails(id, parsed.data, { id: auth.id, email: auth.email }), { headers: NO_STORE });
  } catch (error) {
    return studioFailure(error);
  }
}) satisfies APIRoute;
