/**
 * The built app under attack, over HTTP and in Chromium: who may open which page (generated from the page
 * files), XSS payloads typed into every field a photographer or buyer controls and then shown on every
 * page, the Content-Security-Policy (islands still hydrate; an injected handler does not run), security
 * headers, cross-site writes to every API route, and the session cookie's flags.
 *
 * Sources: OWASP ASVS 5.0 V8 (8.2.1 function level, 8.2.2 data specific: another buyer's quote is 404),
 * V3 Web Frontend Security (3.3.1 cookies Secure/HttpOnly/SameSite, 3.4.1–3.4.6 headers: CSP with
 * object-src 'none' and base-uri, X-Content-Type-Options nosniff, Referrer-Policy, frame-ancestors /
 * X-Frame-Options, 3.5.1 CSRF: cross-origin requests refused); OWASP XSS Prevention, CSRF Prevention
 * ("verify the Origin header", "SameSite=Lax") and Content Security Policy cheat sheets; W3C CSP Level 3
 * (hash-source); Fetch Metadata (Sec-Fetch-Site). The sign-in rate limit is tested in
 * tests/integration/accounts.test.ts ("limits sign-in attempts from one address").
 *
 * Buyer actions are made by a new account (its name is a payload too), so the demo buyer's orders,
 * which other browser tests look for, are not touched; settings, the new tier, paper and work are put
 * back or withdrawn afterwards.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import sharp from 'sharp';
import sqlite3 from 'sqlite3';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser, BrowserContext } from 'playwright-core';
import { launchBrowser, screenshotPath } from './browser';
import { ESCAPED_SCRIPT, LONG, NO_ANGLES, SHORT, VECTORS, dangerousMarkup, scanHtml } from '../_xss';

const baseUrl = inject('baseUrl');
const dataDir = inject('dataDir');
const mailCatcherUrl = inject('mailCatcherUrl');
const MEDIUM = `${VECTORS.attribute} ${VECTORS.textarea} ${VECTORS.url}`;
/** Our own source address: sign-in rate limits key on the client address, so other files' sign-ins do not count against ours. */
const LOCAL_ADDRESS = '127.0.0.53';

// ------------------------------------------------------------------------------------------- HTTP

interface Answer { status: number; headers: http.IncomingHttpHeaders; body: Buffer; text: string; json: () => any; cookie: string }

/** One request from our own address; JSON bodies carry the shop's Origin, as a page of the shop would send. */
function call(target: string, options: { method?: string; json?: unknown; body?: string | Buffer; headers?: Record<string, string>; cookie?: string } = {}): Promise<Answer> {
  const url = new URL(target, baseUrl);
  const headers: Record<string, string> = {};
  if (options.cookie) headers.cookie = options.cookie;
  let body = options.body;
  if (options.json !== undefined) {
    headers['content-type'] = 'application/json';
    headers.origin = baseUrl;
    body = JSON.stringify(options.json);
  }
  // A length, as browsers send it (the node adapter cannot read a chunked body on DELETE).
  if (body !== undefined) headers['content-length'] = String(Buffer.byteLength(body));
  Object.assign(headers, options.headers);
  return new Promise((resolve, reject) => {
    const req = http.request(url, { method: options.method ?? (body === undefined ? 'GET' : 'POST'), headers, localAddress: LOCAL_ADDRESS }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => {
        const buffer = Buffer.concat(chunks);
        const setCookie = res.headers['set-cookie'] ?? [];
        resolve({ status: res.statusCode!, headers: res.headers, body: buffer, text: buffer.toString('utf8'), json: () => JSON.parse(buffer.toString('utf8')), cookie: setCookie.map((c) => c.split(';')[0]).join('; ') });
      });
    });
    req.on('error', reject);
    if (body !== undefined) req.write(body);
    req.end();
  });
}

async function ok(answer: Promise<Answer>, status: number | number[], what: string): Promise<Answer> {
  const a = await answer;
  expect([status].flat(), `${what}: ${a.status} ${a.text.slice(0, 300)}`).toContain(a.status);
  return a;
}

async function signIn(email: string, password: string): Promise<{ cookie: string; setCookie: string[] }> {
  const a = await ok(call('/api/auth/sign-in/email', { json: { email, password } }), 200, `sign in ${email}`);
  return { cookie: a.cookie, setCookie: (a.headers['set-cookie'] ?? []) as string[] };
}

async function waitForMail(to: string, subject: RegExp): Promise<{ id: string; text: string; html: string | null }> {
  const deadline = Date.now() + 15_000;
  while (Date.now() < deadline) {
    const list = (await (await fetch(`${mailCatcherUrl}/messages?to=${encodeURIComponent(to)}`)).json()) as { messages: { id: string; subject: string }[] };
    const hit = list.messages.find((m) => subject.test(m.subject));
    if (hit) return { id: hit.id, ...((await (await fetch(`${mailCatcherUrl}/messages/${hit.id}`)).json()) as { text: string; html: string | null }) };
    await new Promise((r) => setTimeout(r, 150));
  }
  throw new Error(`no mail to ${to} matching ${subject}`);
}

// ------------------------------------------------------------------------------ the shop's own DB

