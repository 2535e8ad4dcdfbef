/**
 * Faults: the app process killed at the worst moments, two processes writing at once, the mail relay down.
 * The app runs as a child process (tests/faults/app.ts: the real route handlers behind node:http) that is
 * killed with SIGKILL (no clean-up runs) and started again on the same port. Every wait is a poll on an
 * observable state (a file, a row, a delivery attempt), never a fixed sleep standing in for one.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import http from 'node:http';
import net from 'node:net';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import sqlite3 from 'sqlite3';
import { config, resetConfigForTests } from '~/lib/server/config';
import { db } from '~/lib/server/db';
import { flushMailOutbox, mailOutboxStatus, sendMail, stopMailOutbox } from '~/lib/server/mail';
import { sweepUploads } from '~/lib/server/upload-sweep';
import { resetAuthForTests } from '~/lib/server/auth';
import { startMailCatcher, type MailCatcher } from '../../src/fakes/mail/catcher';
import { startStripeFake, type StripeFake } from '../../src/fakes/stripe/server';
import { useTempDatabase, type TestData } from '../_fixtures';
import { authRequest, firstLink, listMail } from '../_accounts';
import { cartFor, insertShop, pay, testJpeg, type Shop } from '../faults/shop';
import { TEST_USERS } from '../faults/users';

const SECRET = 'whsec_faults_test_secret';
/** The fake retries quickly here; forty tries (30 s) cover a restart of the app many times over. */
const RETRY_DELAYS = [100, 200, 400, ...Array<number>(37).fill(800)];
/** The app's outbox here: first retry after 300 ms, then 600, 1200, at most 1200 (in the app: 30 s, doubling to 30 min). */
const MAIL_RETRY_MS = 300;

let data: TestData;
let fake: StripeFake;
let catcher: MailCatcher | null = null;
let shop: Shop;
let appPort: number;
let appUrl: string;
let smtpPort: number;
let catcherHttpPort: number;
let catcherUrl: string;
const children = new Set<ChildProcess>();

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = net.createServer();
    server.listen(0, '127.0.0.1', () => {
      const { port } = server.address() as net.AddressInfo;
      server.close(() => resolve(port));
    });
    server.on('error', reject);
  });
}

async function startCatcher(): Promise<void> {
  catcher = await startMailCatcher({ smtpPort, httpPort: catcherHttpPort, storeFile: path.join(data.dir, 'mail.jsonl') });
}

async function stopCatcher(): Promise<void> {
  await catcher?.close();
  catcher = null;
}

/** Starts the app process and waits until it answers. */
async function startApp(): Promise<ChildProcess> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'tests/faults/app.ts'], {
    env: {
      ...process.env, STILLMARK_DATA_DIR: data.dir, PORT: String(appPort), PUBLIC_ORIGIN: appUrl,
      SMTP_URL: `smtp://127.0.0.1:${smtpPort}`, MAIL_CATCHER_URL: catcherUrl,
      STRIPE_API_BASE: fake.url, STRIPE_WEBHOOK_SECRET: SECRET, STRIPE_SECRET_KEY: 'sk_test_faults', FAULT_MAIL_RETRY_MS: String(MAIL_RETRY_MS),
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.add(child);
  child.stdout!.on('data', () => {});
  child.stderr!.on('data', (chunk: Buffer) => process.stderr.write(`[app ${child.pid}] ${chunk.toString()}`));
  const deadline = Date.now() + 30_000;
  while (Date.now() < deadline) {
    if (child.exitCode !== null) throw new Error(`the app exited with ${child.exitCode}`);
    try {
      const res = await fetch(`${appUrl}/health`);
      if (res.ok && (await res.json()).pid === child.pid) return child;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 50));
  }
  throw new Error('the app did not start');
}

/** SIGKILL: no handler, no finally block, no clean-up runs in the app. */
async function kill(child: ChildProcess): Promise<void> {
  if (child.exitCode === null && child.signalCode === null) {
    const exited = new Promise((resolve) => child.once('exit', resolve));
    child.kill('SIGKILL');
    await exited;
  }
  children.delete(child);
}

