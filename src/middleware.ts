import { createHash } from 'node:crypto';
import { defineMiddleware } from 'astro:middleware';

const SECURITY_HEADERS: Record<string, string> = {
  'X-Content-Type-Options': 'nosniff',
  'Referrer-Policy': 'strict-origin-when-cross-origin',
  'X-Frame-Options': 'DENY',
  'Permissions-Policy': 'camera=(), microphone=(), geolocation=()',
};

/**
 * Gallery HTML is the same for every visitor, so it carries a content ETag and must be revalidated:
 * browsers and proxies keep a copy and get a 304 until something is published or changed.
 */
export const onRequest = defineMiddleware(async (context, next) => {
  const response = await next();
  for (const [name, value] of Object.entries(SECURITY_HEADERS)) {
    if (!response.headers.has(name)) response.headers.set(name, value);
  }
  const isHtml = response.headers.get('content-type')?.startsWith('text/html');
  if (context.request.method !== 'GET' || response.status !== 200 || !isHtml || response.headers.has('Cache-Control')) {
    return response;
  }
  const body = await response.text();
  const etag = `W/"${createHash('sha1').update(body).digest('base64url')}"`;
  const headers = new Headers(response.headers);
  headers.set('Cache-Control', 'public, no-cache');
  headers.set('ETag', etag);
  if (context.request.headers.get('if-none-match') === etag) return new Response(null, { status: 304, headers });
  return new Response(body, { status: 200, headers });
});
