/**
 * Endpoints for the Studio's editable lists (licence tiers, papers, print sizes), which share one shape:
 * list and add on the collection, change and delete on an item. Guards run in the fixed order.
 */
import type { APIRoute } from 'astro';
import type { z } from 'zod';
import { requireArea } from './guard';
import { jsonError, readJson } from './http';
import { invalidInput, parseId, settingsErrorResponse } from './settings';

const noStore = { 'Cache-Control': 'no-store' };

interface Collection<Input, Row> {
  /** JSON key for one row ("tier"); the list is this plus "s". */
  key: string;
  code: string;
  input: z.ZodType<Input>;
  list: () => Promise<Row[]>;
  create: (data: Input) => Promise<Row>;
}

export function collectionRoutes<Input, Row>(c: Collection<Input, Row>): { GET: APIRoute; POST: APIRoute } {
  const GET: APIRoute = async ({ locals }) => {
    const auth = requireArea(locals, 'studio');
    if (auth instanceof Response) return auth;
    try {
      return Response.json({ [`${c.key}s`]: await c.list() }, { headers: noStore });
    } catch (error) {
      return settingsErrorResponse(error);
    }
  };
  const POST: APIRoute = async ({ request, locals }) => {
    const auth = requireArea(locals, 'studio');
    if (auth instanceof Response) return auth;
    const body = await readJson(request);
    if (!body.ok) return body.response;
    const parsed = c.input.safeParse(body.value);
    if (!parsed.success) return invalidInput(parsed.error, c.code);
    try {
      return Response.json({ [c.key]: await c.create(parsed.data) }, { status: 201, headers: noStore });
    } catch (error) {
      return settingsErrorResponse(error);
    }
  };
  return { GET, POST };
}

interface Item<Patch, Row, Outcome> {
  key: string;
  code: string;
  /** Shown for an unknown id, e.g. "No such paper." */
  missing: string;
  patch: z.ZodType<Patch>;
  /** `actor` is the signed-in user, for the audit trail of changes to money and rights. */
  update: (id: number, patch: Patch, actor: { id: string; email: string }) => Promise<Row>;
  remove: (id: number) => Promise<Outcome>;
}

export function itemRoutes<Patch, Row, Outcome>(i: Item<Patch, Row, Outcome>): { PATCH: APIRoute; DELETE: APIRoute } {
  const notFound = () => jsonError(404, 'not_found', i.missing);
  const PATCH: APIRoute = async ({ params, request, locals }) => {
    const auth = requireArea(locals, 'studio');
    if (auth instanceof Response) return auth;
    const body = await readJson(request);
    if (!body.ok) return body.response;
    const parsed = i.patch.safeParse(body.value);
    if (!parsed.success) return invalidInput(parsed.error, i.code);
    const id = parseId(params.id);
    if (id == null) return notFound();
    try {
      return Response.json({ [i.key]: await i.update(id, parsed.data, { id: auth.id, email: auth.email }) }, { headers: noStore });
    } catch (error) {
      return settingsErrorResponse(error);
    }
  };
  const DELETE: APIRoute = async ({ params, locals }) => {
    const auth = requireArea(locals, 'studio');
    if (auth instanceof Response) return auth;
    const id = parseId(params.id);
    if (id == null) return notFound();
    try {
      return Response.json(await i.remove(id), { headers: noStore });
    } catch (error) {
      return settingsErrorResponse(error);
    }
  };
  return { PATCH, DELETE };
}
