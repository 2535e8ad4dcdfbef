import { createHash } from 'node:crypto';
import { defineMiddleware } from 'astro:middleware';
import { readSession } from '~/lib/server/auth';
import { startBackgroundWork } from '~/lib/server/background';
import { config } from '~/lib/server/config';
import { CONTENT_SECURITY_POLICY, crossSiteApiWrite, shopOrigins } from '~/lib/server/csp';
import { jsonError } from '~/lib/server/http';
import { galleryPageSlot } from '~/lib/server/page-cache';

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
  // The mail outbox's retries and the sweep of half-done uploads: started by the first request, once.
  startBackgroundWork();
  context.locals.user = null;
  context.locals.session = null;
  const path = context.url.pathname;
  // A write to the API from another site's page is refused before anything reads the session (CSRF).
  if (crossSiteApiWrite(context.request.method, path, context.request.headers, shopOrigins(config().publicOrigin))) {
    const refused = jsonError(403, 'cross_site', 'Requests from other sites are not accepted.');
    for (const [name, value] of Object.entries(SECURITY_HEADERS)) refused.headers.set(name, value);
    return refused;
  }
  // Derivative files and better-auth's own routes need no session read; everything else reads it once.
  const cookies = context.request.headers.get('cookie') ?? '';
  // A signed-out visitor's Gallery page, kept from an earlier render while the catalogue has not changed
  // (built app only: in development the code behind a page changes too).
  const slot = !import.meta.env.PROD || cookies.includes('session_token') ? null : await galleryPageSlot(context.request.method, context.url);
  if (slot?.kept) {
    const headers = new Headers(slot.kept.headers);
    if (context.request.headers.get('if-none-match') === slot.kept.etag) return new Response(null, { status: 304, headers });
    return new Response(slot.kept.body, { status: 200, headers });
  }
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
  // Only built pages: in development Vite and the React plugin add inline scripts of their own.
  if (isHtml && import.meta.env.PROD && !response.headers.has('Content-Security-Policy')) response.headers.set('Content-Security-Policy', CONTENT_SECURITY_POLICY);
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
  if (slot && !headers.has('Set-Cookie')) slot.keep({ body: new TextEncoder().encode(body), etag, headers: [...headers] });
  if (context.request.headers.get('if-none-match') === etag) return new Response(null, { status: 304, headers });
  return new Response(body, { status: 200, headers });
});