function openDb(): sqlite3.Database {
  const db = new sqlite3.Database(path.join(dataDir, 'db', 'stillmark.sqlite'));
  db.configure('busyTimeout', 5000);
  return db;
}
async function dbAll<T>(sql: string, params: unknown[] = []): Promise<T[]> {
  const db = openDb();
  try {
    return await new Promise<T[]>((resolve, reject) => db.all(sql, params, (error, rows) => (error ? reject(error) : resolve(rows as T[]))));
  } finally {
    db.close();
  }
}
async function dbRun(sql: string, params: unknown[] = []): Promise<void> {
  const db = openDb();
  try {
    await new Promise<void>((resolve, reject) => db.run(sql, params, (error) => (error ? reject(error) : resolve())));
  } finally {
    db.close();
  }
}

// ------------------------------------------------------------------------------------ the set-up

const DEMO = {
  admin: { email: 'manager@kestrel-studio.example', password: 'dispatch-demo-2026' },
  photographer: { email: 'orla@kestrel-studio.example', password: 'studio-demo-2026' },
  buyer: { email: 'tom@picture-desk.example', password: 'gallery-demo-2026' },
};
type Role = 'signedOut' | 'owner' | 'otherBuyer' | 'photographer' | 'admin';
const cookies: Record<Role, string> = { signedOut: '', owner: '', otherBuyer: '', photographer: '', admin: '' };
const made = {
  ownerEmail: `security-owner-${crypto.randomBytes(4).toString('hex')}@example.com`,
  ownerId: '',
  workId: 0,
  workSlug: '',
  tierId: 0,
  paperId: 0,
  seriesSlug: `security-probe-${crypto.randomBytes(3).toString('hex')}`,
  quoteId: '',
  orderNumber: '',
  licenceId: '',
  mailId: '',
  settings: null as Record<string, unknown> | null,
  /** Set-Cookie of a sign-in on this server. */
  signInCookies: [] as string[],
};

