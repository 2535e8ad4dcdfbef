/**
 * Every API route file × every method × every kind of visitor. The expected answer comes from where the
 * route lives (api/studio → photographer and admin, api/dispatch → admin, api/account → any signed-in
 * person); a route anywhere else must be listed below as public, or this test fails: a new route
 * cannot slip in unguarded.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { APIContext } from 'astro';
import { AREA_ROLES, type Area, type Role } from '~/lib/roles';
import type { SessionUser } from '~/lib/server/auth-types';
import { insertSettings, useTempDatabase, type TestData } from '../_fixtures';

const API_DIR = path.resolve('src/pages/api');
const METHODS = ['GET', 'POST', 'PUT', 'PATCH', 'DELETE', 'ALL'] as const;

/** Routes open to everyone, each with the reason. */
const PUBLIC_ROUTES: Record<string, string> = {
  'cart/quote.ts': 'prices a cart for anyone browsing; reads only published catalogue data, and quoted licences only for the signed-in account that asked for them',
  'auth/[...all].ts': "better-auth's own endpoints; their guards are tested in accounts.test.ts",
  'stripe/webhook.ts': 'called by Stripe, not a person: authenticated by its signature (tested in checkout.test.ts)',
};

function routeFiles(dir = API_DIR): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((entry) => {
    const full = path.join(dir, entry.name);
    if (entry.isDirectory()) return routeFiles(full);
    return /\.(ts|js)$/.test(entry.name) ? [path.relative(API_DIR, full).split(path.sep).join('/')] : [];
  });
}

function areaOf(route: string): Area | 'public' | null {
  if (route in PUBLIC_ROUTES) return 'public';
  const first = route.split('/')[0];
  return first === 'studio' || first === 'dispatch' || first === 'account' ? first : null;
}

const visitors: { name: string; user: SessionUser | null }[] = [
  { name: 'signed out', user: null },
  ...(['buyer', 'photographer', 'admin'] as Role[]).map((role) => ({
    name: role,
    user: { id: `matrix-${role}`, email: `${role}@matrix.example`, name: role, role, emailVerified: true },
  })),
];

function context(route: string, method: string, user: SessionUser | null): APIContext {
  const url = new URL(`http://localhost:4321/api/${route.replace(/\.ts$/, '').replace(/\[\.\.\.(\w+)\]/, 'x').replace(/\[(\w+)\]/g, '999999')}`);
  const hasBody = !['GET', 'DELETE'].includes(method);
  const request = new Request(url, {
    method: method === 'ALL' ? 'GET' : method,
    headers: hasBody ? { 'Content-Type': 'application/json', 'X-File-Name': 'x.jpg' } : {},
    body: hasBody ? '{}' : undefined,
  });
  const params = new Proxy({}, { get: () => '999999' });
  return { request, url, params, locals: { user, session: null }, clientAddress: '127.0.0.1' } as unknown as APIContext;
}

let data: TestData;
beforeAll(async () => {
  data = await useTempDatabase();
  await insertSettings();
});
afterAll(async () => data.cleanup());

const files = routeFiles();

describe('role matrix over every API route', () => {
  it('finds the routes, and every one belongs to an area or is listed as public', () => {
    expect(files.length).toBeGreaterThan(5);
    const unplaced = files.filter((f) => areaOf(f) === null);
    expect(unplaced, 'routes outside studio/, dispatch/, account/ that are not listed as public').toEqual([]);
    const stale = Object.keys(PUBLIC_ROUTES).filter((f) => !files.includes(f));
    expect(stale, 'public routes listed that no longer exist').toEqual([]);
  });

  for (const file of files) {
    const area = areaOf(file);
    if (area === null || file === 'auth/[...all].ts') continue;
    it(`${file}: ${area === 'public' ? 'open to all' : `only ${AREA_ROLES[area].join(', ')}`}`, async () => {
      const mod = (await import(/* @vite-ignore */ path.join(API_DIR, file))) as Record<string, unknown>;
      const handlers = METHODS.filter((m) => typeof mod[m] === 'function');
      expect(handlers.length, `${file} exports no handler`).toBeGreaterThan(0);
      for (const method of handlers) {
        for (const visitor of visitors) {
          const handler = mod[method] as (ctx: APIContext) => Promise<Response>;
          const response = await handler(context(file, method, visitor.user));
          const label = `${method} /api/${file} as ${visitor.name}`;
          if (area === 'public') {
            expect([401, 403], label).not.toContain(response.status);
          } else if (!visitor.user) {
            expect(response.status, label).toBe(401);
            expect((await response.json()).error.code, label).toBe('unauthenticated');
          } else if (!(AREA_ROLES[area] as readonly Role[]).includes(visitor.user.role)) {
            expect(response.status, label).toBe(403);
            expect((await response.json()).error.code, label).toBe('forbidden');
          } else {
            expect([401, 403], label).not.toContain(response.status);
            expect(response.status, label).toBeLessThan(500);
          }
        }
      }
    });
  }
});
