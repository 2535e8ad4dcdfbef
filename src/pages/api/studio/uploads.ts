/**
 * POST /api/studio/uploads — one original per request, as the raw request body
 * (`Content-Type: application/octet-stream`), its name in `X-File-Name` (encodeURIComponent'd).
 * The body is streamed to disk, never buffered: the node adapter hands the request over as a stream.
 * 201 `{ work }` a draft was created; 409 `{ error: { code: 'duplicate', existing } }` the file is already a work.
 */
import type { APIRoute } from 'astro';
import { config } from '~/lib/server/config';
import { requireArea } from '~/lib/server/guard';
import { jsonError } from '~/lib/server/http';
import { UploadError, createdWorkBody, ingestUpload, tooLarge } from '~/lib/server/ingest';
import { fileNameRefusal } from '~/lib/uploads';

/**
 * When a refusal comes before the body has been read to its end, the connection is closed after the answer,
 * so the rest of the body is not read into nothing and a new request cannot start in the middle of it.
 */
function refusal(error: UploadError, bodyUnread: boolean): Response {
  const response = jsonError(error.httpStatus, error.code, error.message);
  if (bodyUnread) response.headers.set('Connection', 'close');
  return response;
}

export const POST = (async ({ request, locals }) => {
  const auth = requireArea(locals, 'studio');
  if (auth instanceof Response) return auth;

  const rawName = request.headers.get('x-file-name');
  if (!rawName) return jsonError(400, 'missing_file_name', 'Send the file name in the X-File-Name header.');
  let fileName: string;
  try {
    fileName = decodeURIComponent(rawName);
  } catch {
    return jsonError(400, 'invalid_file_name', 'X-File-Name must be the file name, encoded with encodeURIComponent.');
  }
  const nameRefused = fileNameRefusal(fileName);
  if (nameRefused) {
    const response = jsonError(nameRefused.status, nameRefused.code, nameRefused.message);
    if (request.body) response.headers.set('Connection', 'close');
    return response;
  }

  const lengthHeader = request.headers.get('content-length');
  const declaredBytes = lengthHeader === null ? undefined : Number(lengthHeader);
  if (declaredBytes !== undefined && !(Number.isSafeInteger(declaredBytes) && declaredBytes >= 0)) {
    return jsonError(400, 'invalid_length', 'Content-Length is not a byte count.');
  }
  if (!request.body || declaredBytes === 0) return jsonError(400, 'empty', 'The request has no file in its body.');
  if (declaredBytes !== undefined && declaredBytes > config().uploadMaxBytes) return refusal(tooLarge(config().uploadMaxBytes), true);

  try {
    const result = await ingestUpload(request.body, { fileName, declaredBytes, userId: auth.id, signal: request.signal });
    if (result.status === 'duplicate') {
      return Response.json(
        { error: { code: 'duplicate', message: `This file is already in the shop as “${result.existing.title}”.`, existing: result.existing } },
        { status: 409 },
      );
    }
    return Response.json({ work: createdWorkBody(result.work) }, { status: 201 });
  } catch (error) {
    if (error instanceof UploadError) return refusal(error, error.code === 'too_large' || error.code === 'unsupported_type');
    console.error('upload failed', error);
    return jsonError(500, 'upload_failed', 'The upload could not be stored. Please try again.');
  }
}) satisfies APIRoute;