beforeAll(async () => {
  cookies.admin = (await signIn(DEMO.admin.email, DEMO.admin.password)).cookie;
  cookies.photographer = (await signIn(DEMO.photographer.email, DEMO.photographer.password)).cookie;
  const buyerSignIn = await signIn(DEMO.buyer.email, DEMO.buyer.password);
  cookies.otherBuyer = buyerSignIn.cookie;
  made.signInCookies = buyerSignIn.setCookie;

  // A new buyer whose name is a payload: signs up and confirms the address from the caught mail.
  await ok(call('/api/auth/sign-up/email', { json: { name: SHORT, email: made.ownerEmail, password: 'security probe password', callbackURL: '/account' } }), 200, 'sign up');
  const confirm = await waitForMail(made.ownerEmail, /confirm/i);
  const link = /https?:\/\/\S+/.exec(confirm.text)![0];
  cookies.owner = (await ok(call(link), 302, 'confirm the address')).cookie;
  made.ownerId = (await dbAll<{ id: string }>('SELECT id FROM users WHERE email = ?', [made.ownerEmail]))[0]!.id;

  // The studio: shop name and tagline, a tier, a paper, a series and a work, all with payloads.
  const studio = cookies.photographer;
  made.settings = (await ok(call('/api/studio/settings', { cookie: studio }), 200, 'settings')).json().settings;
  await ok(call('/api/studio/settings', { method: 'PUT', cookie: studio, json: { ...made.settings, shopName: `Shop ${SHORT}`, tagline: `${SHORT} ${VECTORS.url}` } }), 200, 'shop name');
  made.tierId = (await ok(call('/api/studio/tiers', { cookie: studio, json: {
    name: SHORT, use: 'editorial', summary: SHORT, terms: `Terms of use: ${NO_ANGLES}`, media: SHORT, cap: null, capUnit: null, territory: SHORT, termMonths: 12, defaultPrice: 4500, active: true,
  } }), 201, 'tier')).json().tier.id;
  made.paperId = (await ok(call('/api/studio/papers', { cookie: studio, json: { name: SHORT, surface: SHORT, weightGsm: 300, surchargeBp: 0, description: LONG, active: true } }), 201, 'paper')).json().paper.id;
  await dbRun("INSERT INTO series (slug, title, description, position, created_at, updated_at) VALUES (?, ?, ?, 99, datetime('now'), datetime('now'))", [made.seriesSlug, SHORT, LONG]);
  const seriesId = (await dbAll<{ id: number }>('SELECT id FROM series WHERE slug = ?', [made.seriesSlug]))[0]!.id;

  const picture = await sharp({ create: { width: 3000, height: 2000, channels: 3, background: { r: 90, g: 70, b: 60 } } })
    .composite([{ input: Buffer.from(`<svg xmlns="http://www.w3.org/2000/svg" width="3000" height="2000"><circle cx="1500" cy="1000" r="${500 + crypto.randomInt(300)}" fill="#c8b48a"/></svg>`) }])
    .jpeg({ quality: 80 }).toBuffer();
  const uploaded = await ok(call('/api/studio/uploads', { cookie: studio, body: picture, headers: { 'content-type': 'application/octet-stream', 'x-file-name': encodeURIComponent(`W${VECTORS.attribute}.jpg`), origin: baseUrl } }), 201, 'upload');
  made.workId = uploaded.json().work.id;
  await ok(call(`/api/studio/works/${made.workId}`, { method: 'PATCH', cookie: studio, json: { title: `W ${SHORT}`, caption: LONG, altText: LONG, keywords: ['security', 'probe'], seriesId } }), 200, 'details');
  await ok(call(`/api/studio/works/${made.workId}/licences`, { method: 'PUT', cookie: studio, json: { tiers: [{ tierId: made.tierId, mode: 'default' }] } }), 200, 'licence prices');
  const editor = (await ok(call(`/api/studio/works/${made.workId}`, { cookie: studio }), 200, 'editor')).json();
  const size = editor.sizes.find((s: { offerable: boolean; fill: { grade: string } }) => s.offerable && s.fill.grade !== 'too-small') ?? editor.sizes.find((s: { offerable: boolean }) => s.offerable);
  await ok(call(`/api/studio/works/${made.workId}/offers`, { method: 'PUT', cookie: studio, json: { sizes: [{ sizeId: size.sizeId, offered: true, papers: [made.paperId], edition: { kind: 'open', total: null, artistProofs: 0 }, acceptWall: true }] } }), 200, 'offers');
  made.workSlug = (await ok(call(`/api/studio/works/${made.workId}/publish`, { cookie: studio, json: { publish: true } }), 200, 'publish')).json().work?.slug
    ?? (await dbAll<{ slug: string }>('SELECT slug FROM works WHERE id = ?', [made.workId]))[0]!.slug;

  // The new buyer asks for a quote; the studio answers it.
  made.quoteId = (await ok(call('/api/account/quotes', { cookie: cookies.owner, json: {
    workId: made.workId, use: 'editorial', media: MEDIUM, printRun: null, territory: SHORT, termMonths: 12, exclusivity: 'none', licenseeName: SHORT, licenseeOrganisation: MEDIUM, message: LONG,
  } }), 201, 'enquiry')).json().id;
  await ok(call(`/api/studio/quotes/${made.quoteId}/answer`, { cookie: studio, json: {
    use: 'editorial', media: MEDIUM, cap: null, capUnit: null, territory: SHORT, termMonths: 12, exclusivity: 'none', terms: LONG, price: '95.00', validityDays: 14, reply: LONG,
  } }), 200, 'answer');

  // …and buys a licence and a print with payloads for the licensee and the address, paying with 4242.
  const offerId = (await dbAll<{ id: number }>('SELECT id FROM print_offers WHERE work_id = ? AND paper_id = ?', [made.workId, made.paperId]))[0]!.id;
  const checkout = (await ok(call('/api/account/checkout', { cookie: cookies.owner, json: {
    lines: [{ kind: 'licence', workId: made.workId, tierId: made.tierId }, { kind: 'print', offerId, mode: 'fill', quantity: 1 }],
    licensee: { name: SHORT, organisation: MEDIUM, intendedUse: LONG },
    shipping: { name: SHORT, line1: LONG, line2: SHORT, city: SHORT, postalCode: 'EH6 6AA', country: 'GB' },
  } }), 201, 'checkout')).json();
  made.orderNumber = checkout.orderNumber;
  const form = new URLSearchParams({ email: made.ownerEmail, cardholder_name: 'A Collector', card_number: '4242 4242 4242 4242', card_expiry: '12 / 34', card_cvc: '123' });
  await ok(call(checkout.url, { method: 'POST', body: form.toString(), headers: { 'content-type': 'application/x-www-form-urlencoded' } }), 303, 'pay');
  const deadline = Date.now() + 20_000;
  let order: any;
  while (Date.now() < deadline) {
    order = (await call(`/api/account/orders/${made.orderNumber}`, { cookie: cookies.owner })).json().order;
    if (order?.status === 'paid') break;
    await new Promise((r) => setTimeout(r, 200));
  }
  expect(order?.status).toBe('paid');
  made.licenceId = (await dbAll<{ id: string }>('SELECT id FROM licences WHERE user_id = ?', [made.ownerId]))[0]!.id;

  // Dispatch refunds the licence with a payload in the note.
  const detail = (await ok(call(`/api/dispatch/orders/${made.orderNumber}`, { cookie: cookies.admin }), 200, 'order detail')).json();
  const licenceLine = detail.lines.find((l: { kind: string }) => l.kind === 'licence');
  await ok(call(`/api/dispatch/orders/${made.orderNumber}/refunds`, { cookie: cookies.admin, json: { idempotencyKey: `security-e2e-${crypto.randomBytes(8).toString('hex')}`, reason: 'other', note: SHORT, items: [{ lineId: licenceLine.id }] } }), [200, 202], 'refund');
  const until = Date.now() + 20_000;
  while (Date.now() < until && (await call(`/api/account/orders/${made.orderNumber}`, { cookie: cookies.owner })).json().order.status !== 'partly_refunded') await new Promise((r) => setTimeout(r, 200));

  made.mailId = (await waitForMail(DEMO.photographer.email, /licence enquiry/)).id;
}, 180_000);

afterAll(async () => {
  const studio = cookies.photographer;
  if (!studio) return;
  if (made.settings) await call('/api/studio/settings', { method: 'PUT', cookie: studio, json: made.settings });
  if (made.workId) await call(`/api/studio/works/${made.workId}/publish`, { cookie: studio, json: { publish: false } });
  if (made.tierId) await call(`/api/studio/tiers/${made.tierId}`, { method: 'PATCH', cookie: studio, json: { active: false } });
  if (made.paperId) await call(`/api/studio/papers/${made.paperId}`, { method: 'PATCH', cookie: studio, json: { active: false } });
  await dbRun('UPDATE works SET series_id = NULL WHERE series_id IN (SELECT id FROM series WHERE slug = ?)', [made.seriesSlug]).catch(() => {});
  await dbRun('DELETE FROM series WHERE slug = ?', [made.seriesSlug]).catch(() => {});
});

