/**
 * The bench's practical ceiling, run as its own process: a bare `node:http` server that answers from
 * memory. `GET|POST /body/<name>` returns the bytes of `<bodies dir>/<name>` (the app's own response for
 * that route, read once at start) with its content type; `GET /page` is a plain HTML page with no
 * script, stylesheet or image (the Lighthouse floor); `POST /webhook` takes a payment event and, for
 * `checkout.session.completed`, sends one mail to the catcher before answering (the checkout floor).
 * Started and stopped by `bench/run.ts`; never used by the app.
 */
import fs from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import { createTransport } from 'nodemailer';

const port = Number(process.env.BARE_PORT ?? 4462);
const bodiesDir = process.env.BARE_BODIES_DIR ?? '';
const smtpUrl = process.env.BARE_SMTP_URL ?? 'smtp://127.0.0.1:2661';

const bodies = new Map<string, { body: Buffer; type: string }>();
if (bodiesDir) {
  for (const file of fs.readdirSync(bodiesDir)) {
    if (file.endsWith('.type')) continue;
    const type = fs.readFileSync(path.join(bodiesDir, `${file}.type`), 'utf8').trim();
    bodies.set(file, { body: fs.readFileSync(path.join(bodiesDir, file)), type });
  }
}
const page = Buffer.from(fs.readFileSync(process.env.BARE_PAGE_FILE ?? '/dev/null'));
// A pooled transport: the floor keeps its SMTP connection open between messages.
const mail = createTransport({ url: smtpUrl, pool: true, connectionTimeout: 10_000, greetingTimeout: 10_000, socketTimeout: 30_000 });

function drain(req: http.IncomingMessage): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    req.on('data', (c: Buffer) => chunks.push(c));
    req.on('end', () => resolve(Buffer.concat(chunks)));
    req.on('error', reject);
  });
}

const server = http.createServer((req, res) => {
  const url = req.url ?? '/';
  if (url.startsWith('/body/')) {
    const found = bodies.get(url.slice('/body/'.length));
    if (!found) return void res.writeHead(404).end();
    // Read the request body first, as the app does for a POST.
    void drain(req).then(() => res.writeHead(200, { 'content-type': found.type, 'content-length': found.body.length }).end(found.body));
    return;
  }
  if (url === '/page') {
    res.writeHead(200, { 'content-type': 'text/html; charset=utf-8', 'content-length': page.length }).end(page);
    return;
  }
  if (url === '/webhook' && req.method === 'POST') {
    void drain(req)
      .then(async (raw) => {
        const event = JSON.parse(raw.toString('utf8')) as { type: string; data: { object: { id: string; customer_email?: string | null } } };
        if (event.type === 'checkout.session.completed') {
          const session = event.data.object;
          await mail.sendMail({
            from: 'Bench <bench@stillmark.local>',
            to: session.customer_email ?? 'buyer@bench.example',
            subject: `bench floor receipt ${session.id}`,
            text: `Session ${session.id} is paid.`,
          });
        }
        res.writeHead(200, { 'content-type': 'application/json' }).end('{"received":true}');
      })
      .catch((error: unknown) => {
        console.error('bare server webhook:', error);
        res.writeHead(500).end();
      });
    return;
  }
  if (url === '/health') return void res.writeHead(200).end('ok');
  res.writeHead(404).end();
});

server.listen(port, '127.0.0.1', () => console.log(`bare server on 127.0.0.1:${port}`));
for (const signal of ['SIGINT', 'SIGTERM'] as const) {
  process.on(signal, () => {
    mail.close();
    server.close(() => process.exit(0));
    server.closeAllConnections();
  });
}
