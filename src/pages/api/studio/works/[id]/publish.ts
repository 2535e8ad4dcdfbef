import type { APIRoute } from 'astro';
import { publishInput } from '~/lib/studio-schemas';
import { requireArea } from '~/lib/server/guard';
import { readJson } from '~/lib/server/http';
import { invalidInput, NO_STORE, publishWork, studioFailure, workIdParam, workNotFound } from '~/lib/server/studio';

/** `{ publish: true }` puts the work in the Gallery (alt text required); `{ publish: false }` returns it to draft. */
export const POST = (async ({ params, request, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = publishInput.safeParse(body.value);
  if (!parsed.success) return invalidInput(parsed.error);
  const id = workIdParam(params.id);
  if (id == null) return workNotFound(params.id);
  try {
    return Response.json(await publishWork(id, parsed.data.publish), { headers: NO_STORE });
  } catch (error) {
    return studioFailure(error);
  }
}) satisfies APIRoute;
