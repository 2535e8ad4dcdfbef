/**
 * A local mail catcher for development and tests: an SMTP server that accepts every message and
 * keeps it, and a small JSON API to read what arrived. Messages are appended as JSON lines to one
 * file, so a restart loses nothing. Never imported by app code; started by scripts/start.mjs, by
 * `cli.ts` and by the tests.
 */
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import http from 'node:http';
import type net from 'node:net';
import path from 'node:path';
import { simpleParser, type AddressObject, type ParsedMail } from 'mailparser';
import { SMTPServer, type SMTPServerDataStream, type SMTPServerSession } from 'smtp-server';

/** Largest message accepted, in bytes; larger ones are refused with 552 (RFC 1870 SIZE). */
export const MAX_MESSAGE_BYTES = 25 * 1024 * 1024;

export interface CaughtMessage {
  id: string;
  /** ISO 8601, when the catcher finished reading the message. */
  receivedAt: string;
  /** The SMTP envelope: MAIL FROM (null for the null sender) and every RCPT TO, Bcc included. */
  envelope: { from: string | null; to: string[] };
  /** The From header, display name included, e.g. `Shop <shop@example.test>`. */
  from: string | null;
  /** Addresses from the To header(s), without display names. */
  to: string[];
  subject: string;
  text: string | null;
  html: string | null;
  /** Every header line in order, unfolded, as [name as written, value]. */
  headers: [string, string][];
  /** Size of the raw message in bytes. */
  size: number;
}

export type CaughtMessageSummary = Pick<CaughtMessage, 'id' | 'receivedAt' | 'from' | 'to' | 'subject'>;

export interface MailCatcherOptions {
  /** 0 picks a free port. */
  smtpPort: number;
  /** 0 picks a free port. */
  httpPort: number;
  /** A loopback address only: the catcher has no authentication. */
  host?: string;
  /** JSON Lines file the messages are appended to (created with its folder if missing). */
  storeFile: string;
}

export interface MailCatcher {
  smtpPort: number;
  httpPort: number;
  close(): Promise<void>;
}

const ID_PATTERN = /^[a-f0-9]{24}$/;

function isLoopback(host: string): boolean {
  return host === 'localhost' || host === '::1' || /^127(\.\d{1,3}){3}$/.test(host);
}

function summary(m: CaughtMessage): CaughtMessageSummary {
  return { id: m.id, receivedAt: m.receivedAt, from: m.from, to: m.to, subject: m.subject };
}

function addressList(field: AddressObject | AddressObject[] | undefined): string[] {
  const out: string[] = [];
  const walk = (entries: AddressObject['value']) => {
    for (const entry of entries) {
      if (entry.address) out.push(entry.address);
      if (entry.group) walk(entry.group);
    }
  };
  for (const object of field === undefined ? [] : Array.isArray(field) ? field : [field]) walk(object.value);
  return out;
}

/** `Name <address>` for each mailbox (groups as `Group: members;`), joined by commas. */
function formatAddresses(entries: AddressObject['value']): string {
  return entries
    .map((e) => {
      if (e.group) return `${e.name}: ${formatAddresses(e.group)};`;
      return e.name && e.address ? `${e.name} <${e.address}>` : (e.address ?? e.name);
    })
    .join(', ');
}

/**
 * Header lines as [name, value]. The value is the parser's decoded string when the header is a plain
 * text header that appears once (so RFC 2047 encoded words read normally), the formatted addresses
 * for an address header, and otherwise the raw line unfolded (RFC 5322 §2.2.3).
 */
function headerList(parsed: ParsedMail): [string, string][] {
  const counts = new Map<string, number>();
  for (const { key } of parsed.headerLines) counts.set(key, (counts.get(key) ?? 0) + 1);
  return parsed.headerLines.map(({ key, line }) => {
    const colon = line.indexOf(':');
    const name = colon > 0 ? line.slice(0, colon).trim() : key;
    const raw = (colon > 0 ? line.slice(colon + 1) : '').replace(/\r?\n[ \t]+/g, ' ').trim();
    const value = counts.get(key) === 1 ? parsed.headers.get(key) : undefined;
    if (typeof value === 'string') return [name, value];
    if (value && typeof value === 'object' && 'value' in value && 'text' in value && Array.isArray(value.value)) {
      return [name, formatAddresses(value.value)];
    }
    return [name, raw];
  });
}

