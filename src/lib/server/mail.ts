/**
 * Outgoing mail over SMTP: the local mail catcher in development and tests, a real relay by configuration.
 *
 * A message is tried once at once. When the relay cannot be reached (or answers "try later"), the message
 * goes into the durable outbox (`mail_outbox`) and this process's retry loop sends it again with backoff
 * until the relay takes it; a message the relay refuses for good (a 5xx for this message) is not retried.
 * The Message-ID is chosen before the first try and kept for every retry.
 */
import crypto from 'node:crypto';
import { createTransport } from 'nodemailer';
import { QueryTypes } from 'sequelize';
import { config } from './config';
import { db } from './db';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html?: string;
  /** The order this mail is about: it is then listed on the order's Dispatch page, sent, queued or failed. */
  orderId?: number;
}

let cached: { url: string; transport: ReturnType<typeof makeTransport> } | undefined;

function makeTransport(url: string) {
  return createTransport({
    url,
    // Keep the SMTP connection open between messages: a new connection per message (greeting, EHLO, …)
    // was most of the time from a paid order to its receipt (bench/RESULTS.md, checkout).
    pool: true,
    // A relay that does not answer should fail the request that sent mail, not hang it for minutes.
    connectionTimeout: 10_000,
    greetingTimeout: 10_000,
    socketTimeout: 30_000,
  });
}

/** The one transport for the configured SMTP_URL, created on first use (again only if the URL changes, as in tests). */
function transport() {
  const url = config().smtpUrl;
  if (cached?.url !== url) {
    cached?.transport.close();
    cached = { url, transport: makeTransport(url) };
  }
  return cached.transport;
}

/** `<random@domain-of-MAIL_FROM>`, as RFC 5322 §3.6.4 asks: unique, and on the sender's domain. */
function newMessageId(): string {
  const domain = /@([^\s<>@]+?)>?\s*$/.exec(config().mailFrom)?.[1] ?? 'stillmark.local';
  return `<${crypto.randomUUID()}@${domain}>`;
}

function deliver(mail: OutgoingMail, messageId: string) {
  const { to, subject, text, html } = mail;
  return transport().sendMail({ from: config().mailFrom, to, subject, text, ...(html ? { html } : {}), messageId });
}

function reasonOf(error: unknown): string {
  return error instanceof Error ? error.message : String(error);
}

/**
 * True when the relay refused this very message for good (RFC 5321 §4.2.1: 5yz is a permanent negative
 * reply): its recipients (nodemailer's EENVELOPE) or its content (EMESSAGE). A relay that is down, slow or
 * answers 4yz ("try again later"), or one whose log-in fails, may take the message later.
 */
function refusedForGood(error: unknown): boolean {
  const e = error as { code?: string; responseCode?: number };
  return (e.code === 'EENVELOPE' || e.code === 'EMESSAGE') && typeof e.responseCode === 'number' && e.responseCode >= 500;
}

/**
 * Sends one message from MAIL_FROM and returns its Message-ID. When the relay cannot take it now, the
 * message is queued in the outbox and sent by the retry loop later (the same Message-ID is returned).
 * Throws only when the relay refuses the message for good, or it can be neither sent nor queued.
 */
export async function sendMail(mail: OutgoingMail): Promise<string> {
  const { to, subject, orderId } = mail;
  const messageId = newMessageId();
  try {
    const info = await deliver(mail, messageId);
    if (orderId) await logOrderMail(orderId, to, subject, 'sent', info.messageId, null);
    return info.messageId;
  } catch (error) {
    const reason = reasonOf(error);
    if (refusedForGood(error)) {
      if (orderId) await logOrderMail(orderId, to, subject, 'failed', null, reason);
      throw new Error(`Mail to ${to} was not sent: ${reason}`, { cause: error });
    }
    try {
      await enqueue(mail, messageId, reason);
    } catch (queueError) {
      if (orderId) await logOrderMail(orderId, to, subject, 'failed', null, reason);
      throw new Error(`Mail to ${to} was not sent (${reason}) and could not be queued: ${reasonOf(queueError)}`, { cause: queueError });
    }
    console.warn(`mail to ${to} queued for another try: ${reason}`);
    if (orderId) await logOrderMail(orderId, to, subject, 'queued', null, `queued, will retry: ${reason}`);
    return messageId;
  }
}

