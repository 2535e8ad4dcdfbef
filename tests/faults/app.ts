/**
 * The app's own route handlers behind a plain node:http server: a process the fault tests can SIGKILL in
 * the middle of something and start again on the same port. It starts the same background work the
 * middleware starts on a real server's first request (mail outbox retries, upload sweep). Sign-in is not
 * what these tests are about: the header `X-Test-User: buyer | photographer` stands in for a session.
 *
 * Env: STILLMARK_DATA_DIR, PORT, PUBLIC_ORIGIN, SMTP_URL, STRIPE_API_BASE, STRIPE_WEBHOOK_SECRET,
 * STRIPE_SECRET_KEY; FAULT_MAIL_RETRY_MS (first wait of the outbox, default 30 s; the longest is 4 × that).
 * Run: node --import tsx tests/faults/app.ts
 */
import http from 'node:http';
import { Readable } from 'node:stream';
import type { APIContext } from 'astro';
import { startBackgroundWork } from '../../src/lib/server/background';
import { mailOutboxStatus } from '../../src/lib/server/mail';
import { POST as webhook } from '../../src/pages/api/stripe/webhook';
import { POST as upload } from '../../src/pages/api/studio/uploads';
import { POST as checkout } from '../../src/pages/api/account/checkout';
import { TEST_USERS } from './users';


type Handler = (context: APIContext) => Response | Promise<Response>;
const routes: Record<string, Handler> = {
  'POST /api/stripe/webhook': webhook as Handler,
  'POST /api/studio/uploads': upload as Handler,
  'POST /api/account/checkout': checkout as Handler,
};

function toRequest(req: http.IncomingMessage, origin: string): Request {
  const headers = new Headers();
  for (const [name, value] of Object.entries(req.headers)) {
    if (typeof value === 'string') headers.set(name, value);
    else if (Array.isArray(value)) for (const v of value) headers.append(name, v);
  }
  const hasBody = req.method !== 'GET' && req.method !== 'HEAD';
  return new Request(new URL(req.url ?? '/', origin), {
    method: req.method,
    headers,
    // Streamed, as the node adapter hands it over.
    ...(hasBody ? { body: Readable.toWeb(req) as ReadableStream<Uint8Array>, duplex: 'half' } : {}),
  } as RequestInit);
}

async function answer(req: http.IncomingMessage, res: http.ServerResponse, origin: string): Promise<void> {
  const url = new URL(req.url ?? '/', origin);
  let response: Response;
  if (req.method === 'GET' && url.pathname === '/health') {
    response = Response.json({ ok: true, pid: process.pid });
  } else if (req.method === 'GET' && url.pathname === '/outbox') {
    response = Response.json(await mailOutboxStatus());
  } else {
    const route = routes[`${req.method} ${url.pathname}`];
    if (!route) {
      response = new Response('not found', { status: 404 });
    } else {
      const user = TEST_USERS[String(req.headers['x-test-user'] ?? '') as keyof typeof TEST_USERS] ?? null;
      response = await route({ request: toRequest(req, origin), locals: { user, session: null }, params: {}, url } as unknown as APIContext);
    }
  }
  const body = Buffer.from(await response.arrayBuffer());
  res.writeHead(response.status, Object.fromEntries(response.headers));
  res.end(body);
}

const port = Number(process.env.PORT);
const origin = `http://127.0.0.1:${port}`;
const retry = Number(process.env.FAULT_MAIL_RETRY_MS);
startBackgroundWork({ mail: retry ? { firstRetryMs: retry, maxRetryMs: 4 * retry, pollMs: retry } : {} });
const server = http.createServer((req, res) => {
  answer(req, res, origin).catch((error: unknown) => {
    console.error('fault app:', error);
    if (!res.headersSent) res.writeHead(500, { 'content-type': 'text/plain' });
    res.end('internal error');
  });
});
server.listen(port, '127.0.0.1', () => console.log(`listening on ${origin}`));