async function query<T extends object>(sql: string, bind: unknown[] = []): Promise<T[]> {
  return db().query<T>(sql, { bind, type: QueryTypes.SELECT });
}

async function orderStatus(number: string): Promise<string | undefined> {
  return (await query<{ status: string }>('SELECT status FROM orders WHERE number = $1', [number]))[0]?.status;
}

async function checkoutThroughApp(): Promise<{ orderNumber: string; url: string }> {
  const res = await fetch(`${appUrl}/api/account/checkout`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-test-user': 'buyer' },
    body: JSON.stringify(cartFor(shop)),
  });
  expect(res.status, await res.clone().text()).toBe(201);
  return res.json();
}

function ls(dir: string): string[] {
  return fs.existsSync(dir) ? fs.readdirSync(dir) : [];
}

/** Sets the modification time of `full` (and everything in it) to `ms` ago, as if left there that long. */
function age(full: string, ms: number): void {
  const at = new Date(Date.now() - ms);
  if (fs.statSync(full).isDirectory()) for (const name of fs.readdirSync(full)) age(path.join(full, name), ms);
  fs.utimesSync(full, at, at);
}

beforeAll(async () => {
  data = await useTempDatabase();
  [appPort, smtpPort, catcherHttpPort] = await Promise.all([freePort(), freePort(), freePort()]);
  appUrl = `http://127.0.0.1:${appPort}`;
  catcherUrl = `http://127.0.0.1:${catcherHttpPort}`;
  await startCatcher();
  fake = await startStripeFake({ port: 0, stateFile: path.join(data.dir, 'stripe.json'), webhookUrl: `${appUrl}/api/stripe/webhook`, webhookSecret: SECRET, retryDelaysMs: RETRY_DELAYS });
  Object.assign(process.env, {
    SMTP_URL: `smtp://127.0.0.1:${smtpPort}`, MAIL_CATCHER_URL: catcherUrl, PUBLIC_ORIGIN: 'http://localhost:4321',
    STRIPE_API_BASE: fake.url, STRIPE_WEBHOOK_SECRET: SECRET, STRIPE_SECRET_KEY: 'sk_test_faults',
  });
  resetConfigForTests();
  resetAuthForTests();
  shop = await insertShop();
}, 60_000);

afterAll(async () => {
  for (const child of [...children]) await kill(child);
  await stopMailOutbox();
  await fake?.close();
  await stopCatcher();
  await data?.cleanup();
});

describe('the app killed between Checkout and the webhook', () => {
  it('completes the order exactly once when it is back: one licence, one edition number, one receipt', { timeout: 60_000 }, async () => {
    let app = await startApp();
    const started = await checkoutThroughApp();
    const sessionId = (await query<{ stripe_session_id: string }>('SELECT stripe_session_id FROM orders WHERE number = $1', [started.orderNumber]))[0]!.stripe_session_id;
    await kill(app);

    // The buyer pays while the app is down; the fake cannot deliver and keeps retrying with backoff.
    expect((await pay(started.url, TEST_USERS.buyer.email)).status).toBe(303);
    // (Events of one session are delivered in order, so the first one's retries hold back the rest.)
    await expect.poll(() => fake.deliveries().filter((d) => d.group === sessionId).flatMap((d) => d.attempts).length, { timeout: 10_000 }).toBeGreaterThanOrEqual(3);
    expect(fake.deliveries().filter((d) => d.group === sessionId).flatMap((d) => d.attempts).every((a) => a.status === null && a.error)).toBe(true);
    expect(await orderStatus(started.orderNumber)).toBe('pending_payment');

    app = await startApp();
    await expect.poll(() => fake.deliveries().filter((d) => d.group === sessionId).every((d) => d.state === 'delivered'), { timeout: 20_000 }).toBe(true);
    expect(await orderStatus(started.orderNumber)).toBe('paid');

    const [order] = await query<{ id: number }>('SELECT id FROM orders WHERE number = $1', [started.orderNumber]);
    const licences = await query('SELECT l.id FROM licences l JOIN order_lines ol ON ol.id = l.order_line_id WHERE ol.order_id = $1', [order!.id]);
    expect(licences).toHaveLength(1);
    const numbers = await query<{ number: number; state: string }>('SELECT n.number, n.state FROM edition_numbers n JOIN order_lines ol ON ol.id = n.order_line_id WHERE ol.order_id = $1', [order!.id]);
    expect(numbers).toEqual([{ number: 1, state: 'sold' }]);
    expect(await query('SELECT id FROM webhook_events WHERE order_id = $1 AND type = $2', [order!.id, 'checkout.session.completed'])).toHaveLength(1);
    // The webhook answers after the receipt went out, so once every delivery is done no second copy can follow.
    const receipts = (await listMail(catcherUrl, TEST_USERS.buyer.email)).filter((m) => m.subject.includes(`receipt for order ${started.orderNumber}`));
    expect(receipts).toHaveLength(1);
    expect(await query('SELECT state FROM order_mails WHERE order_id = $1', [order!.id])).toEqual([{ state: 'sent' }]);

    // A late duplicate of the event (as Stripe may send) changes nothing.
    const event = fake.events().find((e) => e.type === 'checkout.session.completed' && (e.data.object as { id?: string }).id === sessionId)!;
    const payload = JSON.stringify(event);
    const { default: Stripe } = await import('stripe');
    const again = await fetch(`${appUrl}/api/stripe/webhook`, { method: 'POST', headers: { 'stripe-signature': Stripe.webhooks.generateTestHeaderString({ payload, secret: SECRET }) }, body: payload });
    expect(await again.json()).toMatchObject({ outcome: 'duplicate' });
    expect(await query('SELECT l.id FROM licences l JOIN order_lines ol ON ol.id = l.order_line_id WHERE ol.order_id = $1', [order!.id])).toHaveLength(1);
    await kill(app);
  });
});

