/**
 * Checkout as buyers do it, over HTTP: sign in (or sign up and follow the e-mailed link), POST the cart to
 * /api/account/checkout, pay on the Stripe fake's hosted page with the test card, and wait for the receipt.
 * Latency is read afterwards from the records the fakes keep: when the fake started sending
 * `checkout.session.completed` (its delivery log) and when the catcher finished taking the receipt.
 */
import fs from 'node:fs';
import { ReadDb } from './db';
import { log, median, quantile, round, sleep, Visitor } from './util';

const BUYER = { email: 'tom@picture-desk.example', password: 'gallery-demo-2026' };
const CARD = '4242424242424242';
const LICENSEE = { name: 'Tom Reader', organisation: 'Picture Desk', intendedUse: 'Editorial feature on still-life photography, print and web.' };
const SHIPPING = { name: 'Bench Buyer', line1: '1 Test Street', city: 'London', postalCode: 'N1 9GU', country: 'GB' };

type Line = { kind: 'licence'; workId: number; tierId: number } | { kind: 'print'; offerId: number; mode: 'fill' | 'fit'; quantity: number };

interface FakeState {
  events: { id: string; type: string; data: { object: { id: string; metadata?: Record<string, string> } } }[];
  deliveries: { eventId: string; eventType: string; group: string; state: string; attempts: { at: number; status: number | null; error: string | null; durationMs: number }[] }[];
}

interface MailSummary { id: string; receivedAt: string; subject: string; to: string[] }

export async function signIn(origin: string, email: string, password: string): Promise<Visitor> {
  const visitor = new Visitor(origin);
  const res = await visitor.request('/api/auth/sign-in/email', { method: 'POST', json: { email, password } });
  if (!res.ok) throw new Error(`sign-in for ${email} failed: ${res.status} ${await res.text()}`);
  await res.arrayBuffer();
  return visitor;
}

async function mailsTo(mailApi: string, to: string): Promise<MailSummary[]> {
  const res = await fetch(`${mailApi}/messages?to=${encodeURIComponent(to)}`);
  return ((await res.json()) as { messages: MailSummary[] }).messages;
}

async function waitForMail(mailApi: string, to: string, match: (m: MailSummary) => boolean, timeoutMs = 15_000): Promise<MailSummary> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const found = (await mailsTo(mailApi, to)).find(match);
    if (found) return found;
    await sleep(20);
  }
  throw new Error(`no mail to ${to} matched within ${timeoutMs} ms`);
}

/** A new buyer account: sign up, then open the link from the confirmation mail, which signs the buyer in. */
export async function signUp(origin: string, mailApi: string, email: string, localAddress?: string): Promise<Visitor> {
  const visitor = new Visitor(origin, localAddress);
  const res = await visitor.request('/api/auth/sign-up/email', { method: 'POST', json: { name: `Buyer ${email.split('@')[0]}`, email, password: 'bench-buyer-2026' } });
  if (!res.ok) throw new Error(`sign-up for ${email} failed: ${res.status} ${await res.text()}`);
  await res.arrayBuffer();
  const summary = await waitForMail(mailApi, email, () => true);
  const message = (await (await fetch(`${mailApi}/messages/${summary.id}`)).json()) as { text: string | null; html: string | null };
  const link = /(http:\/\/[^\s"<>]+\/api\/auth\/verify-email\?[^\s"<>]+)/.exec(`${message.text ?? ''} ${message.html ?? ''}`)?.[1];
  if (!link) throw new Error(`no confirmation link in the mail to ${email}`);
  const opened = await visitor.request(link.replaceAll('&amp;', '&'));
  await opened.arrayBuffer();
  if (![...visitor.cookies.keys()].some((k) => k.includes('session_token'))) throw new Error(`opening the confirmation link did not sign ${email} in (${opened.status})`);
  return visitor;
}

/** Pays a Checkout Session on the fake's hosted page with the test card that succeeds. */
async function pay(sessionUrl: string, email: string): Promise<void> {
  const form = new URLSearchParams({ email, cardholder_name: 'Bench Buyer', card_number: CARD, card_expiry: '12/34', card_cvc: '123' });
  const res = await fetch(sessionUrl, { method: 'POST', body: form, redirect: 'manual' });
  await res.arrayBuffer();
  if (res.status !== 303) throw new Error(`paying ${sessionUrl} answered ${res.status}`);
}

