import type { APIRoute } from 'astro';
import { requireArea } from '~/lib/server/guard';
import { listPeople } from '~/lib/server/people';

export const GET = (async ({ locals }) => {
  const auth = requireArea(locals, 'dispatch');
  if (auth instanceof Response) return auth;
  return Response.json({ people: await listPeople() }, { headers: { 'Cache-Control': 'no-store' } });
}) satisfies APIRoute;
