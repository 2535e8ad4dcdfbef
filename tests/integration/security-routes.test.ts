/**
 * Every API route file × every method × five visitors — signed out, the buyer who owns the objects,
 * another buyer, a photographer and an admin — against real objects: a paid order with a licence, its
 * download link and certificates, a limited print's certificate and an answered licence quote.
 *
 * Sources: OWASP ASVS 5.0 V8 Authorization — 8.2.1 (function level: the area decides who may call a
 * route), 8.2.2 (data specific, IDOR/BOLA: another person's order, licence, download, certificate or quote
 * answers 404 — never 403, which would confirm it exists, and never its data), 8.3.1 (enforced on the
 * server); TRADE-FACTS §9.2 and its check value "user A requests licence PDF of user B's order → 403/404";
 * OWASP Authorization Cheat Sheet ("deny by default", "validate permissions on every request").
 *
 * The table below has one entry per route file, generated-against: a route file without an entry, a
 * method the file exports without a probe, or an entry for a file that is gone fails the suite. Refused
 * calls must leave the database exactly as it was (a digest of every row of every table).
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { APIContext } from 'astro';
import { AREA_ROLES, type Area, type Role } from '~/lib/roles';
import type { SessionUser } from '~/lib/server/auth-types';
import { db } from '~/lib/server/db';
import { waitForPreviewRebuild } from '~/lib/server/settings';
import { LicenceTier, Paper, PrintSize } from '../_fixtures';
import { databaseDigest, openSecurityShop, type SecurityShop, type Who } from '../_security';

const API_DIR = path.resolve('src/pages/api');
const METHODS = ['GET', 'POST', 'PUT', 'PATCH', 'DELETE', 'ALL'] as const;
type Method = (typeof METHODS)[number];

function routeFiles(dir = API_DIR): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((entry) => {
    const full = path.join(dir, entry.name);
    if (entry.isDirectory()) return routeFiles(full);
    return /\.(ts|js)$/.test(entry.name) ? [path.relative(API_DIR, full).split(path.sep).join('/')] : [];
  });
}

let s: SecurityShop;
const spare: { paper: number; size: number; tier: number; person: string } = { paper: 0, size: 0, tier: 0, person: '' };

interface Probe {
  params?: () => Record<string, string>;
  query?: string;
  /** A JSON body (sent as application/json). */
  json?: () => unknown;
  /** A raw body with its own type (uploads). */
  raw?: { type: string; body: string; headers?: Record<string, string> };
  /**
   * The status each visitor who gets past the area check must receive. Visitors the area refuses are not
   * listed: they get 401 (signed out) or 403 (wrong role), worked out from AREA_ROLES.
   */
  expect: Partial<Record<Who, number>>;
  /** Extra checks on an answer (e.g. what it must not reveal). */
  check?: (who: Who, response: Response, text: string) => void;
  /** Runs after every visitor had its turn (e.g. waits for background work the route started). */
  after?: () => Promise<void>;
}

type Entry = { area: Area | 'public'; reason?: string; probes: Partial<Record<Method, Probe>> } | { external: string };

/** Not the owner: signed in, but the object belongs to someone else (ASVS 8.2.2). */
const NOT_OWNER = { otherBuyer: 404, photographer: 404, admin: 404 } as const;
const SIGNED_IN = (status: number) => ({ owner: status, otherBuyer: status, photographer: status, admin: status });
const STAFF = (status: number) => ({ photographer: status, admin: status });

/** What another person's 404 must never contain: the owner's e-mail, licence id, serial, order total or the file itself. */
function revealsNothing(who: Who, response: Response, text: string) {
  if (who === 'owner') return;
  expect(response.headers.get('content-type') ?? '', who).toMatch(/^application\/json/);
  for (const secret of [s.users.owner.email, s.licenceId, s.serial, s.texts.licenseeName, '%PDF-']) expect(text, `${who} saw ${secret}`).not.toContain(secret);
  if (response.status === 404) expect(JSON.parse(text).error.code, who).toBe('not_found');
}