function readFakeState(file: string): FakeState {
  return JSON.parse(fs.readFileSync(file, 'utf8')) as FakeState;
}

/**
 * The fake's state once every listed session's `checkout.session.completed` delivery has been answered and
 * written down (the receipt can arrive a moment before the webhook's answer, so the log may lag the mail).
 */
async function settledFakeState(file: string, sessions: string[], timeoutMs = 15_000): Promise<FakeState> {
  const wanted = new Set(sessions);
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const state = readFakeState(file);
    const open = state.deliveries.filter((d) => wanted.has(d.group) && d.eventType === 'checkout.session.completed' && (d.state === 'pending' || !d.attempts.length));
    const seen = new Set(state.deliveries.filter((d) => d.eventType === 'checkout.session.completed').map((d) => d.group));
    if (!open.length && sessions.every((s) => seen.has(s))) return state;
    if (Date.now() > deadline) throw new Error(`${open.length} webhook deliveries still pending after ${timeoutMs} ms`);
    await sleep(100);
  }
}

/** The first delivery attempt of each session's `checkout.session.completed`, by session id. */
function completedDeliveries(state: FakeState): Map<string, { at: number; status: number | null; durationMs: number }> {
  const out = new Map<string, { at: number; status: number | null; durationMs: number }>();
  for (const d of state.deliveries) {
    if (d.eventType !== 'checkout.session.completed' || !d.attempts[0]) continue;
    out.set(d.group, d.attempts[0]);
  }
  return out;
}

export interface LatencyFigures {
  orders: number;
  p50Ms: number;
  p90Ms: number;
  p99Ms: number;
  maxMs: number;
  meanMs: number;
  /** The webhook's own answer time (the app answers after commit and after handing the mail to SMTP). */
  webhookP50Ms: number;
  webhookP99Ms: number;
  failedDeliveries: number;
}

function latencyFigures(samples: { latency: number; webhook: number; ok: boolean }[]): LatencyFigures {
  const lat = samples.map((s) => s.latency);
  return {
    orders: samples.length,
    p50Ms: median(lat),
    p90Ms: quantile(lat, 0.9),
    p99Ms: quantile(lat, 0.99),
    maxMs: Math.max(...lat),
    meanMs: round(lat.reduce((a, b) => a + b, 0) / lat.length, 1),
    webhookP50Ms: median(samples.map((s) => s.webhook)),
    webhookP99Ms: quantile(samples.map((s) => s.webhook), 0.99),
    failedDeliveries: samples.filter((s) => !s.ok).length,
  };
}

export interface CheckoutResult {
  app: LatencyFigures & { paid: number; licences: number; receipts: number; checkoutP50Ms: number };
  floor: LatencyFigures;
  wallS: number;
}

/** Licence lines the shop sells now (priced by its own quote endpoint). */
async function sellableLicences(origin: string, db: ReadDb): Promise<Line[]> {
  const rows = await db.all<{ work_id: number; tier_id: number }>(
    "SELECT w.id AS work_id, t.id AS tier_id FROM works w, licence_tiers t WHERE w.status = 'published' AND t.active = 1 ORDER BY w.id, t.position LIMIT 50",
  );
  const lines: Line[] = rows.map((r) => ({ kind: 'licence', workId: r.work_id, tierId: r.tier_id }));
  const res = await fetch(`${origin}/api/cart/quote`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ lines }) });
  const quote = (await res.json()) as { lines: { ok: boolean }[] };
  return lines.filter((_, i) => quote.lines[i]?.ok);
}

export async function realisticQuoteBody(origin: string, db: ReadDb): Promise<string> {
  const licences = (await sellableLicences(origin, db)).slice(0, 3);
  const offers = await db.all<{ id: number }>(
    "SELECT po.id FROM print_offers po JOIN works w ON w.id = po.work_id AND w.status = 'published' JOIN editions e ON e.id = po.edition_id WHERE po.active = 1 ORDER BY e.kind DESC, po.id LIMIT 2",
  );
  const prints: Line[] = offers.map((o, i) => ({ kind: 'print', offerId: o.id, mode: i ? 'fit' : 'fill', quantity: i + 1 }));
  return JSON.stringify({ lines: [...licences, ...prints] });
}

