import type { APIRoute } from 'astro';
import { licenceTierInput } from '~/lib/settings-schemas';
import { requireArea } from '~/lib/server/guard';
import { readJson } from '~/lib/server/http';
import { createTier, invalidInput, listTiers, settingsErrorResponse } from '~/lib/server/settings';

const noStore = { 'Cache-Control': 'no-store' };

/** Every licence tier, active or not, in the shop's order. */
export const GET = (async ({ locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  try {
    return Response.json({ tiers: await listTiers() }, { headers: noStore });
  } catch (error) {
    return settingsErrorResponse(error);
  }
}) satisfies APIRoute;

/** Adds a licence tier; its slug is made from its name. 409 when the name is taken. */
export const POST = (async ({ request, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = licenceTierInput.safeParse(body.value);
  if (!parsed.success) return invalidInput(parsed.error, 'invalid_tier');
  try {
    return Response.json({ tier: await createTier(parsed.data) }, { status: 201, headers: noStore });
  } catch (error) {
    return settingsErrorResponse(error);
  }
}) satisfies APIRoute;
