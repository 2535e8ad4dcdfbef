/// <reference path="../.astro/types.d.ts" />

declare namespace App {
  interface Locals {
    /** The signed-in person, read once per request by the middleware; null when signed out. */
    user: import('./lib/server/auth-types').SessionUser | null;
    session: import('./lib/server/auth-types').SessionInfo | null;
  }
}
