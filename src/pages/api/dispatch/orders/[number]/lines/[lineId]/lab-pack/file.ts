import type { APIRoute } from 'astro';
import { requireArea } from '~/lib/server/guard';
import { labPackDownloadResponse } from '~/lib/server/lab-pack';

/** The print-ready file of a line's lab pack, as a download (attachment, not stored by caches). */
export const GET = (async ({ params, locals }) => {
  const auth = requireArea(locals, 'dispatch');
  if (auth instanceof Response) return auth;
  return labPackDownloadResponse(params.number ?? '', params.lineId, 'file');
}) satisfies APIRoute;