const ROUTES: Record<string, Entry> = {
  'account/checkout.ts': { area: 'account', probes: { POST: { json: () => ({}), expect: SIGNED_IN(400) } } },
  'account/downloads/[token].ts': {
    area: 'account',
    probes: { GET: { params: () => ({ token: s.token }), expect: { owner: 200, ...NOT_OWNER }, check: revealsNothing } },
  },
  'account/licences/[id]/certificate.ts': {
    area: 'account',
    probes: {
      GET: {
        params: () => ({ id: s.licenceId }),
        expect: { owner: 200, ...NOT_OWNER },
        check: (who, response, text) => {
          revealsNothing(who, response, text);
          if (who === 'owner') expect(response.headers.get('content-type')).toBe('application/pdf');
        },
      },
    },
  },
  'account/licences/[id]/renew.ts': {
    area: 'account',
    probes: { POST: { params: () => ({ id: s.licenceId }), expect: { owner: 201, ...NOT_OWNER }, check: revealsNothing } },
  },
  'account/orders/[number]/cancel.ts': {
    area: 'account',
    // The owner's order is paid: cancelling answers its state and changes nothing.
    probes: { POST: { params: () => ({ number: s.order.number }), expect: { owner: 200, ...NOT_OWNER }, check: revealsNothing } },
  },
  'account/orders/[number]/index.ts': {
    area: 'account',
    probes: {
      GET: {
        params: () => ({ number: s.order.number }),
        expect: { owner: 200, ...NOT_OWNER },
        check: (who, response, text) => {
          revealsNothing(who, response, text);
          if (who === 'owner') expect(JSON.parse(text).order.number).toBe(s.order.number);
        },
      },
    },
  },
  'account/prints/[serial]/certificate.ts': {
    area: 'account',
    probes: { GET: { params: () => ({ serial: s.serial }), expect: { owner: 200, ...NOT_OWNER }, check: revealsNothing } },
  },
  'account/quotes/index.ts': { area: 'account', probes: { POST: { json: () => ({}), expect: SIGNED_IN(400) } } },
  'auth/[...all].ts': { external: "better-auth's own endpoints: accounts.test.ts (guards, rate limit, origin) and tests/e2e/security-pages.test.ts (cross-site posts)" },
  'cart/quote.ts': {
    area: 'public',
    reason: 'prices a cart for anyone; a quoted licence is priced only for the account that asked for it',
    probes: {
      POST: {
        json: () => ({ lines: [{ kind: 'quote', quoteId: s.quoteId }] }),
        expect: { signedOut: 200, owner: 200, otherBuyer: 200, photographer: 200, admin: 200 },
        check: (who, _response, text) => {
          const [line] = JSON.parse(text).lines;
          expect(line.ok, who).toBe(who === 'owner');
          // The refusal does not say what was quoted, for whom, or at what price.
          if (who !== 'owner') for (const secret of ['25000', '250.00', s.texts.quoteLicenseeName, s.texts.quoteTerms]) expect(text, who).not.toContain(secret);
        },
      },
    },
  },
  'stripe/webhook.ts': {
    area: 'public',
    reason: 'called by Stripe and authenticated by its signature, not by a session (security-webhook.test.ts)',
    probes: { POST: { json: () => ({ id: 'evt_unsigned', type: 'checkout.session.completed' }), expect: { signedOut: 400, owner: 400, otherBuyer: 400, photographer: 400, admin: 400 } } },
  },
  'dispatch/orders/[number]/index.ts': { area: 'dispatch', probes: { GET: { params: () => ({ number: s.order.number }), expect: { admin: 200 } } } },
  'dispatch/orders/[number]/lines/[lineId]/lab-pack/file.ts': {
    area: 'dispatch',
    probes: { GET: { params: () => ({ number: s.order.number, lineId: String(s.order.printLineId) }), expect: { admin: 200 } } },
  },
  'dispatch/orders/[number]/lines/[lineId]/lab-pack/index.ts': {
    area: 'dispatch',
    probes: { POST: { params: () => ({ number: s.order.number, lineId: String(s.order.printLineId) }), expect: { admin: 200 } } },
  },
  'dispatch/orders/[number]/lines/[lineId]/lab-pack/sheet.ts': {
    area: 'dispatch',
    probes: { GET: { params: () => ({ number: s.order.number, lineId: String(s.order.printLineId) }), expect: { admin: 200 } } },
  },
  'dispatch/orders/[number]/move.ts': { area: 'dispatch', probes: { POST: { params: () => ({ number: s.order.number }), json: () => ({}), expect: { admin: 400 } } } },
  'dispatch/orders/[number]/refunds.ts': { area: 'dispatch', probes: { POST: { params: () => ({ number: s.order.number }), json: () => ({}), expect: { admin: 400 } } } },
  'dispatch/orders/index.ts': { area: 'dispatch', probes: { GET: { expect: { admin: 200 } } } },
  'dispatch/people/[id].ts': { area: 'dispatch', probes: { PATCH: { params: () => ({ id: spare.person }), json: () => ({}), expect: { admin: 400 } } } },
  'dispatch/people/index.ts': { area: 'dispatch', probes: { GET: { expect: { admin: 200 } } } },
  'studio/papers/[id].ts': {
    area: 'studio',
    probes: {
      PATCH: { params: () => ({ id: String(spare.paper) }), json: () => ({ name: 42 }), expect: STAFF(400) },
      // The photographer deletes the unused paper; the admin then finds it gone.
      DELETE: { params: () => ({ id: String(spare.paper) }), expect: { photographer: 200, admin: 404 } },
    },
  },
  'studio/papers/index.ts': { area: 'studio', probes: { GET: { expect: STAFF(200) }, POST: { json: () => ({}), expect: STAFF(400) } } },
  'studio/quotes/[id]/answer.ts': { area: 'studio', probes: { POST: { params: () => ({ id: s.quoteId }), json: () => ({}), expect: STAFF(400) } } },
  'studio/quotes/[id]/decline.ts': { area: 'studio', probes: { POST: { params: () => ({ id: s.quoteId }), json: () => ({}), expect: STAFF(400) } } },
  'studio/sales/licences.csv.ts': { area: 'studio', probes: { GET: { expect: STAFF(200) } } },
  'studio/sales/orders.csv.ts': { area: 'studio', probes: { GET: { expect: STAFF(200) } } },
  'studio/settings.ts': { area: 'studio', probes: { GET: { expect: STAFF(200) }, PUT: { json: () => ({}), expect: STAFF(400) } } },
  'studio/settings/rebuild.ts': {
    area: 'studio',
    probes: { GET: { expect: STAFF(200) }, POST: { expect: STAFF(202), after: async () => void (await waitForPreviewRebuild()) } },
  },
  'studio/sizes/[id].ts': {
    area: 'studio',
    probes: {
      PATCH: { params: () => ({ id: String(spare.size) }), json: () => ({ label: 42 }), expect: STAFF(400) },
      DELETE: { params: () => ({ id: String(spare.size) }), expect: { photographer: 200, admin: 404 } },
    },
  },
  'studio/sizes/index.ts': { area: 'studio', probes: { GET: { expect: STAFF(200) }, POST: { json: () => ({}), expect: STAFF(400) } } },
  'studio/tiers/[id].ts': {
    area: 'studio',
    probes: {
      PATCH: { params: () => ({ id: String(spare.tier) }), json: () => ({ name: 42 }), expect: STAFF(400) },
      DELETE: { params: () => ({ id: String(spare.tier) }), expect: { photographer: 200, admin: 404 } },
    },
  },
  'studio/tiers/index.ts': { area: 'studio', probes: { GET: { expect: STAFF(200) }, POST: { json: () => ({}), expect: STAFF(400) } } },
  'studio/uploads.ts': {
    area: 'studio',
    // Words, not a picture: refused by its content (415) once past the guard.
    probes: { POST: { raw: { type: 'application/octet-stream', body: 'not a picture', headers: { 'X-File-Name': 'words.jpg' } }, expect: STAFF(415) } },
  },
  'studio/works/[id].ts': {
    area: 'studio',
    probes: { GET: { params: () => ({ id: String(s.ids.work) }), expect: STAFF(200) }, PATCH: { params: () => ({ id: String(s.ids.work) }), json: () => ({ title: 42 }), expect: STAFF(400) } },
  },
  'studio/works/[id]/licences.ts': { area: 'studio', probes: { PUT: { params: () => ({ id: String(s.ids.work) }), json: () => ({}), expect: STAFF(400) } } },
  'studio/works/[id]/offers.ts': { area: 'studio', probes: { PUT: { params: () => ({ id: String(s.ids.work) }), json: () => ({}), expect: STAFF(400) } } },
  'studio/works/[id]/publish.ts': { area: 'studio', probes: { POST: { params: () => ({ id: String(s.ids.work) }), json: () => ({ publish: 'yes' }), expect: STAFF(400) } } },
  'studio/works/bulk.ts': { area: 'studio', probes: { POST: { json: () => ({}), expect: STAFF(400) } } },
  'studio/works/index.ts': { area: 'studio', probes: { GET: { expect: STAFF(200) } } },
};

