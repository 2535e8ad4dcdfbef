/** Test helpers for accounts: a mail catcher, requests to better-auth, and reading mail back. */
import fs from 'node:fs';
import path from 'node:path';
import { startMailCatcher, type MailCatcher } from '../src/fakes/mail/catcher';
import { resetConfigForTests } from '~/lib/server/config';
import { auth, CLIENT_IP_HEADER, resetAuthForTests } from '~/lib/server/auth';

export const ORIGIN = 'http://localhost:4321';

export async function useMailCatcher(dir: string): Promise<{ catcher: MailCatcher; url: string }> {
  const catcher = await startMailCatcher({ smtpPort: 0, httpPort: 0, storeFile: path.join(dir, 'mail.jsonl') });
  process.env.SMTP_URL = `smtp://127.0.0.1:${catcher.smtpPort}`;
  process.env.MAIL_CATCHER_URL = `http://127.0.0.1:${catcher.httpPort}`;
  process.env.PUBLIC_ORIGIN = ORIGIN;
  resetConfigForTests();
  resetAuthForTests();
  return { catcher, url: process.env.MAIL_CATCHER_URL };
}

export interface AuthAnswer { status: number; body: any; headers: Headers; cookie: string }

let nextAddress = 1;
/** A fresh documentation address (RFC 5737 TEST-NET-3) per request, so rate limits only bite where a test wants them. */
function freshIp(): string {
  const n = nextAddress++;
  return `203.0.${113 + Math.floor(n / 250)}.${(n % 250) + 1}`;
}

/** Sends one request to better-auth as a browser on the shop's origin would, from `ip`. */
export async function authRequest(
  route: string,
  { method = 'POST', body, cookie = '', ip = freshIp() }: { method?: string; body?: unknown; cookie?: string; ip?: string } = {},
): Promise<AuthAnswer> {
  const headers = new Headers({ Origin: ORIGIN, [CLIENT_IP_HEADER]: ip });
  if (body !== undefined) headers.set('Content-Type', 'application/json');
  if (cookie) headers.set('Cookie', cookie);
  const url = route.startsWith('http') ? route : `${ORIGIN}/api/auth${route}`;
  const response = await auth().handler(new Request(url, { method, headers, body: body === undefined ? undefined : JSON.stringify(body) }));
  const text = await response.text();
  let parsed: unknown = text;
  try { parsed = JSON.parse(text); } catch { /* not JSON (redirects) */ }
  const setCookies = response.headers.getSetCookie();
  return { status: response.status, body: parsed, headers: response.headers, cookie: setCookies.map((c) => c.split(';')[0]).join('; ') };
}

/** Waits for a mail to `to` in the catcher and returns it (text and HTML). */
export async function waitForMail(catcherUrl: string, to: string, subject: RegExp, timeoutMs = 5000): Promise<{ text: string; html: string; subject: string }> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const list = await listMail(catcherUrl, to);
    const hit = list.find((m) => subject.test(m.subject));
    if (hit) return (await fetch(`${catcherUrl}/messages/${hit.id}`)).json();
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`no mail to ${to} matching ${subject}`);
}

export async function listMail(catcherUrl: string, to: string): Promise<{ id: string; subject: string }[]> {
  const answer = (await (await fetch(`${catcherUrl}/messages?to=${encodeURIComponent(to)}`)).json()) as { messages: { id: string; subject: string }[] };
  return answer.messages;
}

export function firstLink(text: string): string {
  const match = /https?:\/\/\S+/.exec(text);
  if (!match) throw new Error('no link in the mail');
  return match[0].replace(/[).,]+$/, '');
}

export function rmrf(dir: string): void {
  fs.rmSync(dir, { recursive: true, force: true });
}
