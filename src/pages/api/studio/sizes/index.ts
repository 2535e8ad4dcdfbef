import type { APIRoute } from 'astro';
import { printSizeInput } from '~/lib/settings-schemas';
import { requireArea } from '~/lib/server/guard';
import { readJson } from '~/lib/server/http';
import { createSize, invalidInput, listSizes, settingsErrorResponse } from '~/lib/server/settings';

const noStore = { 'Cache-Control': 'no-store' };

/** Every print size, active or not, in the shop's order. */
export const GET = (async ({ locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  try {
    return Response.json({ sizes: await listSizes() }, { headers: noStore });
  } catch (error) {
    return settingsErrorResponse(error);
  }
}) satisfies APIRoute;

/** Adds a print size; its slug is made from its label. 409 when the label or the measurements are taken. */
export const POST = (async ({ request, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;
  const body = await readJson(request);
  if (!body.ok) return body.response;
  const parsed = printSizeInput.safeParse(body.value);
  if (!parsed.success) return invalidInput(parsed.error, 'invalid_size');
  try {
    return Response.json({ size: await createSize(parsed.data) }, { status: 201, headers: noStore });
  } catch (error) {
    return settingsErrorResponse(error);
  }
}) satisfies APIRoute;