function toMessage(parsed: ParsedMail, session: SMTPServerSession, size: number): CaughtMessage {
  const mailFrom = session.envelope.mailFrom;
  return {
    id: randomBytes(12).toString('hex'),
    receivedAt: new Date().toISOString(),
    envelope: {
      from: mailFrom ? mailFrom.address || null : null,
      to: session.envelope.rcptTo.map((r) => r.address),
    },
    from: parsed.from ? formatAddresses(parsed.from.value) || null : null,
    to: addressList(parsed.to),
    subject: parsed.subject ?? '',
    text: parsed.text ?? null,
    html: typeof parsed.html === 'string' ? parsed.html : null,
    headers: headerList(parsed),
    size,
  };
}

function isCaughtMessage(value: unknown): value is CaughtMessage {
  if (typeof value !== 'object' || value === null) return false;
  const v = value as Record<string, unknown>;
  return typeof v.id === 'string' && typeof v.receivedAt === 'string' && Array.isArray(v.to) && Array.isArray(v.headers);
}

/**
 * Reads the store; a line that is not a message (say, cut short by a crash) is skipped with a warning,
 * and the file is ended with a newline so the next message starts on a line of its own.
 */
function loadStore(storeFile: string): CaughtMessage[] {
  let content: string;
  try {
    content = fs.readFileSync(storeFile, 'utf8');
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return [];
    throw new Error(`mail catcher: cannot read ${storeFile}`, { cause: error });
  }
  if (content && !content.endsWith('\n')) fs.appendFileSync(storeFile, '\n', 'utf8');
  const messages: CaughtMessage[] = [];
  content.split('\n').forEach((line, index) => {
    if (!line.trim()) return;
    try {
      const value: unknown = JSON.parse(line);
      if (isCaughtMessage(value)) messages.push(value);
      else console.warn(`mail catcher: skipped line ${index + 1} of ${storeFile} (not a message)`);
    } catch {
      console.warn(`mail catcher: skipped line ${index + 1} of ${storeFile} (not JSON)`);
    }
  });
  return messages;
}

function readData(stream: SMTPServerDataStream): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let kept = 0;
    stream.on('data', (chunk: Buffer) => {
      // Past the limit the stream is drained but not kept; the message is refused at the end.
      if (kept <= MAX_MESSAGE_BYTES) {
        chunks.push(chunk);
        kept += chunk.length;
      }
    });
    stream.on('end', () => resolve(Buffer.concat(chunks)));
    stream.on('error', reject);
  });
}

function smtpError(message: string, responseCode: number): Error {
  return Object.assign(new Error(message), { responseCode });
}

function sendJson(res: http.ServerResponse, status: number, body: unknown): void {
  const payload = JSON.stringify(body);
  res.writeHead(status, {
    'Content-Type': 'application/json; charset=utf-8',
    'Content-Length': Buffer.byteLength(payload),
    'Cache-Control': 'no-store',
  });
  res.end(payload);
}

function sendError(res: http.ServerResponse, status: number, code: string, message: string): void {
  sendJson(res, status, { error: { code, message } });
}

function listen(server: net.Server, port: number, host: string): Promise<void> {
  return new Promise((resolve, reject) => {
    const onError = (error: Error) => reject(error);
    server.once('error', onError);
    server.listen(port, host, () => {
      server.removeListener('error', onError);
      resolve();
    });
  });
}

