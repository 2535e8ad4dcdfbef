import type { APIRoute } from 'astro';
import { bulkInput } from '~/lib/studio-schemas';
import { requireArea } from '~/lib/server/guard';
import { readJson } from '~/lib/server/http';
import { bulkAction, invalidInput, NO_STORE, studioFailure } from '~/lib/server/studio';

/** Publishes, unpublishes or moves many works at once; answers each work's result and a summary line. */
export const POST = (async ({ request, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = bulkInput.safeParse(body.value);
  if (!parsed.success) return invalidInput(parsed.error);
  try {
    return Response.json(await bulkAction(parsed.data), { headers: NO_STORE });
  } catch (error) {
    return studioFailure(error);
  }
}) satisfies APIRoute;