// ------------------------------------------------------------------------------- who opens what

const PAGES_DIR = path.resolve('src/pages');
function pageFiles(dir = PAGES_DIR): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const full = path.join(dir, e.name);
    if (e.isDirectory()) return e.name === 'api' ? [] : pageFiles(full);
    return e.name.endsWith('.astro') ? [path.relative(PAGES_DIR, full).split(path.sep).join('/')] : [];
  });
}

type PageArea = 'account' | 'studio' | 'dispatch';
interface PageEntry { area: PageArea | 'public'; url: () => string; reason?: string; /** the page shows one person's object: anyone else gets 404 */ owned?: boolean }

/** Every page file. A new page without an entry fails the first test below. */
const PAGES: Record<string, PageEntry> = {
  '403.astro': { area: 'public', reason: 'the refusal page itself', url: () => '/403' },
  '404.astro': { area: 'public', reason: 'the not-found page itself', url: () => '/404' },
  'index.astro': { area: 'public', reason: 'the Gallery', url: () => '/' },
  'series/index.astro': { area: 'public', reason: 'the Gallery', url: () => '/series' },
  'series/[slug].astro': { area: 'public', reason: 'the Gallery', url: () => `/series/${made.seriesSlug}` },
  'works/[slug].astro': { area: 'public', reason: 'the Gallery', url: () => `/works/${made.workSlug}` },
  'search.astro': { area: 'public', reason: 'the Gallery', url: () => `/search?q=${encodeURIComponent(VECTORS.attribute)}` },
  'cart.astro': { area: 'public', reason: 'the cart lives in the browser; prices come from the public quote API', url: () => '/cart' },
  'licences/[id].astro': { area: 'public', reason: 'the public check page: state, work and organisation only', url: () => `/licences/${made.licenceId}` },
  'sign-in.astro': { area: 'public', reason: 'signing in', url: () => '/sign-in' },
  'sign-up.astro': { area: 'public', reason: 'signing up', url: () => '/sign-up' },
  'forgot-password.astro': { area: 'public', reason: 'asking for a reset link', url: () => '/forgot-password' },
  'reset-password.astro': { area: 'public', reason: 'the reset link lands here', url: () => '/reset-password?token=x' },
  'account/index.astro': { area: 'account', url: () => '/account' },
  'account/quotes/[id].astro': { area: 'account', owned: true, url: () => `/account/quotes/${made.quoteId}` },
  'checkout/index.astro': { area: 'account', url: () => '/checkout' },
  'checkout/complete.astro': { area: 'account', url: () => `/checkout/complete?order=${made.orderNumber}` },
  'studio/index.astro': { area: 'studio', url: () => '/studio' },
  'studio/upload.astro': { area: 'studio', url: () => '/studio/upload' },
  'studio/works/[id].astro': { area: 'studio', url: () => `/studio/works/${made.workId}` },
  'studio/quotes/index.astro': { area: 'studio', url: () => '/studio/quotes' },
  'studio/quotes/[id].astro': { area: 'studio', url: () => `/studio/quotes/${made.quoteId}` },
  'studio/sales.astro': { area: 'studio', url: () => '/studio/sales' },
  'studio/settings.astro': { area: 'studio', url: () => '/studio/settings' },
  'dispatch/index.astro': { area: 'dispatch', url: () => '/dispatch' },
  'dispatch/orders/index.astro': { area: 'dispatch', url: () => '/dispatch/orders' },
  'dispatch/orders/[number].astro': { area: 'dispatch', url: () => `/dispatch/orders/${made.orderNumber}` },
  'dispatch/people/index.astro': { area: 'dispatch', url: () => '/dispatch/people' },
  'dispatch/people/[id].astro': { area: 'dispatch', url: () => `/dispatch/people/${made.ownerId}` },
  'dispatch/mail/index.astro': { area: 'dispatch', url: () => '/dispatch/mail' },
  'dispatch/mail/[id].astro': { area: 'dispatch', url: () => `/dispatch/mail/${made.mailId}` },
};
const AREA_ROLES: Record<PageArea, Role[]> = { account: ['owner', 'otherBuyer', 'photographer', 'admin'], studio: ['photographer', 'admin'], dispatch: ['admin'] };
const ROLES: Role[] = ['signedOut', 'owner', 'otherBuyer', 'photographer', 'admin'];

function expectedStatus(entry: PageEntry, role: Role): number {
  if (entry.area === 'public') return -1;
  if (role === 'signedOut') return 303;
  if (!AREA_ROLES[entry.area].includes(role)) return 403;
  if (entry.owned && role !== 'owner') return 404;
  return 200;
}

