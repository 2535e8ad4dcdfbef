/**
 * Runs the payment fake on its own: `node --import tsx src/fakes/stripe/cli.ts`.
 * STRIPE_FAKE_PORT (12111), STRIPE_FAKE_STATE (<STILLMARK_DATA_DIR or cwd>/db/stripe-fake.json),
 * STRIPE_WEBHOOK_URL (http://127.0.0.1:4321/api/stripe/webhook), STRIPE_WEBHOOK_SECRET
 * (whsec_stillmark_local_demo) and STRIPE_FAKE_PUBLIC_URL (http://127.0.0.1:<port>) set where it
 * listens, what it keeps, where events go and how pay-page links are written.
 */
import path from 'node:path';
import { startStripeFake } from './server';

function port(name: string, fallback: number): number {
  const raw = process.env[name];
  if (raw === undefined || raw === '') return fallback;
  const value = Number(raw);
  if (!Number.isInteger(value) || value < 0 || value > 65535) {
    console.error(`payment fake: ${name} must be a port number (0–65535), not "${raw}"`);
    process.exit(1);
  }
  return value;
}

const listenPort = port('STRIPE_FAKE_PORT', 12111);
const stateFile = path.resolve(
  process.env.STRIPE_FAKE_STATE || path.join(process.env.STILLMARK_DATA_DIR || process.cwd(), 'db', 'stripe-fake.json'),
);
const webhookUrl = process.env.STRIPE_WEBHOOK_URL || 'http://127.0.0.1:4321/api/stripe/webhook';
const webhookSecret = process.env.STRIPE_WEBHOOK_SECRET || 'whsec_stillmark_local_demo';
const publicUrl = process.env.STRIPE_FAKE_PUBLIC_URL || undefined;

try {
  const fake = await startStripeFake({ port: listenPort, stateFile, webhookUrl, webhookSecret, publicUrl });
  console.log(
    `Payment fake: API at ${fake.url}/v1, event log at ${fake.url}/, webhooks to ${webhookUrl}, kept in ${stateFile}`,
  );
  let closing = false;
  for (const signal of ['SIGINT', 'SIGTERM'] as const) {
    process.on(signal, () => {
      if (closing) return;
      closing = true;
      fake.close().then(
        () => process.exit(0),
        (error: unknown) => {
          console.error('payment fake: did not close cleanly', error);
          process.exit(1);
        },
      );
    });
  }
} catch (error) {
  console.error(`payment fake: could not start: ${error instanceof Error ? error.message : String(error)}`);
  process.exit(1);
}
