import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { createTransport } from 'nodemailer';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startMailCatcher, type MailCatcher } from '~/fakes/mail/catcher';
import { resetConfigForTests } from '~/lib/server/config';
import { sendMail } from '~/lib/server/mail';
import { getCaughtMail, listCaughtMail, MailCatcherError } from '~/lib/server/mail-catcher-client';

interface Summary { id: string; receivedAt: string; from: string | null; to: string[]; subject: string }
interface Full extends Summary {
  envelope: { from: string | null; to: string[] };
  text: string | null;
  html: string | null;
  headers: [string, string][];
  size: number;
}

let dir: string;
let storeFile: string;
let catcher: MailCatcher;
const savedEnv = { SMTP_URL: process.env.SMTP_URL, MAIL_CATCHER_URL: process.env.MAIL_CATCHER_URL, MAIL_FROM: process.env.MAIL_FROM };

const api = (p: string, init?: RequestInit) => fetch(`http://127.0.0.1:${catcher.httpPort}${p}`, init);
async function list(query = ''): Promise<Summary[]> {
  const res = await api(`/messages${query}`);
  expect(res.status).toBe(200);
  return ((await res.json()) as { messages: Summary[] }).messages;
}
async function full(id: string): Promise<Full> {
  const res = await api(`/messages/${id}`);
  expect(res.status).toBe(200);
  return (await res.json()) as Full;
}
function header(message: Full, name: string): string | undefined {
  return message.headers.find(([n]) => n.toLowerCase() === name.toLowerCase())?.[1];
}
async function send(message: { to: string; subject: string; text: string; html?: string }) {
  const transport = createTransport({ host: '127.0.0.1', port: catcher.smtpPort, secure: false });
  try {
    return await transport.sendMail({ from: 'Test Sender <sender@example.test>', ...message });
  } finally {
    transport.close();
  }
}
function pointAppAtCatcher(): void {
  process.env.SMTP_URL = `smtp://127.0.0.1:${catcher.smtpPort}`;
  process.env.MAIL_CATCHER_URL = `http://127.0.0.1:${catcher.httpPort}`;
  process.env.MAIL_FROM = 'Stillmark test <shop@example.test>';
  resetConfigForTests();
}

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillmark-mail-'));
  storeFile = path.join(dir, 'nested', 'mail-catcher.jsonl');
  catcher = await startMailCatcher({ smtpPort: 0, httpPort: 0, storeFile });
});

afterAll(async () => {
  await catcher.close();
  fs.rmSync(dir, { recursive: true, force: true });
  for (const [key, value] of Object.entries(savedEnv)) {
    if (value === undefined) delete process.env[key];
    else process.env[key] = value;
  }
  resetConfigForTests();
});