describe('the app killed in the middle of an upload', () => {
  let noisy: Buffer;
  let plain: Buffer;
  beforeAll(async () => {
    // Noise compresses badly: a file of megabytes, still arriving when the app is killed.
    noisy = await testJpeg(3000, 2250, 'noise', 7);
    // Its twelve previews take seconds to make (about 3 s here), the window the kill falls in.
    plain = await testJpeg(2400, 1800, 'plain', 3);
  }, 30_000);

  /** Starts an upload; sends `bytes` of the file (all of it when omitted) and returns the request. */
  function startUpload(file: Buffer, name: string, bytes = file.length): { request: http.ClientRequest; answer: Promise<{ status: number; body: any }> } {
    const request = http.request(`${appUrl}/api/studio/uploads`, {
      method: 'POST',
      headers: { 'content-type': 'application/octet-stream', 'content-length': String(file.length), 'x-file-name': encodeURIComponent(name), 'x-test-user': 'photographer' },
    });
    const answer = new Promise<{ status: number; body: any }>((resolve, reject) => {
      request.on('response', (res) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () => resolve({ status: res.statusCode!, body: JSON.parse(Buffer.concat(chunks).toString() || 'null') }));
      });
      request.on('error', reject);
    });
    answer.catch(() => {}); // a killed app resets the connection; that is the point
    request.write(file.subarray(0, bytes));
    if (bytes === file.length) request.end();
    return { request, answer };
  }

  it('while the file is arriving: the partial file is swept on restart once stale, and nothing else is left', { timeout: 60_000 }, async () => {
    const worksBefore = (await query<{ c: number }>('SELECT COUNT(*) AS c FROM works'))[0]!.c;
    const { incomingDir, originalsDir } = config();
    const originalsBefore = ls(originalsDir).sort();
    let app = await startApp();
    const upload = startUpload(noisy, 'half-sent.jpg', 256 * 1024);
    await expect.poll(() => ls(incomingDir).filter((n) => n.endsWith('.part')).map((n) => fs.statSync(path.join(incomingDir, n)).size)[0] ?? 0, { timeout: 10_000 }).toBeGreaterThan(0);
    await kill(app);
    upload.request.destroy();

    // What the kill left: a partial file, and nothing else.
    const [left] = ls(incomingDir);
    expect(left).toMatch(/\.part$/);
    expect((await query<{ c: number }>('SELECT COUNT(*) AS c FROM works'))[0]!.c).toBe(worksBefore);
    expect(ls(originalsDir).sort()).toEqual(originalsBefore);

    // Found later (as after a restart the next morning): it is stale. Beside it, a live upload of another process.
    age(path.join(incomingDir, left!), 60 * 60_000);
    fs.writeFileSync(path.join(incomingDir, 'another-process.part'), 'still arriving');
    app = await startApp();
    await expect.poll(() => ls(incomingDir), { timeout: 10_000 }).toEqual(['another-process.part']);
    fs.rmSync(path.join(incomingDir, 'another-process.part'));
    await kill(app);
  });

  it('while its previews are being made: the stored original and previews are cleared, and the same file can be uploaded again', { timeout: 90_000 }, async () => {
    const { originalsDir, derivativesDir, uploadsDir } = config();
    const originalsBefore = new Set(ls(originalsDir));
    const derivativesBefore = new Set(ls(derivativesDir));
    const worksBefore = (await query<{ c: number }>('SELECT COUNT(*) AS c FROM works'))[0]!.c;
    let app = await startApp();
    startUpload(plain, 'interrupted-previews.jpg');
    // The original is renamed into place before the previews are made, and the row is written after them.
    await expect.poll(() => ls(originalsDir).filter((n) => !originalsBefore.has(n)).length, { timeout: 20_000, interval: 5 }).toBe(1);
    await kill(app);
    expect((await query<{ c: number }>('SELECT COUNT(*) AS c FROM works'))[0]!.c, 'the app was killed before the row was written').toBe(worksBefore);
    const [orphan] = ls(originalsDir).filter((n) => !originalsBefore.has(n));
    const newDerivatives = () => ls(derivativesDir).filter((n) => !derivativesBefore.has(n));

    // Left long enough to be stale, then the app starts again.
    age(path.join(originalsDir, orphan!), 60 * 60_000);
    for (const name of newDerivatives()) age(path.join(derivativesDir, name), 60 * 60_000);
    app = await startApp();
    await expect.poll(() => ls(originalsDir).filter((n) => !originalsBefore.has(n)), { timeout: 10_000 }).toEqual([]);
    await expect.poll(newDerivatives, { timeout: 10_000 }).toEqual([]);
    // The original is kept aside, not deleted (it may matter if a database was restored by mistake).
    expect(ls(path.join(uploadsDir, 'orphaned'))).toEqual([orphan]);

    // No row, so the same file is not "a duplicate": it uploads again, whole.
    const again = await startUpload(plain, 'interrupted-previews.jpg').answer;
    expect(again.status).toBe(201);
    const [work] = await query<{ original_key: string; key: string }>("SELECT original_key, json_extract(derivatives, '$.key') AS key FROM works WHERE id = $1", [again.body.work.id]);
    await kill(app);
    // A sweep never touches what a work uses, however old.
    age(path.join(originalsDir, work!.original_key), 60 * 60_000);
    age(path.join(derivativesDir, work!.key), 60 * 60_000);
    const swept = await sweepUploads();
    expect(swept.removed.filter((p) => !p.startsWith('orphaned'))).toEqual([]);
    expect(swept.orphaned).toEqual([]);
    expect(fs.existsSync(path.join(originalsDir, work!.original_key))).toBe(true);
    expect(fs.readdirSync(path.join(derivativesDir, work!.key)).length).toBe(12); // 4 sizes × AVIF, WebP, JPEG (images.ts)
  });
});