describe('pages: who may open what (ASVS 8.2.1, 8.2.2)', () => {
  it('has an entry for every page file, and no stale entries', () => {
    const files = pageFiles();
    expect(files.filter((f) => !(f in PAGES)), 'page files without an entry in PAGES').toEqual([]);
    expect(Object.keys(PAGES).filter((f) => !files.includes(f)), 'entries for pages that no longer exist').toEqual([]);
    for (const [file, entry] of Object.entries(PAGES)) {
      if (entry.area === 'public') expect(entry.reason, file).toBeTruthy();
      else expect(file.startsWith(`${entry.area}/`) || (file.startsWith('checkout/') && entry.area === 'account'), file).toBe(true);
    }
  });

  it('redirects the signed-out to sign-in, shows 403 to the wrong role, 404 for another buyer’s quote, and the page to the rest', async () => {
    const seen: string[] = [];
    for (const [file, entry] of Object.entries(PAGES)) {
      for (const role of ROLES) {
        const target = entry.url();
        const answer = await call(target, { cookie: cookies[role] });
        const label = `${file} (${target}) as ${role}`;
        const expected = expectedStatus(entry, role);
        if (expected === -1) {
          // Public pages never send anyone to sign in and never fail.
          expect(answer.status, label).toBeLessThan(500);
          expect(answer.headers.location ?? '', label).not.toMatch(/sign-in/);
          continue;
        }
        expect(answer.status, label).toBe(expected);
        if (expected === 303) expect(answer.headers.location, label).toBe(`/sign-in?next=${encodeURIComponent(target)}`);
        if (expected === 403) expect(answer.text, label).toMatch(/not open to your account/);
        if (expected !== 200) {
          // Nothing of the owner's order or quote leaks into a refusal.
          for (const secret of [made.ownerEmail, made.licenceId, made.quoteId.slice(4)]) expect(answer.text, `${label} shows ${secret}`).not.toContain(secret);
        }
        seen.push(`${role}:${answer.status}`);
      }
    }
    expect(seen.length).toBeGreaterThan(80);
  });

  it('shows another buyer only the order number they typed on the order-complete page, never the order', async () => {
    const answer = await ok(call(`/checkout/complete?order=${made.orderNumber}`, { cookie: cookies.otherBuyer }), 200, 'complete page');
    for (const secret of [made.ownerEmail, made.licenceId, 'EH6 6AA']) expect(answer.text).not.toContain(secret);
    // …and the order itself answers 404 to them
    expect((await call(`/api/account/orders/${made.orderNumber}`, { cookie: cookies.otherBuyer })).status).toBe(404);
  });
});

// ------------------------------------------------------------------------------------------ XSS

/** Pages that show the payloads, each opened as someone who may see it. */
const XSS_PAGES: { role: Role; url: () => string }[] = [
  { role: 'signedOut', url: () => '/' },
  { role: 'signedOut', url: () => '/series' },
  { role: 'signedOut', url: () => `/series/${made.seriesSlug}` },
  { role: 'signedOut', url: () => `/works/${made.workSlug}` },
  { role: 'signedOut', url: () => `/search?q=${encodeURIComponent(SHORT)}` },
  { role: 'signedOut', url: () => `/licences/${made.licenceId}` },
  { role: 'signedOut', url: () => '/sign-in' },
  { role: 'owner', url: () => '/cart' },
  { role: 'owner', url: () => '/checkout' },
  { role: 'owner', url: () => '/account' },
  { role: 'owner', url: () => `/account/quotes/${made.quoteId}` },
  { role: 'owner', url: () => `/checkout/complete?order=${made.orderNumber}` },
  { role: 'photographer', url: () => '/studio' },
  { role: 'photographer', url: () => `/studio/works/${made.workId}` },
  { role: 'photographer', url: () => '/studio/quotes' },
  { role: 'photographer', url: () => `/studio/quotes/${made.quoteId}` },
  { role: 'photographer', url: () => '/studio/sales' },
  { role: 'photographer', url: () => '/studio/settings' },
  { role: 'photographer', url: () => '/studio/upload' },
  { role: 'admin', url: () => '/dispatch' },
  { role: 'admin', url: () => '/dispatch/orders' },
  { role: 'admin', url: () => `/dispatch/orders/${made.orderNumber}` },
  { role: 'admin', url: () => '/dispatch/people' },
  { role: 'admin', url: () => `/dispatch/people/${made.ownerId}` },
  { role: 'admin', url: () => '/dispatch/mail' },
  { role: 'admin', url: () => `/dispatch/mail/${made.mailId}` },
];

/** The CSP's script-src hash sources. */
function cspHashes(policy: string): string[] {
  const scriptSrc = policy.split(';').map((d) => d.trim()).find((d) => d.startsWith('script-src ')) ?? '';
  return [...scriptSrc.matchAll(/'(sha256-[A-Za-z0-9+/=]+)'/g)].map((m) => m[1]!);
}

