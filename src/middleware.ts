import { createHash } from 'node:crypto';
import { defineMiddleware } from 'astro:middleware';
import { readSession } from '~/lib/server/auth';

const SECURITY_HEADERS: Record<string, string> = {
  'X-Content-Type-Options': 'nosniff',
  'Referrer-Policy': 'strict-origin-when-cross-origin',
  'X-Frame-Options': 'DENY',
  'Permissions-Policy': 'camera=(), microphone=(), geolocation=()',
};

/** Some responses (Response.redirect, fetched ones) have frozen headers; copy those before editing. */
function editable(response: Response): Response {
  try {
    response.headers.set('X-Content-Type-Options', 'nosniff');
    return response;
  } catch {
    return new Response(response.body, { status: response.status, statusText: response.statusText, headers: new Headers(response.headers) });
  }
}

/**
 * Reads the session once into `locals`. Gallery HTML carries a content ETag and must be revalidated:
 * browsers (and, for signed-out visitors, proxies) keep a copy and get a 304 until something changes.
 */
export const onRequest = defineMiddleware(async (context, next) => {
  context.locals.user = null;
  context.locals.session = null;
  const path = context.url.pathname;
  // Derivative files and better-auth's own routes need no session read; everything else reads it once.
  const cookies = context.request.headers.get('cookie') ?? '';
  let refreshed: string[] = [];
  if (!path.startsWith('/media/') && !path.startsWith('/api/auth/') && cookies.includes('session_token')) {
    const found = await readSession(context.request.headers);
    if (found) {
      context.locals.user = found.user;
      context.locals.session = found.session;
      refreshed = found.setCookies;
    }
  }
  const response = editable(await next());
  for (const cookie of refreshed) response.headers.append('Set-Cookie', cookie);
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
  // A signed-in page names its reader, so only their own browser may keep it.
  headers.set('Cache-Control', context.locals.user ? 'private, no-cache' : 'public, no-cache');
  headers.append('Vary', 'Cookie');
  headers.set('ETag', etag);
  if (context.request.headers.get('if-none-match') === etag) return new Response(null, { status: 304, headers });
  return new Response(body, { status: 200, headers });
});