const VISITORS: Who[] = ['signedOut', 'otherBuyer', 'owner', 'photographer', 'admin'];
/** Those who can be let in run last, the owner after everyone else, so refusals are checked against untouched objects. */
const RUN_ORDER: Who[] = ['signedOut', 'otherBuyer', 'photographer', 'admin', 'owner'];

function userOf(who: Who): SessionUser | null {
  return who === 'signedOut' ? null : s.users[who];
}

const ROLE_OF: Record<Who, Role | null> = { signedOut: null, owner: 'buyer', otherBuyer: 'buyer', photographer: 'photographer', admin: 'admin' };

function areaRefusal(area: Area | 'public', who: Who): number | null {
  if (area === 'public') return null;
  const role = ROLE_OF[who];
  if (!role) return 401;
  return (AREA_ROLES[area] as readonly Role[]).includes(role) ? null : 403;
}

function context(file: string, method: Method, probe: Probe, user: SessionUser | null): APIContext {
  const params = probe.params?.() ?? {};
  let routePath = file.replace(/\.ts$/, '').replace(/(^|\/)index$/, '');
  for (const [key, value] of Object.entries(params)) routePath = routePath.replace(`[${key}]`, encodeURIComponent(value));
  const url = new URL(`http://localhost:4321/api/${routePath}${probe.query ?? ''}`);
  const headers = new Headers(probe.raw?.headers ?? {});
  let body: string | undefined;
  if (probe.json) {
    headers.set('Content-Type', 'application/json');
    body = JSON.stringify(probe.json());
  } else if (probe.raw) {
    headers.set('Content-Type', probe.raw.type);
    body = probe.raw.body;
  }
  const request = new Request(url, { method: method === 'ALL' ? 'GET' : method, headers, body });
  return { request, url, params, locals: { user, session: null }, clientAddress: '127.0.0.1' } as unknown as APIContext;
}

