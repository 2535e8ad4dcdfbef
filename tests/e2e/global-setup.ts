/**
 * Browser tests run against the built app (`astro build` first) with the demo shop seeded into a
 * temporary data folder, exactly as `npm start` serves it, and its mail caught by the local catcher.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import type { TestProject } from 'vitest/node';
import { startMailCatcher, type MailCatcher } from '../../src/fakes/mail/catcher';
import { startStripeFake, type StripeFake } from '../../src/fakes/stripe/server';

declare module 'vitest' {
  export interface ProvidedContext { baseUrl: string; dataDir: string; stripeFakeUrl: string; mailCatcherUrl: string }
}

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = net.createServer();
    server.listen(0, '127.0.0.1', () => {
      const { port } = server.address() as net.AddressInfo;
      server.close(() => resolve(port));
    });
    server.on('error', reject);
  });
}

async function waitFor(url: string, timeoutMs: number): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    try {
      const res = await fetch(url);
      if (res.ok) return;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`server did not answer at ${url}`);
}

let server: ChildProcess | undefined;
let catcher: MailCatcher | undefined;
let stripeFake: StripeFake | undefined;

export default async function setup(project: TestProject) {
  // E2E_SERVER_ENTRY runs another build (e.g. one made with --outDir) instead of dist/.
  const serverEntry = process.env.E2E_SERVER_ENTRY ?? 'dist/server/entry.mjs';
  if (!fs.existsSync(serverEntry)) throw new Error('Build the app first: npm run build');
  const dataDir = process.env.E2E_DATA_DIR ?? fs.mkdtempSync(path.join(os.tmpdir(), 'stillmark-e2e-'));
  const port = await freePort();
  const baseUrl = `http://127.0.0.1:${port}`;
  const env = {
    ...process.env,
    STILLMARK_DATA_DIR: dataDir,
    ASTRO_TELEMETRY_DISABLED: '1',
    PUBLIC_ORIGIN: baseUrl,
    AUTH_SECRET: randomBytes(32).toString('hex'),
  };
  const seeded = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/seed.ts'], { env, stdio: 'inherit' });
  if (seeded.status !== 0) throw new Error('seeding the demo shop failed');
  const mailDir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillmark-e2e-mail-'));
  catcher = await startMailCatcher({ smtpPort: 0, httpPort: 0, storeFile: path.join(mailDir, 'mail-catcher.jsonl') });
  const mailCatcherUrl = `http://127.0.0.1:${catcher.httpPort}`;
  const stripeSecret = `whsec_${randomBytes(16).toString('hex')}`;
  stripeFake = await startStripeFake({ port: 0, stateFile: path.join(mailDir, 'stripe-fake.json'), webhookUrl: `${baseUrl}/api/stripe/webhook`, webhookSecret: stripeSecret });
  server = spawn(process.execPath, [serverEntry], {
    env: { ...env, HOST: '127.0.0.1', PORT: String(port), SMTP_URL: `smtp://127.0.0.1:${catcher.smtpPort}`, MAIL_CATCHER_URL: mailCatcherUrl,
      STRIPE_API_BASE: stripeFake.url, STRIPE_WEBHOOK_SECRET: stripeSecret, STRIPE_SECRET_KEY: 'sk_test_e2e' },
    stdio: ['ignore', 'inherit', 'inherit'],
  });
  try {
    await waitFor(`${baseUrl}/`, 30_000);
  } catch (error) {
    server.kill('SIGTERM');
    await catcher.close();
    throw error;
  }
  project.provide('baseUrl', baseUrl);
  project.provide('dataDir', dataDir);
  project.provide('mailCatcherUrl', mailCatcherUrl);
  project.provide('stripeFakeUrl', stripeFake.url);
  return async () => {
    server?.kill('SIGTERM');
    await stripeFake?.close();
    await catcher?.close();
    fs.rmSync(mailDir, { recursive: true, force: true });
    if (!process.env.E2E_DATA_DIR) fs.rmSync(dataDir, { recursive: true, force: true });
  };
}
