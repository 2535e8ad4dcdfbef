// One command for the whole shop: migrate, seed the demo, build, serve on http://localhost:4321.
// Unless SMTP_URL names a real relay, the local mail catcher runs beside the server and catches all mail.
import { spawn } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';

process.env.ASTRO_TELEMETRY_DISABLED = '1';
const port = process.env.PORT ?? '4321';
const host = process.env.HOST ?? '127.0.0.1';
process.env.PUBLIC_ORIGIN ??= `http://localhost:${port}`;

/** A random signing secret made once per data folder and kept beside the database (never committed). */
function authSecret() {
  const file = path.join(process.env.STILLMARK_DATA_DIR ?? process.cwd(), 'db', '.auth-secret');
  if (existsSync(file)) return readFileSync(file, 'utf8').trim();
  mkdirSync(path.dirname(file), { recursive: true });
  const secret = randomBytes(32).toString('base64url');
  writeFileSync(file, `${secret}\n`, { mode: 0o600 });
  return secret;
}
process.env.AUTH_SECRET ??= authSecret();

const DEMO_ACCOUNTS = [
  ['admin', 'manager@kestrel-studio.example', 'dispatch-demo-2026'],
  ['photographer', 'orla@kestrel-studio.example', 'studio-demo-2026'],
  ['buyer', 'tom@picture-desk.example', 'gallery-demo-2026'],
];

function run(command, args, extraEnv = {}) {
  return new Promise((resolve, reject) => {
    const child = spawn(command, args, { stdio: 'inherit', env: { ...process.env, ...extraEnv } });
    child.on('exit', (code, signal) => (code === 0 ? resolve() : reject(new Error(`${command} ${args.join(' ')} exited with ${code ?? signal}`))));
  });
}

let catcher;
let stopping = false;

/** Starts the mail catcher in the background; resolves with the server's mail settings once it answers. */
async function startMailCatcher() {
  const smtpPort = process.env.MAIL_CATCHER_SMTP_PORT || '2525';
  const httpPort = process.env.MAIL_CATCHER_HTTP_PORT || '2526';
  const apiUrl = `http://127.0.0.1:${httpPort}`;
  catcher = spawn(process.execPath, ['--import', 'tsx', 'src/fakes/mail/cli.ts'], { stdio: 'inherit', env: { ...process.env } });
  let exited = false;
  catcher.on('exit', (code, signal) => {
    exited = true;
    if (!stopping) console.error(`The mail catcher stopped (${code ?? signal}); mail from the shop will fail until it runs again.`);
  });
  const deadline = Date.now() + 15_000;
  while (Date.now() < deadline) {
    try {
      if ((await fetch(`${apiUrl}/health`, { signal: AbortSignal.timeout(1_000) })).ok) break;
    } catch {
      // not listening yet
    }
    if (exited) break;
    await new Promise((r) => setTimeout(r, 200));
  }
  return { SMTP_URL: `smtp://127.0.0.1:${smtpPort}`, MAIL_CATCHER_URL: apiUrl };
}

let stripeFake;

/** Starts the local Stripe fake unless STRIPE_API_BASE names a real service; resolves with the server's Stripe settings. */
async function startStripeFake() {
  const fakePort = process.env.STRIPE_FAKE_PORT || '12111';
  const apiBase = `http://127.0.0.1:${fakePort}`;
  const secret = process.env.STRIPE_WEBHOOK_SECRET || 'whsec_stillmark_local_demo';
  stripeFake = spawn(process.execPath, ['--import', 'tsx', 'src/fakes/stripe/cli.ts'], {
    stdio: 'inherit',
    env: { ...process.env, STRIPE_FAKE_PORT: fakePort, STRIPE_WEBHOOK_URL: `http://127.0.0.1:${port}/api/stripe/webhook`, STRIPE_WEBHOOK_SECRET: secret },
  });
  const deadline = Date.now() + 15_000;
  while (Date.now() < deadline) {
    try {
      if ((await fetch(`${apiBase}/`, { signal: AbortSignal.timeout(1_000) })).ok) break;
    } catch {
      // not listening yet
    }
    if (stripeFake.exitCode !== null) break;
    await new Promise((r) => setTimeout(r, 200));
  }
  return { STRIPE_API_BASE: apiBase, STRIPE_WEBHOOK_SECRET: secret, STRIPE_SECRET_KEY: process.env.STRIPE_SECRET_KEY || 'sk_test_stillmark_local' };
}

function stopStripeFake() {
  if (stripeFake && stripeFake.exitCode === null && stripeFake.signalCode === null) stripeFake.kill('SIGTERM');
}

function stopMailCatcher() {
  if (!catcher || catcher.exitCode !== null || catcher.signalCode !== null) return Promise.resolve();
  stopping = true;
  return new Promise((resolve) => {
    const timer = setTimeout(resolve, 3_000);
    catcher.once('exit', () => {
      clearTimeout(timer);
      resolve();
    });
    catcher.kill('SIGTERM');
  });
}

try {
  await run(process.execPath, ['--import', 'tsx', 'scripts/seed.ts']);
  if (process.env.SKIP_BUILD !== '1' || !existsSync('dist/server/entry.mjs')) {
    await run(process.execPath, ['node_modules/astro/astro.js', 'build']);
  }
  const mailEnv = process.env.SMTP_URL ? {} : await startMailCatcher();
  const stripeEnv = process.env.STRIPE_API_BASE ? {} : await startStripeFake();
  if (process.env.STRIPE_API_BASE) console.log(`Payments go to ${process.env.STRIPE_API_BASE}; the local Stripe fake is not started.`);
  if (process.env.SMTP_URL) console.log('Mail goes to the relay in SMTP_URL; the local mail catcher is not started.');
  console.log(`\nStillmark is running at ${process.env.PUBLIC_ORIGIN}`);
  console.log('Demo accounts (role, e-mail, password):');
  for (const [role, email, password] of DEMO_ACCOUNTS) console.log(`  ${role.padEnd(13)} ${email.padEnd(32)} ${password}`);
  if (mailEnv.MAIL_CATCHER_URL) console.log('Mail the shop sends is caught locally: read it in Dispatch → Mail (sign in as admin).');
  if (stripeEnv.STRIPE_API_BASE) console.log(`Payments use the local Stripe fake at ${stripeEnv.STRIPE_API_BASE} (card 4242 4242 4242 4242 pays; 4000 0000 0000 0002 is declined).`);
  console.log('');
  // React and the server bundle take their production paths only when NODE_ENV says so.
  const server = spawn(process.execPath, ['dist/server/entry.mjs'], { stdio: 'inherit', env: { NODE_ENV: 'production', ...process.env, HOST: host, PORT: port, ...mailEnv, ...stripeEnv } });
  for (const signal of ['SIGINT', 'SIGTERM']) process.on(signal, () => server.kill(signal));
  server.on('exit', (code) => {
    stopStripeFake();
    stopMailCatcher().then(() => process.exit(code ?? 0));
  });
} catch (error) {
  console.error(error instanceof Error ? error.message : error);
  stopStripeFake();
  await stopMailCatcher();
  process.exit(1);
}
