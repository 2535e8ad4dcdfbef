import type { APIRoute } from 'astro';
import { requireArea } from '~/lib/server/guard';
import { jsonError } from '~/lib/server/http';
import { DeliveryError, authenticityCertificate } from '~/lib/server/deliveries';

export const GET = (async ({ params, locals }) => {
  const user = requireArea(locals, 'account');
  if (user instanceof Response) return user;
  try {
    const { pdf, fileName } = await authenticityCertificate(params.serial ?? '', user.id);
    return new Response(Buffer.from(pdf), { headers: { 'Content-Type': 'application/pdf', 'Content-Disposition': `inline; filename="${fileName}"`, 'Cache-Control': 'private, no-store' } });
  } catch (error) {
    if (error instanceof DeliveryError) return jsonError(error.status, error.code, error.message);
    throw error;
  }
}) satisfies APIRoute;