export async function measureCheckout(opts: {
  origin: string;
  mailApi: string;
  stateFile: string;
  floorUrl: string;
  floorStateFile: string;
  db: ReadDb;
  orders: number;
}): Promise<CheckoutResult> {
  const started = Date.now();
  // The floor: the same fake, sending to a bare server that only mails a receipt and answers.
  log(`checkout: floor — ${opts.orders} sessions paid on a second fake whose webhook goes to the bare server`);
  const floorEmail = 'floor@bench.example';
  const floorSessions: string[] = [];
  for (let i = 0; i < opts.orders; i++) {
    const form = new URLSearchParams({
      mode: 'payment',
      'line_items[0][price_data][currency]': 'gbp',
      'line_items[0][price_data][unit_amount]': '4500',
      'line_items[0][price_data][product_data][name]': 'Bench licence',
      'line_items[0][quantity]': '1',
      success_url: 'http://127.0.0.1/ok',
      customer_email: floorEmail,
    });
    const res = await fetch(`${opts.floorUrl}/v1/checkout/sessions`, { method: 'POST', headers: { authorization: 'Bearer sk_test_bench' }, body: form });
    const session = (await res.json()) as { id: string; url: string };
    await pay(session.url, floorEmail);
    await waitForMail(opts.mailApi, floorEmail, (m) => m.subject.includes(session.id));
    floorSessions.push(session.id);
  }
  const floorMail = new Map((await mailsTo(opts.mailApi, floorEmail)).map((m) => [/cs_\w+/.exec(m.subject)?.[0] ?? '', Date.parse(m.receivedAt)]));
  const floorDeliveries = completedDeliveries(await settledFakeState(opts.floorStateFile, floorSessions));
  const floor = latencyFigures(
    floorSessions.map((id) => {
      const d = floorDeliveries.get(id)!;
      return { latency: floorMail.get(id)! - d.at, webhook: d.durationMs, ok: d.status === 200 };
    }),
  );
  log(`  floor: p50 ${floor.p50Ms} ms, p99 ${floor.p99Ms} ms`);

  log(`checkout: app — ${opts.orders} licence orders by the demo buyer, one after another`);
  const tom = await signIn(opts.origin, BUYER.email, BUYER.password);
  const lines = await sellableLicences(opts.origin, opts.db);
  if (!lines.length) throw new Error('no licence is for sale in the demo shop');
  const orders: { number: string; session: string }[] = [];
  const checkoutMs: number[] = [];
  for (let i = 0; i < opts.orders; i++) {
    const t = performance.now();
    const res = await tom.request('/api/account/checkout', { method: 'POST', json: { lines: [lines[i % lines.length]], licensee: LICENSEE } });
    if (res.status !== 201) throw new Error(`checkout ${i} answered ${res.status}: ${await res.text()}`);
    const { orderNumber, url } = (await res.json()) as { orderNumber: string; url: string };
    checkoutMs.push(performance.now() - t);
    await pay(url, BUYER.email);
    await waitForMail(opts.mailApi, BUYER.email, (m) => m.subject.includes(orderNumber));
    orders.push({ number: orderNumber, session: /\/pay\/([A-Za-z0-9_]+)/.exec(url)![1]! });
  }
  const mail = new Map<string, number>();
  for (const m of await mailsTo(opts.mailApi, BUYER.email)) {
    const number = /SM-\d{6}-[A-Z2-9]{6}/.exec(m.subject)?.[0];
    if (number && m.subject.includes('receipt')) mail.set(number, Date.parse(m.receivedAt));
  }
  const deliveries = completedDeliveries(await settledFakeState(opts.stateFile, orders.map((o) => o.session)));
  const samples = orders.map((o) => {
    const d = deliveries.get(o.session)!;
    return { latency: mail.get(o.number)! - d.at, webhook: d.durationMs, ok: d.status === 200 };
  });
  const numbers = orders.map((o) => o.number);
  const marks = numbers.map(() => '?').join(',');
  const paid = (await opts.db.one<{ n: number }>(`SELECT COUNT(*) AS n FROM orders WHERE status = 'paid' AND number IN (${marks})`, numbers))!.n;
  const licences = (await opts.db.one<{ n: number }>(
    `SELECT COUNT(*) AS n FROM licences l JOIN order_lines ol ON ol.id = l.order_line_id JOIN orders o ON o.id = ol.order_id WHERE o.number IN (${marks})`,
    numbers,
  ))!.n;
  const app = { ...latencyFigures(samples), paid, licences, receipts: numbers.filter((n) => mail.has(n)).length, checkoutP50Ms: round(median(checkoutMs), 1) };
  log(`  app: p50 ${app.p50Ms} ms, p99 ${app.p99Ms} ms; ${paid} paid, ${licences} licences, ${app.receipts} receipts`);
  return { app, floor, wallS: round((Date.now() - started) / 1000, 1) };
}