/** The log is a convenience for Dispatch: failing to write it must never fail the mail itself. */
async function logOrderMail(
  orderId: number,
  recipient: string,
  subject: string,
  state: 'sent' | 'queued' | 'failed',
  messageId: string | null,
  error: string | null,
): Promise<void> {
  try {
    await db().query('INSERT INTO order_mails (order_id, recipient, subject, state, message_id, error, created_at) VALUES ($1, $2, $3, $4, $5, $6, $7)', {
      bind: [orderId, recipient, subject.slice(0, 250), state, messageId, error?.slice(0, 250) ?? null, new Date().toISOString()],
    });
  } catch (logError) {
    console.error(`could not log mail for order ${orderId}`, logError);
  }
}

// ------------------------------------------------------------------------------------------ the outbox

export interface OutboxTiming {
  /** Wait before the first retry; each further retry waits twice as long as the one before. Default 30 s. */
  firstRetryMs: number;
  /** The longest wait between two tries. Default 30 min. */
  maxRetryMs: number;
  /** How often the loop looks for mail queued by other processes. Default 60 s. */
  pollMs: number;
}

export const DEFAULT_OUTBOX_TIMING: OutboxTiming = { firstRetryMs: 30_000, maxRetryMs: 30 * 60_000, pollMs: 60_000 };

/** A row is held this long by the process sending it: longer than a send can take (10 s connect + 30 s socket). */
const CLAIM_MS = 2 * 60_000;
const BATCH = 20;

let timing: OutboxTiming = DEFAULT_OUTBOX_TIMING;

/** Wait before the next try after `attempts` failed ones: first, 2 × first, 4 × first, … up to the cap. */
export function retryDelayMs(attempts: number, t: OutboxTiming = timing): number {
  return Math.min(t.firstRetryMs * 2 ** Math.max(0, attempts - 1), t.maxRetryMs);
}

async function enqueue(mail: OutgoingMail, messageId: string, reason: string): Promise<void> {
  const now = Date.now();
  await db().query(
    `INSERT INTO mail_outbox (message_id, recipient, subject, text, html, order_id, state, attempts, last_error, next_attempt_at, created_at)
     VALUES ($1, $2, $3, $4, $5, $6, 'queued', 1, $7, $8, $9)`,
    {
      bind: [messageId, mail.to, mail.subject.slice(0, 998), mail.text, mail.html ?? null, mail.orderId ?? null, reason.slice(0, 250),
        new Date(now + retryDelayMs(1)).toISOString(), new Date(now).toISOString()],
    },
  );
  wakeAt(now + retryDelayMs(1));
}

interface OutboxRow {
  id: number;
  message_id: string;
  recipient: string;
  subject: string;
  text: string;
  html: string | null;
  order_id: number | null;
  attempts: number;
}

export interface FlushResult { sent: number; retrying: number; failed: number }

/**
 * Sends every queued message that is due, once. Rows are claimed in one statement first, so two processes
 * flushing at the same moment never send the same message. Used by the retry loop, and by tests.
 */
export async function flushMailOutbox(now: number = Date.now()): Promise<FlushResult> {
  const result: FlushResult = { sent: 0, retrying: 0, failed: 0 };
  for (;;) {
    const at = new Date(now).toISOString();
    const rows = await db().query<OutboxRow>(
      `UPDATE mail_outbox SET claimed_until = $1
       WHERE id IN (SELECT id FROM mail_outbox WHERE state = 'queued' AND next_attempt_at <= $2 AND (claimed_until IS NULL OR claimed_until <= $2)
                    ORDER BY next_attempt_at, id LIMIT ${BATCH})
       RETURNING id, message_id, recipient, subject, text, html, order_id, attempts`,
      { bind: [new Date(Date.now() + CLAIM_MS).toISOString(), at], type: QueryTypes.SELECT },
    );
    if (rows.length === 0) return result;
    for (const row of rows) {
      const mail: OutgoingMail = { to: row.recipient, subject: row.subject, text: row.text, ...(row.html ? { html: row.html } : {}) };
      try {
        await deliver(mail, row.message_id);
      } catch (error) {
        const reason = reasonOf(error).slice(0, 250);
        const attempts = row.attempts + 1;
        if (refusedForGood(error)) {
          await db().query("UPDATE mail_outbox SET state = 'failed', attempts = $2, last_error = $3, claimed_until = NULL WHERE id = $1", { bind: [row.id, attempts, reason] });
          if (row.order_id) await logOrderMail(row.order_id, row.recipient, row.subject, 'failed', null, reason);
          result.failed++;
        } else {
          const next = new Date(Date.now() + retryDelayMs(attempts)).toISOString();
          await db().query('UPDATE mail_outbox SET attempts = $2, last_error = $3, next_attempt_at = $4, claimed_until = NULL WHERE id = $1', { bind: [row.id, attempts, reason, next] });
          result.retrying++;
        }
        continue;
      }
      await db().query('DELETE FROM mail_outbox WHERE id = $1', { bind: [row.id] });
      if (row.order_id) await logOrderMail(row.order_id, row.recipient, row.subject, 'sent', row.message_id, null);
      result.sent++;
    }
  }
}

