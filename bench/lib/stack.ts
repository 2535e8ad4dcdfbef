/**
 * The system under test, as `npm start` runs it but on the bench's own ports and in a fresh temporary
 * data folder: built app (bench/.dist), migrations and demo seed, the mail catcher and the Stripe fake.
 */
import type { ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { assertPortFree, log, REPO, runChild, startChild, stopChild, waitForUrl } from './util';

const base = Number(process.env.BENCH_PORTS ?? 0);
export const PORTS = {
  app: base || 4461,
  bare: base ? base + 1 : 4462,
  floorFake: base ? base + 2 : 4463,
  smtp: base ? base + 10 : 2661,
  mailApi: base ? base + 11 : 2662,
  stripe: base ? base + 20 : 12261,
};

export interface Stack {
  workDir: string;
  dataDir: string;
  appUrl: string;
  mailApi: string;
  stripeUrl: string;
  stripeStateFile: string;
  webhookSecret: string;
  dbFile: string;
  env: NodeJS.ProcessEnv;
  app: ChildProcess;
  stop(): Promise<void>;
  timings: { buildS: number; seedS: number };
}

export async function startStack(): Promise<Stack> {
  for (const port of Object.values(PORTS)) await assertPortFree(port);
  const workDir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillmark-bench-'));
  const dataDir = path.join(workDir, 'data');
  fs.mkdirSync(dataDir);
  const appUrl = `http://127.0.0.1:${PORTS.app}`;
  const mailApi = `http://127.0.0.1:${PORTS.mailApi}`;
  const stripeUrl = `http://127.0.0.1:${PORTS.stripe}`;
  const webhookSecret = `whsec_${randomBytes(16).toString('hex')}`;
  const stripeStateFile = path.join(workDir, 'stripe-fake.json');
  const env: NodeJS.ProcessEnv = {
    ...process.env,
    ASTRO_TELEMETRY_DISABLED: '1',
    STILLMARK_DATA_DIR: dataDir,
    PUBLIC_ORIGIN: appUrl,
    AUTH_SECRET: randomBytes(32).toString('hex'),
    SMTP_URL: `smtp://127.0.0.1:${PORTS.smtp}`,
    MAIL_CATCHER_URL: mailApi,
    STRIPE_API_BASE: stripeUrl,
    STRIPE_WEBHOOK_SECRET: webhookSecret,
    STRIPE_SECRET_KEY: 'sk_test_bench',
  };

  // The build and the seed do not depend on each other: run them side by side. For trying the bench
  // itself only: BENCH_SKIP_BUILD=1 reuses bench/.dist, BENCH_SEEDED_DATA=<folder> copies a seeded folder.
  const reuseBuild = process.env.BENCH_SKIP_BUILD === '1' && fs.existsSync(path.join(REPO, 'bench/.dist/server/entry.mjs'));
  const seeded = process.env.BENCH_SEEDED_DATA;
  if (seeded) fs.cpSync(seeded, dataDir, { recursive: true });
  log(`${reuseBuild ? 'reusing bench/.dist' : 'building the app into bench/.dist'}; ${seeded ? `data copied from ${seeded}` : 'seeding a fresh data folder'}`);
  const started = Date.now();
  const timings = { buildS: 0, seedS: 0 };
  await Promise.all([
    reuseBuild ? null : runChild('build', process.execPath, ['bench/build.mjs'], env).then(() => (timings.buildS = Math.round((Date.now() - started) / 1000))),
    runChild('seed', process.execPath, ['--import', 'tsx', 'scripts/seed.ts'], env).then(() => (timings.seedS = Math.round((Date.now() - started) / 1000))),
  ]);
  log(`built in ${timings.buildS} s, seeded in ${timings.seedS} s`);

  const catcher = startChild('mail-catcher', process.execPath, ['--import', 'tsx', 'src/fakes/mail/cli.ts'], {
    ...env,
    MAIL_CATCHER_SMTP_PORT: String(PORTS.smtp),
    MAIL_CATCHER_HTTP_PORT: String(PORTS.mailApi),
    MAIL_CATCHER_STORE: path.join(workDir, 'mail-catcher.jsonl'),
  });
  const fake = startChild('stripe-fake', process.execPath, ['--import', 'tsx', 'src/fakes/stripe/cli.ts'], {
    ...env,
    STRIPE_FAKE_PORT: String(PORTS.stripe),
    STRIPE_FAKE_STATE: stripeStateFile,
    STRIPE_WEBHOOK_URL: `${appUrl}/api/stripe/webhook`,
    STRIPE_WEBHOOK_SECRET: webhookSecret,
    STRIPE_FAKE_PUBLIC_URL: stripeUrl,
  });
  const app = startChild('app', process.execPath, [path.join(REPO, 'bench/.dist/server/entry.mjs')], {
    ...env,
    HOST: '127.0.0.1',
    PORT: String(PORTS.app),
  });
  await Promise.all([
    waitForUrl(`${mailApi}/health`, 20_000, catcher),
    waitForUrl(`${stripeUrl}/`, 20_000, fake),
    waitForUrl(`${appUrl}/`, 30_000, app),
  ]);
  log(`app at ${appUrl}, mail catcher at ${mailApi}, Stripe fake at ${stripeUrl}; data in ${dataDir}`);
  return {
    workDir,
    dataDir,
    appUrl,
    mailApi,
    stripeUrl,
    stripeStateFile,
    webhookSecret,
    dbFile: path.join(dataDir, 'db', 'stillmark.sqlite'),
    env,
    app,
    timings,
    async stop() {
      await stopChild(app);
      await stopChild(fake);
      await stopChild(catcher);
    },
  };
}
