/** Outgoing mail over SMTP: the local mail catcher in development and tests, a real relay by configuration. */
import { createTransport } from 'nodemailer';
import { config } from './config';
import { db } from './db';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html?: string;
  /** The order this mail is about: it is then listed on the order's Dispatch page, sent or failed. */
  orderId?: number;
}

let cached: { url: string; transport: ReturnType<typeof makeTransport> } | undefined;

function makeTransport(url: string) {
  return createTransport({
    url,
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

/** Sends one message from MAIL_FROM and returns its Message-ID. Throws when the relay refuses it. */
export async function sendMail({ to, subject, text, html, orderId }: OutgoingMail): Promise<string> {
  try {
    const info = await transport().sendMail({ from: config().mailFrom, to, subject, text, ...(html ? { html } : {}) });
    if (orderId) await logOrderMail(orderId, to, subject, info.messageId, null);
    return info.messageId;
  } catch (error) {
    const reason = error instanceof Error ? error.message : String(error);
    if (orderId) await logOrderMail(orderId, to, subject, null, reason);
    throw new Error(`Mail to ${to} was not sent: ${reason}`, { cause: error });
  }
}

/** The log is a convenience for Dispatch: failing to write it must never fail the mail itself. */
async function logOrderMail(orderId: number, recipient: string, subject: string, messageId: string | null, error: string | null): Promise<void> {
  try {
    await db().query('INSERT INTO order_mails (order_id, recipient, subject, message_id, error, created_at) VALUES ($1, $2, $3, $4, $5, $6)', {
      bind: [orderId, recipient, subject.slice(0, 250), messageId, error?.slice(0, 250) ?? null, new Date().toISOString()],
    });
  } catch (logError) {
    console.error(`could not log mail for order ${orderId}`, logError);
  }
}