const files = routeFiles();

beforeAll(async () => {
  s = await openSecurityShop({ labPack: true });
  // Unused rows the DELETE probes may remove, and an account the PATCH probe may aim at.
  spare.paper = (await Paper.create({ slug: 'spare-paper', name: 'Spare paper', surface: 'matte', weightGsm: 300, surchargeBp: 0, description: '' })).id;
  spare.size = (await PrintSize.create({ slug: 'spare-size', label: 'Spare size', family: 'inch', unit: 'in', width: 5, height: 7, basePrice: 4000 })).id;
  spare.tier = (await LicenceTier.create({ slug: 'spare-tier', name: 'Spare tier', use: 'editorial', summary: '', terms: 'Spare terms for the tests, long enough.', media: 'Web', cap: null, capUnit: null, territory: 'Worldwide', termMonths: 12, defaultPrice: 5000 })).id;
  spare.person = 'spare-person';
  await db().query("INSERT INTO users (id, name, email, email_verified, role, created_at, updated_at) VALUES ('spare-person', 'Spare', 'spare@security.example', 1, 'buyer', $1, $1)", { bind: [new Date().toISOString()] });
}, 60_000);
afterAll(async () => {
  await waitForPreviewRebuild();
  await s?.close();
});

describe('the route table is generated against the route files', () => {
  it('has an entry for every route file, a probe for every method each exports, and nothing stale', async () => {
    expect(files.length).toBeGreaterThan(30);
    expect(files.filter((f) => !(f in ROUTES)), 'route files with no entry in ROUTES: add one').toEqual([]);
    expect(Object.keys(ROUTES).filter((f) => !files.includes(f)), 'entries for route files that no longer exist').toEqual([]);
    for (const file of files) {
      const entry = ROUTES[file]!;
      if ('external' in entry) continue;
      const mod = (await import(/* @vite-ignore */ path.join(API_DIR, file))) as Record<string, unknown>;
      const exported = METHODS.filter((m) => typeof mod[m] === 'function');
      expect(exported.length, `${file} exports no handler`).toBeGreaterThan(0);
      expect(Object.keys(entry.probes).sort(), `${file}: one probe per exported method`).toEqual([...exported].sort());
      // The area is where the file lives (DEVELOPERS.md: api/studio, api/dispatch, api/account), or it is public with a reason.
      const first = file.split('/')[0];
      if (entry.area === 'public') expect(entry.reason, `${file} is public without a reason`).toBeTruthy();
      else expect(entry.area, file).toBe(first);
      // Every visitor the area lets in has an expected status; none the area refuses is listed.
      for (const [method, probe] of Object.entries(entry.probes)) {
        for (const who of VISITORS) {
          const refused = areaRefusal(entry.area, who);
          if (refused === null) expect(probe!.expect[who], `${method} ${file}: no expected status for ${who}`).toBeTypeOf('number');
          else expect(probe!.expect[who], `${method} ${file}: ${who} is refused by the area`).toBeUndefined();
        }
      }
    }
  });
});

