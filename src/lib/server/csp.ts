/**
 * The Content-Security-Policy sent with every HTML page, and the same-origin rule for API writes.
 *
 * Scripts: the shop's own bundles ('self') and, by hash, the only inline scripts a page has — Astro's
 * island bootstrap (the <astro-island> element) and its hydration directives (load, idle, visible, only,
 * media). Those are fixed texts shipped in the installed astro package; their hashes are taken from the
 * very modules Astro inlines, so they follow an upgrade. Any other inline script — an injected one — does
 * not run. Styles stay 'unsafe-inline': pages and islands set layout through style attributes.
 * Sources: W3C CSP Level 3 (hash-source, frame-ancestors, base-uri, object-src); OWASP Content Security
 * Policy Cheat Sheet ("strict" hash-based script-src, object-src 'none', base-uri).
 */
import { createHash } from 'node:crypto';
import islandScript from 'astro/runtime/server/astro-island.prebuilt.js';
import idleDirective from 'astro/runtime/client/idle.prebuilt.js';
import loadDirective from 'astro/runtime/client/load.prebuilt.js';
import mediaDirective from 'astro/runtime/client/media.prebuilt.js';
import onlyDirective from 'astro/runtime/client/only.prebuilt.js';
import visibleDirective from 'astro/runtime/client/visible.prebuilt.js';

/** The inline scripts Astro writes into pages with islands, exactly as it writes them. */
export const ASTRO_INLINE_SCRIPTS: readonly string[] = [islandScript, loadDirective, idleDirective, visibleDirective, onlyDirective, mediaDirective];

/** A CSP hash-source for a script's text: 'sha256-<base64 of SHA-256 of its UTF-8 bytes>'. */
export function scriptHashSource(text: string): string {
  return `'sha256-${createHash('sha256').update(text, 'utf8').digest('base64')}'`;
}

export const CONTENT_SECURITY_POLICY = [
  "default-src 'self'",
  `script-src 'self' ${ASTRO_INLINE_SCRIPTS.map(scriptHashSource).join(' ')}`,
  "style-src 'self' 'unsafe-inline'",
  "img-src 'self' data: blob:",
  "font-src 'self' data:",
  "connect-src 'self'",
  "object-src 'none'",
  "base-uri 'self'",
  "form-action 'self'",
  "frame-ancestors 'none'",
].join('; ');

const UNSAFE_METHODS = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

/**
 * The shop's own origins: PUBLIC_ORIGIN, and on a local machine both names of the loopback address (as
 * better-auth's trusted origins). Not the request URL's origin: without configured allowed domains the
 * node adapter does not trust the Host header and the URL reads http://localhost.
 */
export function shopOrigins(publicOrigin: string): string[] {
  const url = new URL(publicOrigin);
  if (url.hostname !== 'localhost' && url.hostname !== '127.0.0.1') return [url.origin];
  return ['localhost', '127.0.0.1'].map((host) => `${url.protocol}//${host}${url.port ? `:${url.port}` : ''}`);
}

/**
 * True when a write to the API comes from another site's page: an `Origin` that is not the shop's, or a
 * browser's `Sec-Fetch-Site: cross-site/same-site`. Astro's checkOrigin only looks at form-like bodies;
 * this covers JSON and raw bodies too. Requests without those headers (not from a browser page) pass:
 * they carry no one's session cookie. Stripe's webhook (signed) and better-auth (own origin check) are left out.
 */
export function crossSiteApiWrite(method: string, path: string, headers: Headers, ownOrigins: readonly string[]): boolean {
  if (!UNSAFE_METHODS.has(method) || !path.startsWith('/api/')) return false;
  if (path === '/api/stripe/webhook' || path.startsWith('/api/auth/')) return false;
  const origin = headers.get('origin');
  if (origin !== null && !ownOrigins.includes(origin)) return true;
  const site = headers.get('sec-fetch-site');
  return site === 'cross-site' || site === 'same-site';
}