/** Starts the SMTP server and the HTTP API; resolves once both listen, with the ports they got. */
export async function startMailCatcher({ smtpPort, httpPort, host = '127.0.0.1', storeFile }: MailCatcherOptions): Promise<MailCatcher> {
  if (!isLoopback(host)) throw new Error(`mail catcher: refusing to listen on ${host}; use a loopback address`);
  const messages = loadStore(storeFile);
  fs.mkdirSync(path.dirname(storeFile), { recursive: true });

  // Appends and truncations run one after another, so lines never interleave.
  let writes: Promise<void> = Promise.resolve();
  const write = (task: () => Promise<void>): Promise<void> => {
    const next = writes.then(task);
    writes = next.catch(() => undefined);
    return next;
  };

  const smtp = new SMTPServer({
    secure: false,
    disabledCommands: ['AUTH', 'STARTTLS'],
    authOptional: true,
    size: MAX_MESSAGE_BYTES,
    disableReverseLookup: true,
    logger: false,
    banner: 'Stillmark mail catcher',
    closeTimeout: 2_000,
    onData(stream, session, callback) {
      readData(stream)
        .then(async (raw) => {
          if (stream.sizeExceeded) throw smtpError(`Message is larger than ${MAX_MESSAGE_BYTES} bytes`, 552);
          let parsed: ParsedMail;
          try {
            parsed = await simpleParser(raw);
          } catch (error) {
            console.error('mail catcher: could not parse a message', error);
            throw smtpError('Message could not be read', 554);
          }
          const message = toMessage(parsed, session, stream.byteLength);
          await write(() => fs.promises.appendFile(storeFile, `${JSON.stringify(message)}\n`, 'utf8'));
          messages.push(message);
          callback(null, `Caught as ${message.id}`);
        })
        .catch((error: unknown) => {
          callback(error instanceof Error && 'responseCode' in error ? error : smtpError('Message could not be stored', 451));
        });
    },
  });
  smtp.on('error', (error) => console.error('mail catcher (SMTP):', error.message));

  const api = http.createServer((req, res) => {
    const url = new URL(req.url ?? '/', 'http://catcher.invalid');
    // Only loopback names are answered, so a page on another site cannot reach the API by rebinding DNS.
    const hostHeader = (req.headers.host ?? '').replace(/:\d+$/, '').replace(/^\[(.*)\]$/, '$1');
    if (!isLoopback(hostHeader)) return sendError(res, 421, 'misdirected', 'Use a loopback address.');
    const parts = url.pathname.split('/').filter(Boolean);

    if (parts.length === 1 && parts[0] === 'health') {
      if (req.method !== 'GET') return sendError(res, 405, 'method_not_allowed', 'Use GET.');
      return sendJson(res, 200, { ok: true, messages: messages.length });
    }
    if (parts.length === 1 && parts[0] === 'messages') {
      if (req.method === 'GET') {
        const to = url.searchParams.get('to')?.trim().toLowerCase();
        const found: CaughtMessageSummary[] = [];
        for (let i = messages.length - 1; i >= 0; i -= 1) {
          const m = messages[i]!;
          if (to && ![...m.to, ...m.envelope.to].some((a) => a.toLowerCase() === to)) continue;
          found.push(summary(m));
        }
        return sendJson(res, 200, { messages: found });
      }
      if (req.method === 'DELETE') {
        const deleted = messages.length;
        write(async () => {
          await fs.promises.writeFile(storeFile, '', 'utf8');
          messages.length = 0;
        }).then(
          () => sendJson(res, 200, { deleted }),
          (error: unknown) => {
            console.error('mail catcher: could not clear the store', error);
            sendError(res, 500, 'store_failed', 'The store could not be cleared.');
          },
        );
        return;
      }
      return sendError(res, 405, 'method_not_allowed', 'Use GET or DELETE.');
    }
    if (parts.length === 2 && parts[0] === 'messages') {
      if (req.method !== 'GET') return sendError(res, 405, 'method_not_allowed', 'Use GET.');
      const id = parts[1]!;
      const message = ID_PATTERN.test(id) ? messages.find((m) => m.id === id) : undefined;
      if (!message) return sendError(res, 404, 'not_found', 'No caught message has this id.');
      return sendJson(res, 200, message);
    }
    return sendError(res, 404, 'not_found', 'Try GET /messages, GET /messages/:id, DELETE /messages or GET /health.');
  });

  await listen(smtp.server, smtpPort, host);
  try {
    await listen(api, httpPort, host);
  } catch (error) {
    await new Promise<void>((resolve) => smtp.close(() => resolve()));
    throw error;
  }

  return {
    smtpPort: (smtp.server.address() as net.AddressInfo).port,
    httpPort: (api.address() as net.AddressInfo).port,
    async close() {
      const apiClosed = new Promise<void>((resolve) => api.close(() => resolve()));
      api.closeAllConnections();
      await Promise.all([apiClosed, new Promise<void>((resolve) => smtp.close(() => resolve()))]);
      await writes;
    },
  };
}