describe('two processes writing at once', () => {
  it('waits out SQLite busy and loses nothing: every transaction of both is there, counted once', { timeout: 60_000 }, async () => {
    const COUNT = 200;
    await db().query('CREATE TABLE fault_counter (id INTEGER PRIMARY KEY, value INTEGER NOT NULL)');
    await db().query('INSERT INTO fault_counter (id, value) VALUES (1, 0)');
    await db().query('CREATE TABLE fault_rows (id INTEGER PRIMARY KEY AUTOINCREMENT, writer TEXT NOT NULL, seq INTEGER NOT NULL, seen INTEGER NOT NULL, UNIQUE (writer, seq))');

    const results: { writer: string; done: number; errors: number; maxWaitMs: number; elapsedMs: number }[] = [];
    const ready = new Set<string>();
    const waiting = new Set<string>();
    const writers: ChildProcess[] = [];
    const runs = ['A', 'B'].map((writer) => {
      const child = spawn(process.execPath, ['--import', 'tsx', 'tests/faults/writer.ts'], {
        env: { ...process.env, STILLMARK_DATA_DIR: data.dir, WRITER: writer, COUNT: String(COUNT), HOLD_EVERY: '10' },
        stdio: ['pipe', 'pipe', 'pipe'],
      });
      children.add(child);
      writers.push(child);
      let out = '';
      child.stdout!.on('data', (chunk: Buffer) => {
        out += chunk.toString();
        if (out.includes('ready')) ready.add(writer);
        if (out.includes('waiting')) waiting.add(writer);
      });
      child.stderr!.on('data', (chunk: Buffer) => process.stderr.write(`[writer ${writer}] ${chunk.toString()}`));
      return new Promise<void>((resolve, reject) => {
        child.once('exit', (code) => {
          children.delete(child);
          if (code !== 0) return reject(new Error(`writer ${writer} exited with ${code}`));
          results.push(JSON.parse(out.trim().split('\n').pop()!));
          resolve();
        });
      });
    });
    await expect.poll(() => ready.size, { timeout: 30_000 }).toBe(2);

    // A third connection takes the write lock first and holds it, so both writers start by waiting (SQLITE_BUSY, retried).
    const holder = await new Promise<sqlite3.Database>((resolve, reject) => {
      const handle = new sqlite3.Database(config().databasePath, (error) => (error ? reject(error) : resolve(handle)));
    });
    const exec = (sql: string) => new Promise<void>((resolve, reject) => holder.exec(sql, (error) => (error ? reject(error) : resolve())));
    await exec('BEGIN IMMEDIATE');
    for (const child of writers) child.stdin!.end('go\n');
    await expect.poll(() => waiting.size, { timeout: 3000 }).toBe(2);
    const held = Date.now();
    await new Promise((r) => setTimeout(r, 1000)); // the lock is held this long (well under the 5 s busy timeout)
    await exec('COMMIT');
    const heldMs = Date.now() - held;
    await new Promise<void>((resolve) => holder.close(() => resolve()));
    await Promise.all(runs);

    expect(results.map((r) => [r.writer, r.done, r.errors]).sort()).toEqual([['A', COUNT, 0], ['B', COUNT, 0]]);
    // Both waited for the lock the third connection held, and went on when it was let go.
    for (const r of results) expect(r.maxWaitMs).toBeGreaterThanOrEqual(heldMs - 200);
    expect(await query('SELECT value FROM fault_counter')).toEqual([{ value: 2 * COUNT }]);
    const rows = await query<{ writer: string; seq: number; seen: number }>('SELECT writer, seq, seen FROM fault_rows ORDER BY seen');
    expect(rows).toHaveLength(2 * COUNT);
    // No lost update: each transaction saw the counter the one before it left, 1, 2, …, 2N.
    expect(rows.map((r) => r.seen)).toEqual(Array.from({ length: 2 * COUNT }, (_, i) => i + 1));
    for (const writer of ['A', 'B']) {
      expect(rows.filter((r) => r.writer === writer).map((r) => r.seq).sort((a, b) => a - b)).toEqual(Array.from({ length: COUNT }, (_, i) => i));
    }
  });
});

