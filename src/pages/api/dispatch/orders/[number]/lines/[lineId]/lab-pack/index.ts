import type { APIRoute } from 'astro';
import { requireArea } from '~/lib/server/guard';
import { jsonError } from '~/lib/server/http';
import { LabPackError, prepareLabPack } from '~/lib/server/lab-pack';

/** Prepares (or re-prepares) the lab pack of one print line: the print-ready file and its job sheet. No body. */
export const POST = (async ({ params, locals }) => {
  const auth = requireArea(locals, 'dispatch');
  if (auth instanceof Response) return auth;
  try {
    const pack = await prepareLabPack(params.number ?? '', params.lineId, { id: auth.id, email: auth.email });
    return Response.json({ pack }, { headers: { 'Cache-Control': 'no-store' } });
  } catch (error) {
    if (error instanceof LabPackError) return jsonError(error.status, error.code, error.message);
    throw error;
  }
}) satisfies APIRoute;