export interface EditionsResult {
  edition: { id: number; total: number; work: string; offerId: number; presold: number };
  buyers: number;
  attempts: number;
  statuses: Record<string, number>;
  created: number;
  refused: number;
  serverErrors: number;
  /** From the first request sent to the last answer. */
  wallMs: number;
  p50Ms: number;
  p99Ms: number;
  paidAfter: number;
  refundedAfter: number;
  soldNumbers: number;
  reservedNumbers: number;
  distinctNumbers: boolean;
  payWallMs: number;
}

async function waitForOrders(db: ReadDb, numbers: string[], done: (status: string) => boolean, timeoutMs = 30_000): Promise<Map<string, string>> {
  const deadline = Date.now() + timeoutMs;
  const marks = numbers.map(() => '?').join(',');
  for (;;) {
    const rows = await db.all<{ number: string; status: string }>(`SELECT number, status FROM orders WHERE number IN (${marks})`, numbers);
    const statuses = new Map(rows.map((r) => [r.number, r.status]));
    if (rows.length === numbers.length && rows.every((r) => done(r.status))) return statuses;
    if (Date.now() > deadline) return statuses;
    await sleep(50);
  }
}

export async function measureEditions(opts: { origin: string; mailApi: string; db: ReadDb; attempts: number; buyers: number; left: number }): Promise<EditionsResult> {
  // An edition with more than `left` numbers free (so some are sold first, as in life), the smallest such.
  const edition = await opts.db.one<{ id: number; total: number; offer_id: number; slug: string; taken: number }>(
    `SELECT e.id, e.total, po.id AS offer_id, w.slug, (SELECT COUNT(*) FROM edition_numbers n WHERE n.edition_id = e.id) AS taken
       FROM editions e JOIN print_offers po ON po.edition_id = e.id AND po.active = 1 JOIN works w ON w.id = e.work_id AND w.status = 'published'
      WHERE e.kind = 'limited' AND e.total - (SELECT COUNT(*) FROM edition_numbers n WHERE n.edition_id = e.id) > ?
      ORDER BY e.total, e.id LIMIT 1`,
    [opts.left],
  );
  if (!edition) throw new Error(`no limited edition with more than ${opts.left} numbers left`);
  const tom = await signIn(opts.origin, BUYER.email, BUYER.password);
  // Sell all but the last few through the shop itself, in orders of at most 10 prints.
  let presold = 0;
  const toSell = edition.total - edition.taken - opts.left;
  log(`editions: limited edition ${edition.id} of ${edition.total} (${edition.slug}); selling ${toSell} first, leaving ${opts.left}`);
  while (presold < toSell) {
    const quantity = Math.min(10, toSell - presold);
    const res = await tom.request('/api/account/checkout', { method: 'POST', json: { lines: [{ kind: 'print', offerId: edition.offer_id, mode: 'fill', quantity }], shipping: SHIPPING } });
    if (res.status !== 201) throw new Error(`pre-sale checkout answered ${res.status}: ${await res.text()}`);
    const { orderNumber, url } = (await res.json()) as { orderNumber: string; url: string };
    await pay(url, BUYER.email);
    const statuses = await waitForOrders(opts.db, [orderNumber], (s) => s !== 'pending_payment');
    if (statuses.get(orderNumber) !== 'paid') throw new Error(`pre-sale order ${orderNumber} is ${statuses.get(orderNumber)}`);
    presold += quantity;
  }

  // Each buyer signs up from an address of its own on the loopback network (127.0.0.10, .11, …), as
  // buyers come from their own addresses: the shop allows only a few sign-ups per address at a time.
  log(`editions: ${opts.buyers} buyer accounts (sign up, confirm by mail)`);
  const stamp = Date.now().toString(36);
  const buyers: Visitor[] = [];
  for (let i = 0; i < opts.buyers; i += 5) {
    const batch = Array.from({ length: Math.min(5, opts.buyers - i) }, (_, j) => signUp(opts.origin, opts.mailApi, `buyer-${stamp}-${i + j}@bench.example`, `127.0.0.${10 + i + j}`));
    buyers.push(...(await Promise.all(batch)));
  }

  log(`editions: ${opts.attempts} checkouts at once for the last ${opts.left} prints`);
  const body = { lines: [{ kind: 'print', offerId: edition.offer_id, mode: 'fill', quantity: 1 }], shipping: SHIPPING };
  const t0 = performance.now();
  const answers = await Promise.all(
    Array.from({ length: opts.attempts }, async (_, i) => {
      const visitor = buyers[i % buyers.length]!;
      const start = performance.now();
      try {
        const res = await visitor.request('/api/account/checkout', { method: 'POST', json: body });
        const json = (await res.json().catch(() => null)) as { orderNumber?: string; url?: string; error?: { code: string } } | null;
        return { status: res.status, ms: performance.now() - start, end: performance.now(), json, visitor };
      } catch (error) {
        return { status: 0, ms: performance.now() - start, end: performance.now(), json: null, visitor, error: String(error) };
      }
    }),
  );
  const wallMs = round(Math.max(...answers.map((a) => a.end)) - t0, 1);
  const statuses: Record<string, number> = {};
  for (const a of answers) {
    const key = a.status === 201 ? '201 created' : `${a.status} ${a.json?.error?.code ?? (a.status === 0 ? 'no answer' : '')}`.trim();
    statuses[key] = (statuses[key] ?? 0) + 1;
  }
  const created = answers.filter((a) => a.status === 201);
  log(`  answered in ${wallMs} ms: ${JSON.stringify(statuses)}`);

  const p0 = performance.now();
  await Promise.all(created.map((a) => pay(a.json!.url!, BUYER.email)));
  const numbers = created.map((a) => a.json!.orderNumber!);
  const after = numbers.length ? await waitForOrders(opts.db, numbers, (s) => s !== 'pending_payment') : new Map<string, string>();
  const payWallMs = round(performance.now() - p0, 1);
  const counts = await opts.db.all<{ state: string; n: number; distinct_numbers: number }>(
    'SELECT state, COUNT(*) AS n, COUNT(DISTINCT number) AS distinct_numbers FROM edition_numbers WHERE edition_id = ? GROUP BY state',
    [edition.id],
  );
  const sold = counts.find((c) => c.state === 'sold');
  return {
    edition: { id: edition.id, total: edition.total, work: edition.slug, offerId: edition.offer_id, presold: presold + edition.taken },
    buyers: buyers.length,
    attempts: opts.attempts,
    statuses,
    created: created.length,
    refused: answers.filter((a) => a.status === 409).length,
    serverErrors: answers.filter((a) => a.status >= 500 || a.status === 0).length,
    wallMs,
    p50Ms: round(median(answers.map((a) => a.ms)), 1),
    p99Ms: round(quantile(answers.map((a) => a.ms), 0.99), 1),
    paidAfter: [...after.values()].filter((s) => s === 'paid').length,
    refundedAfter: [...after.values()].filter((s) => s === 'refunded').length,
    soldNumbers: sold?.n ?? 0,
    reservedNumbers: counts.find((c) => c.state === 'reserved')?.n ?? 0,
    distinctNumbers: (sold?.n ?? 0) === (sold?.distinct_numbers ?? 0),
    payWallMs,
  };
}