describe('the mail relay down', () => {
  it('queues the receipt, keeps the order, and delivers the mail once when the relay is back', { timeout: 60_000 }, async () => {
    await stopCatcher();
    const app = await startApp();
    const started = await checkoutThroughApp();
    expect((await pay(started.url, TEST_USERS.buyer.email)).status).toBe(303);
    await expect.poll(() => orderStatus(started.orderNumber), { timeout: 20_000 }).toBe('paid');
    const [order] = await query<{ id: number }>('SELECT id FROM orders WHERE number = $1', [started.orderNumber]);
    expect(await query('SELECT l.id FROM licences l JOIN order_lines ol ON ol.id = l.order_line_id WHERE ol.order_id = $1', [order!.id])).toHaveLength(1);

    // Queued, visible in the order's log and the app's queue size, and retried with backoff while the relay stays down.
    const outbox = async () => (await fetch(`${appUrl}/outbox`)).json() as Promise<{ queued: number }>;
    await expect.poll(async () => (await outbox()).queued, { timeout: 10_000 }).toBe(1);
    expect(await query<{ state: string }>('SELECT state FROM order_mails WHERE order_id = $1', [order!.id])).toEqual([{ state: 'queued' }]);
    await expect.poll(async () => (await query<{ attempts: number }>('SELECT attempts FROM mail_outbox WHERE order_id = $1', [order!.id]))[0]?.attempts ?? 0, { timeout: 10_000 }).toBeGreaterThanOrEqual(3);
    const [queued] = await query<{ message_id: string }>('SELECT message_id FROM mail_outbox WHERE order_id = $1', [order!.id]);

    await startCatcher(); // on the same ports
    await expect.poll(async () => (await outbox()).queued, { timeout: 20_000 }).toBe(0);
    // The row is gone once sent, so nothing can send it again: exactly one copy.
    const receipts = (await listMail(catcherUrl, TEST_USERS.buyer.email)).filter((m) => m.subject.includes(`receipt for order ${started.orderNumber}`));
    expect(receipts).toHaveLength(1);
    const caught = (await (await fetch(`${catcherUrl}/messages/${receipts[0]!.id}`)).json()) as { headers: [string, string][] };
    // The Message-ID chosen at the first try, kept through the retries.
    expect(caught.headers.find(([name]) => name.toLowerCase() === 'message-id')?.[1]).toBe(queued!.message_id);
    expect(await query('SELECT state, message_id FROM order_mails WHERE order_id = $1 ORDER BY id', [order!.id])).toEqual([
      { state: 'queued', message_id: null },
      { state: 'sent', message_id: queued!.message_id },
    ]);
    expect(await orderStatus(started.orderNumber)).toBe('paid');
    await kill(app);
  });

  it('queues account mails too: the verification link arrives once the relay is back', { timeout: 30_000 }, async () => {
    await stopCatcher();
    const email = 'new.reader@example.test';
    const up = await authRequest('/sign-up/email', { body: { name: 'New Reader', email, password: 'a long enough pass', callbackURL: '/account' } });
    expect(up.status).toBe(200);
    await expect.poll(async () => (await query('SELECT recipient FROM mail_outbox WHERE recipient = $1', [email])).length, { timeout: 5000 }).toBe(1);
    expect((await mailOutboxStatus()).queued).toBe(1);

    await startCatcher();
    // The retry loop's work, done here at once: as if its next round had come.
    expect(await flushMailOutbox(Date.now() + 60 * 60_000)).toEqual({ sent: 1, retrying: 0, failed: 0 });
    expect((await mailOutboxStatus()).queued).toBe(0);
    const mails = await listMail(catcherUrl, email);
    expect(mails).toHaveLength(1);
    const message = (await (await fetch(`${catcherUrl}/messages/${mails[0]!.id}`)).json()) as { text: string };
    expect(firstLink(message.text)).toMatch(/\/api\/auth\/verify-email\?token=/);
    expect(await flushMailOutbox(Date.now() + 60 * 60_000)).toEqual({ sent: 0, retrying: 0, failed: 0 });
  });

  it('does not queue a message the relay refuses for good (5xx), and says so in the order log', async () => {
    const [order] = await query<{ id: number }>('SELECT id FROM orders ORDER BY id LIMIT 1');
    // The catcher refuses messages over 25 MB with 552 (RFC 5321 §4.2.2; RFC 1870 SIZE).
    await expect(sendMail({ to: 'ada@example.test', subject: 'Far too big', text: 'x'.repeat(26 * 1024 * 1024), orderId: order!.id })).rejects.toThrow(/was not sent/);
    expect(await mailOutboxStatus()).toMatchObject({ queued: 0, failed: 0 });
    expect(await query("SELECT state FROM order_mails WHERE subject = 'Far too big'")).toEqual([{ state: 'failed' }]);
  });
});