describe('XSS payloads are shown as text on every page (OWASP XSS Prevention rule #1/#2)', () => {
  it('escapes them in the server-rendered HTML, in text, attributes, titles and island props', async () => {
    for (const { role, url } of XSS_PAGES) {
      const answer = await ok(call(url(), { cookie: cookies[role] }), 200, url());
      const html = answer.text;
      // Read as a browser's tokenizer would: an unescaped payload becomes a tag, a handler or a script.
      // (Inside a quoted attribute, < and > are inert; only the quote has to be escaped, and it is.)
      expect(dangerousMarkup(html), url()).toEqual([]);
      // the shop name is a payload, so every page carries it, escaped
      expect(html, url()).toContain(ESCAPED_SCRIPT);
    }
  });

  it('sends a CSP whose script hashes cover every inline script, and scripts only from the shop itself', async () => {
    for (const { role, url } of XSS_PAGES) {
      const answer = await call(url(), { cookie: cookies[role] });
      const policy = String(answer.headers['content-security-policy'] ?? '');
      expect(policy, url()).toMatch(/(^|; )script-src 'self'( 'sha256-[^']+')*(;|$)/);
      expect(policy).toMatch(/object-src 'none'/);
      expect(policy).toMatch(/base-uri 'self'/);
      expect(policy).toMatch(/frame-ancestors 'none'/);
      expect(policy).not.toMatch(/script-src[^;]*'unsafe-(inline|eval)'/);
      const hashes = cspHashes(policy);
      const inline = scanHtml(answer.text).scripts.filter((script) => !script.attributes.some((a) => a.name === 'src'));
      for (const script of inline) {
        const digest = `sha256-${crypto.createHash('sha256').update(script.body, 'utf8').digest('base64')}`;
        expect(hashes, `${url()}: inline script ${script.body.slice(0, 60)}…`).toContain(digest);
      }
    }
  });
});

describe('in Chromium: no payload runs, every island hydrates under the CSP', () => {
  let browser: Browser;
  const contexts = new Map<Role, BrowserContext>();

  async function contextFor(role: Role, options: { bypassCSP?: boolean } = {}): Promise<BrowserContext> {
    const key = role;
    if (!options.bypassCSP && contexts.has(key)) return contexts.get(key)!;
    const context = await browser.newContext({ viewport: { width: 1280, height: 900 }, bypassCSP: options.bypassCSP ?? false });
    if (cookies[role]) {
      await context.addCookies(cookies[role].split('; ').map((pair) => {
        const at = pair.indexOf('=');
        return { name: pair.slice(0, at), value: pair.slice(at + 1), url: baseUrl, httpOnly: true, sameSite: 'Lax' as const };
      }));
    }
    // The owner's cart holds the probe work's licence, so /cart and /checkout render it.
    if (role === 'owner') {
      await context.addInitScript(([key, value]) => { if (!localStorage.getItem(key!)) localStorage.setItem(key!, value!); }, ['stillmark:cart:v1', JSON.stringify([{ kind: 'licence', workId: made.workId, tierId: made.tierId }, { kind: 'quote', quoteId: made.quoteId }])]);
    }
    await context.addInitScript(() => {
      (window as unknown as { __violations: unknown[] }).__violations = [];
      document.addEventListener('securitypolicyviolation', (e) => {
        (window as unknown as { __violations: unknown[] }).__violations.push({ directive: e.violatedDirective, blocked: e.blockedURI, sample: e.sample });
      });
    });
    if (!options.bypassCSP) contexts.set(key, context);
    return context;
  }

  beforeAll(async () => {
    browser = await launchBrowser();
  });
  afterAll(async () => browser?.close());

  it('fires no dialog, creates no element or handler from a payload, and hydrates every island', async () => {
    for (const { role, url } of XSS_PAGES) {
      const page = await (await contextFor(role)).newPage();
      const dialogs: string[] = [];
      const errors: string[] = [];
      page.on('dialog', (d) => { dialogs.push(d.message()); void d.dismiss(); });
      page.on('pageerror', (e) => errors.push(e.message));
      const response = await page.goto(`${baseUrl}${url()}`);
      expect(response?.status(), url()).toBe(200);
      // Bring client:visible islands into view, then wait until no island is left un-hydrated.
      await page.evaluate(async () => {
        for (let y = 0; y <= document.body.scrollHeight; y += 500) {
          window.scrollTo(0, y);
          await new Promise((r) => setTimeout(r, 40));
        }
      });
      await page.waitForFunction(() => !document.querySelector('astro-island[ssr]'), null, { timeout: 20_000 }).catch(() => {});
      await page.waitForTimeout(250); // an onerror from a broken image would have fired by now
      const report = await page.evaluate(() => ({
        unhydrated: [...document.querySelectorAll('astro-island[ssr]')].map((el) => el.getAttribute('component-url')),
        islands: document.querySelectorAll('astro-island').length,
        injected: [...document.querySelectorAll('img[src="x"], svg[onload], [onerror], [onload], [onclick], iframe[src^="javascript:"]')].map((el) => el.outerHTML.slice(0, 80)),
        scriptsWithPayload: [...document.scripts].filter((s) => /alert\(1\)/.test(s.textContent ?? '')).length,
        jsLinks: [...document.querySelectorAll('a[href]')].filter((a) => /^\s*javascript:/i.test(a.getAttribute('href') ?? '')).length,
        text: document.body.innerText,
        violations: (window as unknown as { __violations: { directive: string; blocked: string; sample: string }[] }).__violations,
      }));
      const label = `${role} ${url()}`;
      expect(dialogs, label).toEqual([]);
      expect(report.injected, label).toEqual([]);
      expect(report.scriptsWithPayload, label).toBe(0);
      expect(report.jsLinks, label).toBe(0);
      expect(report.unhydrated, `${label}: islands left un-hydrated`).toEqual([]);
      // zod 4 probes whether eval is allowed (new Function in a try); the CSP refuses it, which is the point.
      expect(report.violations.filter((v) => v.blocked !== 'eval'), label).toEqual([]);
      expect(errors, label).toEqual([]);
      // The payload is on screen as the words that were typed.
      expect(report.text, label).toContain(VECTORS.script);
      await page.evaluate(() => window.scrollTo(0, 0));
      if (url() === '/') await page.screenshot({ path: screenshotPath('40-security-payloads-home') });
      if (url().startsWith('/works/')) await page.screenshot({ path: screenshotPath('41-security-payloads-work'), fullPage: true });
      await page.close();
    }
  });

  it('shows a caught mail’s HTML part in a sandboxed frame, escaped', async () => {
    const page = await (await contextFor('admin')).newPage();
    await page.goto(`${baseUrl}/dispatch/mail/${made.mailId}`);
    const frameElement = page.getByTestId('mail-html').locator('iframe');
    expect(await frameElement.getAttribute('sandbox')).toBe('');
    const frame = (await frameElement.elementHandle())!.contentFrame();
    const inside = await (await frame)!.evaluate(() => ({ text: document.body.innerText, images: document.querySelectorAll('img').length, scripts: document.scripts.length }));
    expect(inside.text).toContain(VECTORS.script);
    expect(inside).toMatchObject({ images: 0, scripts: 0 });
    await page.close();
  });

  it('blocks an injected inline handler by the CSP (and the same page without the CSP would run it)', async () => {
    const inject = async (context: BrowserContext) => {
      const page = await context.newPage();
      await page.goto(`${baseUrl}/works/${made.workSlug}`);
      await page.evaluate(() => document.body.insertAdjacentHTML('beforeend', '<img id="csp-probe" src="/no-such-image.png" onerror="window.__ran = 1">'));
      await page.waitForTimeout(500);
      const ran = await page.evaluate(() => (window as unknown as { __ran?: number }).__ran ?? 0);
      const violations = await page.evaluate(() => (window as unknown as { __violations: { directive: string }[] }).__violations.map((v) => v.directive));
      await page.close();
      return { ran, violations };
    };
    const guarded = await inject(await contextFor('signedOut'));
    expect(guarded.ran).toBe(0);
    expect(guarded.violations.some((d) => d.startsWith('script-src'))).toBe(true);
    const unguarded = await inject(await contextFor('signedOut', { bypassCSP: true }));
    expect(unguarded.ran).toBe(1);
  });

  it('keeps the session cookie out of page scripts (HttpOnly)', async () => {
    const page = await (await contextFor('owner')).newPage();
    await page.goto(`${baseUrl}/account`);
    expect(await page.evaluate(() => document.cookie)).not.toMatch(/session_token/);
    await page.close();
  });
});

// --------------------------------------------------------------------------------- headers, CSRF

describe('security headers on pages, API answers, files and redirects (ASVS 3.4)', () => {
  it('sends nosniff, frame denial, a referrer policy and a permissions policy everywhere, and the CSP on HTML', async () => {
    const derivative = (await call(`/works/${made.workSlug}`)).text.match(/\/media\/[a-f0-9]{24}\/(sm|md|lg|xl)\.jpg/)![0];
    const cases: { url: string; cookie?: string; method?: string; json?: unknown; headers?: Record<string, string>; html: boolean; status: number }[] = [
      { url: '/', html: true, status: 200 },
      { url: `/works/${made.workSlug}`, html: true, status: 200 },
      { url: '/no-such-page', html: true, status: 404 },
      { url: '/studio', cookie: cookies.otherBuyer, html: true, status: 403 },
      { url: '/account', html: false, status: 303 },
      { url: '/api/dispatch/orders', cookie: cookies.admin, html: false, status: 200 },
      { url: '/api/dispatch/orders', html: false, status: 401 },
      { url: '/api/cart/quote', json: { lines: [] }, headers: { origin: 'https://evil.example' }, html: false, status: 403 },
      { url: derivative, html: false, status: 200 },
      { url: '/api/auth/get-session', cookie: cookies.owner, html: false, status: 200 },
    ];
    for (const c of cases) {
      const answer = await call(c.url, { cookie: c.cookie, json: c.json, headers: c.headers });
      const label = `${c.url} (${answer.status})`;
      expect(answer.status, label).toBe(c.status);
      expect(answer.headers['x-content-type-options'], label).toBe('nosniff');
      expect(answer.headers['x-frame-options'], label).toBe('DENY');
      expect(answer.headers['referrer-policy'], label).toBe('strict-origin-when-cross-origin');
      expect(answer.headers['permissions-policy'], label).toMatch(/camera=\(\)/);
      if (c.html) expect(answer.headers['content-security-policy'], label).toMatch(/script-src 'self'/);
    }
  });
});

/** Every POST/PUT/PATCH/DELETE the API exports, read from the route files (so a new one is covered). */
function writeRoutes(): { route: string; method: string; url: string }[] {
  const dir = path.join(PAGES_DIR, 'api');
  const files = (function walk(d: string): string[] {
    return fs.readdirSync(d, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? walk(path.join(d, e.name)) : [path.join(d, e.name)]));
  })(dir).filter((f) => /\.ts$/.test(f));
  const placeholders: Record<string, string> = { number: 'SM-000000-AAAAAA', id: '999999', lineId: '999999', token: '1.1.x', serial: 'SMC-0', slug: 'x' };
  return files.flatMap((file) => {
    const source = fs.readFileSync(file, 'utf8');
    const methods = new Set<string>();
    for (const m of source.matchAll(/export const (GET|POST|PUT|PATCH|DELETE|ALL)\b/g)) methods.add(m[1]!);
    for (const m of source.matchAll(/export const \{([^}]+)\}/g)) for (const name of m[1]!.split(',').map((s) => s.trim())) methods.add(name);
    const route = path.relative(dir, file).split(path.sep).join('/');
    const url = `/api/${route.replace(/\.ts$/, '').replace(/(^|\/)index$/, '').replace(/\[\.\.\.\w+\]/, 'sign-out').replace(/\[(\w+)\]/g, (_, k: string) => placeholders[k] ?? 'x')}`;
    return [...methods].filter((m) => ['POST', 'PUT', 'PATCH', 'DELETE', 'ALL'].includes(m)).map((method) => ({ route, method: method === 'ALL' ? 'POST' : method, url }));
  });
}

