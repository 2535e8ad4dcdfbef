import fs from 'node:fs';
import fsp from 'node:fs/promises';
import { Readable } from 'node:stream';
import type { APIRoute } from 'astro';
import { config } from '~/lib/server/config';
import { CONTENT_TYPE, derivativeFilePath } from '~/lib/server/images';

/** Serves public derivatives only. Their names carry a content hash, so they may be cached for a year. */
export const GET = (async ({ params, request }) => {
  const file = derivativeFilePath(config().derivativesDir, params.key ?? '', params.file ?? '');
  if (!file) return new Response('Not found', { status: 404 });
  let size: number;
  try {
    size = (await fsp.stat(file)).size;
  } catch {
    return new Response('Not found', { status: 404 });
  }
  const etag = `"${params.key}-${params.file}"`;
  const headers = {
    'Content-Type': CONTENT_TYPE[file.split('.').pop()!]!,
    'Cache-Control': 'public, max-age=31536000, immutable',
    ETag: etag,
    'X-Content-Type-Options': 'nosniff',
  };
  if (request.headers.get('if-none-match') === etag) return new Response(null, { status: 304, headers });
  const body = Readable.toWeb(fs.createReadStream(file)) as ReadableStream<Uint8Array>;
  return new Response(body, { headers: { ...headers, 'Content-Length': String(size) } });
}) satisfies APIRoute;
