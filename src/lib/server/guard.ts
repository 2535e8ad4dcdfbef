/** Role checks for endpoints and pages. Endpoints answer 401/403 as JSON; pages redirect or show 403. */
import type { AstroGlobal } from 'astro';
import { canUse, type Area } from '../roles';
import type { SessionUser } from './auth-types';
import { jsonError } from './http';

/**
 * For API routes: returns the user when they may use `area`, otherwise the Response to send.
 * Usage: `const auth = requireArea(locals, 'studio'); if (auth instanceof Response) return auth;`
 */
export function requireArea(locals: App.Locals, area: Area): SessionUser | Response {
  if (!locals.user) return jsonError(401, 'unauthenticated', 'Sign in first.');
  if (!canUse(locals.user.role, area)) return jsonError(403, 'forbidden', 'Your account cannot do this.');
  return locals.user;
}

/**
 * For pages: the user when they may use `area`; otherwise a redirect to sign-in (signed out)
 * or a 403 page (wrong role). Usage in frontmatter:
 * `const auth = await guardPage(Astro, 'studio'); if (auth instanceof Response) return auth;`
 */
export async function guardPage(astro: AstroGlobal, area: Area): Promise<SessionUser | Response> {
  const user = astro.locals.user;
  if (!user) {
    const next = encodeURIComponent(astro.url.pathname + astro.url.search);
    return astro.redirect(`/sign-in?next=${next}`, 303);
  }
  if (!canUse(user.role, area)) return astro.rewrite('/403');
  return user;
}
