/** Outgoing mail over SMTP: the local mail catcher in development and tests, a real relay by configuration. */
import { createTransport } from 'nodemailer';
import { config } from './config';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html?: string;
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
export async function sendMail({ to, subject, text, html }: OutgoingMail): Promise<string> {
  try {
    const info = await transport().sendMail({ from: config().mailFrom, to, subject, text, ...(html ? { html } : {}) });
    return info.messageId;
  } catch (error) {
    throw new Error(`Mail to ${to} was not sent: ${error instanceof Error ? error.message : String(error)}`, { cause: error });
  }
}
