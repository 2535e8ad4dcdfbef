/** JSON answers for API routes: `{ error: { code, message, fields? } }` for every failure. */
import type { z } from 'zod';

export function jsonError(status: number, code: string, message: string, fields?: Record<string, string>): Response {
  return Response.json({ error: { code, message, ...(fields ? { fields } : {}) } }, { status });
}

/** Names each invalid field by its path, e.g. `lines.0.quantity`. */
export function zodFields(error: z.ZodError): Record<string, string> {
  const fields: Record<string, string> = {};
  for (const issue of error.issues) {
    const path = issue.path.map(String).join('.') || '(body)';
    fields[path] ??= issue.message;
  }
  return fields;
}

/** Reads a JSON body without trusting it: a body that is not JSON is an answer, not a crash. */
export async function readJson(request: Request): Promise<{ ok: true; value: unknown } | { ok: false; response: Response }> {
  const type = request.headers.get('content-type') ?? '';
  if (!type.toLowerCase().startsWith('application/json')) {
    return { ok: false, response: jsonError(415, 'unsupported_media_type', 'Send the body as application/json.') };
  }
  try {
    return { ok: true, value: await request.json() };
  } catch {
    return { ok: false, response: jsonError(400, 'invalid_json', 'The body is not valid JSON.') };
  }
}
