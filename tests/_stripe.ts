/** Shared test helper: a loopback HTTP server that hands the Stripe fake's webhook POSTs to our endpoint. */
import http from 'node:http';
import type { APIContext } from 'astro';
import { POST as webhook } from '~/pages/api/stripe/webhook';

/** Forwards each POST to the webhook route exactly as the node adapter would hand it over: raw body, every header. */
export function startWebhookReceiver(): Promise<{ url: string; server: http.Server; close: () => void }> {
  const server = http.createServer(async (req, res) => {
    const chunks: Buffer[] = [];
    for await (const c of req) chunks.push(c as Buffer);
    const request = new Request('http://localhost:4321/api/stripe/webhook', {
      method: 'POST',
      headers: Object.entries(req.headers).flatMap(([k, v]) => (typeof v === 'string' ? [[k, v] as [string, string]] : [])),
      body: Buffer.concat(chunks),
    });
    const response = await webhook({ request } as APIContext);
    res.writeHead(response.status, { 'Content-Type': 'application/json' });
    res.end(await response.text());
  });
  return new Promise((resolve) => server.listen(0, '127.0.0.1', () => resolve({
    url: `http://127.0.0.1:${(server.address() as { port: number }).port}/`,
    server,
    close: () => {
      server.closeAllConnections();
      server.close();
    },
  })));
}
