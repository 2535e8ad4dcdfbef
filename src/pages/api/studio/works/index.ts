import type { APIRoute } from 'astro';
import { worksListQuery } from '~/lib/studio-schemas';
import { requireArea } from '~/lib/server/guard';
import { invalidInput, listStudioWorks, NO_STORE, studioFailure } from '~/lib/server/studio';

/** The Studio's works table: every work, drafts too, sorted and filtered by the query string. */
export const GET = (async ({ url, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const params = Object.fromEntries([...url.searchParams].filter(([, value]) => value.trim() !== ''));
  const parsed = worksListQuery.safeParse(params);
  if (!parsed.success) return invalidInput(parsed.error, 'invalid_query');
  try {
    return Response.json(await listStudioWorks(parsed.data), { headers: NO_STORE });
  } catch (error) {
    return studioFailure(error);
  }
}) satisfies APIRoute;
