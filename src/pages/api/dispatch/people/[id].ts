import type { APIRoute } from 'astro';
import { personChange } from '~/lib/people-schemas';
import { requireArea } from '~/lib/server/guard';
import { jsonError, readJson, zodFields } from '~/lib/server/http';
import { changePerson, PeopleError } from '~/lib/server/people';

/** Changes one account's role or disables/enables it. Disabling ends its sessions immediately. */
export const PATCH = (async ({ params, request, locals }) => {
  const auth = requireArea(locals, 'dispatch');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = personChange.safeParse(body.value);
  if (!parsed.success) return jsonError(400, 'invalid_change', parsed.error.issues[0]!.message, zodFields(parsed.error));
  try {
    const person = await changePerson(auth.id, params.id ?? '', parsed.data, request.headers, auth.email);
    return Response.json({ person });
  } catch (error) {
    if (error instanceof PeopleError) return jsonError(error.status, error.code, error.message);
    throw error;
  }
}) satisfies APIRoute;