describe('mail catcher', () => {
  it('listens on the free ports it picked and reports its health', async () => {
    expect(catcher.smtpPort).toBeGreaterThan(0);
    expect(catcher.httpPort).toBeGreaterThan(0);
    expect(catcher.smtpPort).not.toBe(catcher.httpPort);
    const res = await api('/health');
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ ok: true, messages: 0 });
  });

  it('refuses to bind anywhere but loopback', async () => {
    await expect(startMailCatcher({ smtpPort: 0, httpPort: 0, host: '0.0.0.0', storeFile })).rejects.toThrow(/loopback/);
  });

  it('catches messages and lists them newest first, filtered by recipient', async () => {
    const first = await send({
      to: 'Ada Collector <ada@example.test>',
      subject: 'First: text and HTML',
      text: 'Plain words for the first message.',
      html: '<p>Rich <strong>words</strong> for the first message.</p>',
    });
    const second = await send({ to: 'ben@example.test', subject: 'Second: text only', text: 'Only plain words here.' });

    const all = await list();
    expect(all.map((m) => m.subject)).toEqual(['Second: text only', 'First: text and HTML']);
    expect(all[0]).toEqual({ id: expect.stringMatching(/^[a-f0-9]{24}$/), receivedAt: all[0]!.receivedAt, from: 'Test Sender <sender@example.test>', to: ['ben@example.test'], subject: 'Second: text only' });
    expect(new Date(all[0]!.receivedAt).toISOString()).toBe(all[0]!.receivedAt);
    expect(Date.parse(all[0]!.receivedAt)).toBeGreaterThanOrEqual(Date.parse(all[1]!.receivedAt));

    const forAda = await list('?to=ADA@example.test');
    expect(forAda.map((m) => m.subject)).toEqual(['First: text and HTML']);
    expect(await list('?to=nobody@example.test')).toEqual([]);

    const rich = await full(all[1]!.id);
    expect(rich.html).toContain('<strong>words</strong>');
    expect(rich.text?.trim()).toBe('Plain words for the first message.');
    expect(rich.to).toEqual(['ada@example.test']);
    expect(rich.envelope).toEqual({ from: 'sender@example.test', to: ['ada@example.test'] });
    // Header fields every message carries: RFC 5322 §3.6 (From, Subject) and §3.6.4 (Message-ID).
    expect(header(rich, 'Subject')).toBe('First: text and HTML');
    expect(header(rich, 'From')).toBe('Test Sender <sender@example.test>');
    expect(header(rich, 'Message-ID')).toBe(first.messageId);
    expect(rich.size).toBeGreaterThan(0);

    const plain = await full(all[0]!.id);
    expect(plain.html).toBeNull();
    expect(plain.text?.trim()).toBe('Only plain words here.');
    expect(header(plain, 'Message-ID')).toBe(second.messageId);
  });

  it('keeps what it caught across a restart on the same store', async () => {
    const before = await list();
    expect(before).toHaveLength(2);
    await catcher.close();
    catcher = await startMailCatcher({ smtpPort: 0, httpPort: 0, storeFile });
    expect(await list()).toEqual(before);
    expect((await full(before[1]!.id)).html).toContain('<strong>words</strong>');
  });

  it('skips a damaged line in the store instead of failing to start', async () => {
    await catcher.close();
    fs.appendFileSync(storeFile, '{"id":"cut short by a cra');
    catcher = await startMailCatcher({ smtpPort: 0, httpPort: 0, storeFile });
    expect(await list()).toHaveLength(2);
    // The next message starts on a line of its own, so it survives the following restart.
    await send({ to: 'dora@example.test', subject: 'After the damage', text: 'Still here.' });
    await catcher.close();
    catcher = await startMailCatcher({ smtpPort: 0, httpPort: 0, storeFile });
    expect((await list()).map((m) => m.subject)).toEqual(['After the damage', 'Second: text only', 'First: text and HTML']);
  });

  it('answers unknown ids, paths and methods with JSON errors', async () => {
    const missing = await api(`/messages/${'0'.repeat(24)}`);
    expect(missing.status).toBe(404);
    expect(await missing.json()).toEqual({ error: { code: 'not_found', message: expect.any(String) } });
    expect((await api('/messages/not-an-id')).status).toBe(404);
    expect((await api('/elsewhere')).status).toBe(404);
    expect((await api('/messages', { method: 'POST' })).status).toBe(405);
  });

  it('answers only requests addressed to a loopback name', async () => {
    const http = await import('node:http');
    const status = await new Promise<number>((resolve, reject) => {
      http.get({ host: '127.0.0.1', port: catcher.httpPort, path: '/messages', headers: { Host: 'attacker.example:80' } }, (res) => {
        res.resume();
        resolve(res.statusCode ?? 0);
      }).on('error', reject);
    });
    // 421 Misdirected Request: RFC 9110 §15.5.20.
    expect(status).toBe(421);
  });

  it('is read by the Dispatch client, which validates what it gets', async () => {
    pointAppAtCatcher();
    const caught = await listCaughtMail();
    expect(caught.map((m) => m.subject)).toEqual(['After the damage', 'Second: text only', 'First: text and HTML']);
    expect((await listCaughtMail({ to: 'ben@example.test' })).map((m) => m.subject)).toEqual(['Second: text only']);
    const one = await getCaughtMail(caught[2]!.id);
    expect(one?.html).toContain('<strong>words</strong>');
    expect(await getCaughtMail('0'.repeat(24))).toBeNull();
    expect(await getCaughtMail('../health')).toBeNull();
  });

  it('delivers mail sent by the app (src/lib/server/mail.ts) to the catcher', async () => {
    pointAppAtCatcher();
    const html = '<p>Your certificate is ready.</p>';
    const messageId = await sendMail({ to: 'cleo@example.test', subject: 'From the app', text: 'Your certificate is ready.', html });
    const [caught] = await list('?to=cleo@example.test');
    expect(caught).toMatchObject({ subject: 'From the app', from: 'Stillmark test <shop@example.test>', to: ['cleo@example.test'] });
    const message = await full(caught!.id);
    expect(header(message, 'Message-ID')).toBe(messageId);
    expect(message.html).toBe(html);
    expect(message.text?.trim()).toBe('Your certificate is ready.');

    // The transport is reused: a second message goes through the same one.
    await sendMail({ to: 'cleo@example.test', subject: 'Again', text: 'Second note.' });
    expect((await list('?to=cleo@example.test')).map((m) => m.subject)).toEqual(['Again', 'From the app']);
  });

  it('refuses a message over 25 MB with 552', async () => {
    // 552: RFC 5321 §4.2.2 "exceeded storage allocation", the reply RFC 1870 (SIZE) prescribes.
    const big = 'x'.repeat(26 * 1024 * 1024);
    await expect(send({ to: 'ada@example.test', subject: 'Too big', text: big })).rejects.toMatchObject({ responseCode: 552 });
    expect((await list()).some((m) => m.subject === 'Too big')).toBe(false);
  });

  it('clears everything with DELETE /messages, on disk too', async () => {
    const before = (await list()).length;
    const res = await api('/messages', { method: 'DELETE' });
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ deleted: before });
    expect(await list()).toEqual([]);
    await catcher.close();
    catcher = await startMailCatcher({ smtpPort: 0, httpPort: 0, storeFile });
    expect(await list()).toEqual([]);
  });

  it('gives Dispatch a clear error when the catcher is down or not configured', async () => {
    pointAppAtCatcher();
    await catcher.close();
    await expect(listCaughtMail()).rejects.toMatchObject({ name: 'MailCatcherError', problem: 'unreachable' });
    catcher = await startMailCatcher({ smtpPort: 0, httpPort: 0, storeFile });
    delete process.env.MAIL_CATCHER_URL;
    resetConfigForTests();
    const error = await listCaughtMail().catch((e: unknown) => e);
    expect(error).toBeInstanceOf(MailCatcherError);
    expect((error as MailCatcherError).problem).toBe('not_configured');
  });
});