describe('cross-site writes are refused (OWASP CSRF Prevention; ASVS 3.5.1)', () => {
  const EVIL = 'https://evil.example';
  const bodies: { type: string | null; body: string }[] = [
    { type: 'application/x-www-form-urlencoded', body: 'a=1' },
    { type: 'multipart/form-data; boundary=x', body: '--x\r\nContent-Disposition: form-data; name="a"\r\n\r\n1\r\n--x--\r\n' },
    { type: 'text/plain', body: '{"a":1}' },
    { type: 'application/json', body: '{}' },
    { type: null, body: '' },
  ];

  it('answers 403 to every write route from another site’s page, with every body type, even with an admin session', async () => {
    const routes = writeRoutes();
    expect(routes.length).toBeGreaterThan(25);
    for (const { route, method, url } of routes) {
      if (route === 'stripe/webhook.ts') continue; // authenticated by its signature, below
      for (const { type, body } of bodies) {
        const headers: Record<string, string> = { origin: EVIL };
        if (type) headers['content-type'] = type;
        const answer = await call(url, { method, cookie: cookies.admin, body, headers });
        expect(answer.status, `${method} ${url} (${type ?? 'no body type'}) from ${EVIL}: ${answer.text.slice(0, 120)}`).toBe(403);
      }
      // A browser's fetch metadata says cross-site even where no Origin is sent.
      const metadata = await call(url, { method, cookie: cookies.admin, body: '{}', headers: { 'content-type': 'application/json', 'sec-fetch-site': 'cross-site' } });
      expect(metadata.status, `${method} ${url} with Sec-Fetch-Site: cross-site`).toBe(403);
    }
  });

  it('lets the same requests through from the shop’s own pages (the refusal is about the origin)', async () => {
    for (const { route, method, url } of writeRoutes()) {
      if (route.startsWith('auth/') || route === 'stripe/webhook.ts') continue;
      const answer = await call(url, { method, cookie: cookies.admin, body: '{}', headers: { 'content-type': 'application/json', origin: baseUrl, 'sec-fetch-site': 'same-origin' } });
      expect(answer.status, `${method} ${url}`).not.toBe(403);
    }
  });

  it('refuses better-auth’s own writes from another site: sign-in, sign-up, sign-out, reset, role change', async () => {
    const attempts: [string, unknown][] = [
      ['/api/auth/sign-in/email', { email: DEMO.buyer.email, password: DEMO.buyer.password }],
      ['/api/auth/sign-up/email', { name: 'x', email: 'cross-site@example.com', password: 'a long enough pass' }],
      ['/api/auth/sign-out', {}],
      ['/api/auth/request-password-reset', { email: DEMO.buyer.email, redirectTo: '/reset-password' }],
      ['/api/auth/admin/set-role', { userId: made.ownerId, role: 'admin' }],
    ];
    for (const [url, json] of attempts) {
      const answer = await call(url, { cookie: cookies.admin, body: JSON.stringify(json), headers: { 'content-type': 'application/json', origin: EVIL } });
      expect(answer.status, `${url}: ${answer.text.slice(0, 120)}`).toBe(403);
      expect(answer.headers['set-cookie'] ?? [], url).toEqual([]);
    }
    expect((await dbAll<{ role: string }>('SELECT role FROM users WHERE id = ?', [made.ownerId]))[0]!.role).toBe('buyer');
    // the admin's session survived the cross-site sign-out
    expect((await call('/api/dispatch/orders', { cookie: cookies.admin })).status).toBe(200);
  });

  it('refuses an unsigned or wrongly signed webhook whatever its origin', async () => {
    const answer = await call('/api/stripe/webhook', { body: '{"id":"evt_x","type":"checkout.session.completed"}', headers: { 'content-type': 'application/json', 'stripe-signature': 't=1,v1=00' } });
    expect(answer.status).toBe(400);
  });
});

describe('the session cookie (ASVS 3.3.1, OWASP Session Management)', () => {
  it('is HttpOnly, SameSite=Lax, for the whole site, and not Secure on a plain-http origin (Secure on https: security-session.test.ts)', async () => {
    const session = made.signInCookies.find((c) => /session_token=/.test(c))!;
    expect(session).toMatch(/^stillmark\.session_token=/);
    expect(session).toMatch(/;\s*HttpOnly/i);
    expect(session).toMatch(/;\s*SameSite=Lax/i);
    expect(session).toMatch(/;\s*Path=\//i);
    expect(session).not.toMatch(/;\s*Secure/i);
  });
});
