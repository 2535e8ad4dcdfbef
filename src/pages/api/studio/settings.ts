import type { APIRoute } from 'astro';
import { shopSettingsInput } from '~/lib/settings-schemas';
import { requireArea } from '~/lib/server/guard';
import { readJson } from '~/lib/server/http';
import { getSettings, invalidInput, settingsErrorResponse, updateSettings } from '~/lib/server/settings';

const noStore = { 'Cache-Control': 'no-store' };

/** The shop's settings. */
export const GET = (async ({ locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  try {
    return Response.json({ settings: await getSettings() }, { headers: noStore });
  } catch (error) {
    return settingsErrorResponse(error);
  }
}) satisfies APIRoute;

/**
 * Replaces the shop's settings. The answer carries warnings (a new currency: prices are not converted)
 * and, when the watermark changed, the progress of the preview re-make it started.
 */
export const PUT = (async ({ request, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = shopSettingsInput.safeParse(body.value);
  if (!parsed.success) return invalidInput(parsed.error, 'invalid_settings');
  try {
    return Response.json(await updateSettings(parsed.data, { id: auth.id, email: auth.email }), { headers: noStore });
  } catch (error) {
    return settingsErrorResponse(error);
  }
}) satisfies APIRoute;
