import type { APIRoute } from 'astro';
import { requireArea } from '~/lib/server/guard';
import { getSettings, rebuildProgress, settingsErrorResponse, startPreviewRebuild } from '~/lib/server/settings';

const noStore = { 'Cache-Control': 'no-store' };

/** Progress of the re-make of every work's previews: `{ state, done, total, currentTitle, errors, … }`. */
export const GET = (async ({ locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  return Response.json(rebuildProgress(), { headers: noStore });
}) satisfies APIRoute;

/**
 * Re-makes every work's previews with the current watermark text, e.g. after a restart cut a re-make
 * short. Answers 202 with the progress; the work happens in the background.
 */
export const POST = (async ({ locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  try {
    const { watermarkText } = await getSettings();
    return Response.json(startPreviewRebuild(watermarkText), { status: 202, headers: noStore });
  } catch (error) {
    return settingsErrorResponse(error);
  }
}) satisfies APIRoute;