describe('every route × every visitor', () => {
  for (const file of files) {
    const entry = ROUTES[file];
    if (!entry || 'external' in entry) continue;
    for (const [method, probe] of Object.entries(entry.probes) as [Method, Probe][]) {
      const who = (w: Who) => `${w}: ${areaRefusal(entry.area, w) ?? probe.expect[w]}`;
      it(`${method} /api/${file} — ${VISITORS.map(who).join(', ')}`, async () => {
        const mod = (await import(/* @vite-ignore */ path.join(API_DIR, file))) as Record<string, (ctx: APIContext) => Promise<Response>>;
        let known: string | null = null; // the digest after the last refusal, still valid until something is allowed
        for (const visitor of RUN_ORDER) {
          const user = userOf(visitor);
          const refused = areaRefusal(entry.area, visitor);
          const expected = refused ?? probe.expect[visitor]!;
          const before = expected >= 400 ? (known ?? (await databaseDigest())) : null;
          const response = await mod[method]!(context(file, method, probe, user));
          const text = await response.text();
          const label = `${method} /api/${file} as ${visitor}`;
          expect(response.status, `${label}: ${text.slice(0, 300)}`).toBe(expected);
          if (refused !== null) expect(JSON.parse(text).error.code, label).toBe(refused === 401 ? 'unauthenticated' : 'forbidden');
          probe.check?.(visitor, response, text);
          // A refusal changes nothing stored (ASVS 8.2.1: deny before acting).
          if (before !== null) {
            known = await databaseDigest();
            expect(known, `${label} changed the database`).toBe(before);
          } else known = null;
        }
        await probe.after?.();
      });
    }
  }
});
