import type { APIRoute } from 'astro';
import { requireArea } from '~/lib/server/guard';
import { jsonError } from '~/lib/server/http';
import { DeliveryError, downloadLinkFor, renewGrant } from '~/lib/server/deliveries';

/** A new download link for a valid licence (the old one expired or was used up). */
export const POST = (async ({ params, locals }) => {
  const user = requireArea(locals, 'account');
  if (user instanceof Response) return user;
  try {
    await renewGrant(params.id ?? '', user.id);
    return Response.json({ link: await downloadLinkFor(params.id ?? '', user.id) }, { status: 201 });
  } catch (error) {
    if (error instanceof DeliveryError) return jsonError(error.status, error.code, error.message);
    throw error;
  }
}) satisfies APIRoute;