export interface OutboxStatus {
  /** Messages waiting for another try. */
  queued: number;
  /** Messages the relay refused for good (kept for Dispatch to see). */
  failed: number;
  /** When the oldest waiting message was first tried (ISO), or null. */
  oldestQueuedAt: string | null;
}

/** The outbox's size, for Dispatch and tests. */
export async function mailOutboxStatus(): Promise<OutboxStatus> {
  const [row] = await db().query<{ queued: number; failed: number; oldest: string | null }>(
    "SELECT COUNT(*) FILTER (WHERE state = 'queued') AS queued, COUNT(*) FILTER (WHERE state = 'failed') AS failed, MIN(CASE WHEN state = 'queued' THEN created_at END) AS oldest FROM mail_outbox",
    { type: QueryTypes.SELECT },
  );
  return { queued: Number(row?.queued ?? 0), failed: Number(row?.failed ?? 0), oldestQueuedAt: row?.oldest ?? null };
}

// ------------------------------------------------------------------------------------- the retry loop

let warnedNoTable = false;
let loop: { timer: NodeJS.Timeout | null; wakeAt: number; running: Promise<void> | null } | null = null;

/** Starts this process's retry loop (once; later calls change nothing). Its timer never keeps the process alive. */
export function startMailOutbox(options: Partial<OutboxTiming> = {}): void {
  if (loop) return;
  timing = { ...DEFAULT_OUTBOX_TIMING, ...options };
  loop = { timer: null, wakeAt: Infinity, running: null };
  schedule(0);
}

/** Stops the loop and waits for a flush in progress (tests, shutdown). */
export async function stopMailOutbox(): Promise<void> {
  const current = loop;
  loop = null;
  timing = DEFAULT_OUTBOX_TIMING;
  if (!current) return;
  if (current.timer) clearTimeout(current.timer);
  await current.running;
}

function schedule(delayMs: number): void {
  if (!loop) return;
  const at = Date.now() + Math.max(0, delayMs);
  if (loop.timer && loop.wakeAt <= at) return;
  if (loop.timer) clearTimeout(loop.timer);
  loop.wakeAt = at;
  loop.timer = setTimeout(tick, Math.max(0, delayMs));
  loop.timer.unref();
}

/** Brings the loop forward when a message is queued in this process. */
function wakeAt(at: number): void {
  schedule(at - Date.now());
}

function tick(): void {
  const current = loop;
  if (!current) return;
  current.timer = null;
  current.wakeAt = Infinity;
  if (current.running) return;
  current.running = (async () => {
    try {
      await flushMailOutbox();
    } catch (error) {
      // A database without the outbox (migrations not applied) is said once, not every round.
      if (/no such table: mail_outbox/.test(String((error as { message?: string }).message))) {
        if (!warnedNoTable) console.error('mail outbox: the table mail_outbox is missing; run `npm run migrate`');
        warnedNoTable = true;
      } else {
        console.error('mail outbox: a retry round failed', error);
      }
    }
    let next = timing.pollMs;
    try {
      const [row] = await db().query<{ due: string | null }>("SELECT MIN(next_attempt_at) AS due FROM mail_outbox WHERE state = 'queued'", { type: QueryTypes.SELECT });
      if (row?.due) next = Math.min(next, new Date(row.due).getTime() - Date.now());
    } catch (error) {
      if (!warnedNoTable) console.error('mail outbox: could not read the queue', error);
    }
    current.running = null;
    if (loop === current) schedule(Math.max(next, 50));
  })();
}
