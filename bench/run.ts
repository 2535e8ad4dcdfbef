/**
 * `npm run bench`: builds the app into bench/.dist, starts it with its fakes on loopback in a fresh
 * temporary data folder (migrations + demo seed), measures pages, throughput, image ingest, checkout
 * latency and edition contention, each beside a floor measured in the same run, and writes
 * bench/results.json and bench/RESULTS.md. Nothing here is a test: it reports, it does not assert.
 * BENCH_SKIP=pages,load,ingest,checkout,editions leaves parts out (for trying the bench itself).
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { measureCheckout, measureEditions, realisticQuoteBody } from './lib/checkout';
import { ReadDb } from './lib/db';
import { magickCommand, measureIngest } from './lib/ingest';
import { CONNECTIONS, DURATION_S, measureLoad } from './lib/load';
import { barePageFrom, measurePages } from './lib/pages';
import { writeReport, type BenchResults } from './lib/report';
import { PORTS, startStack, type Stack } from './lib/stack';
import { log, REPO, round, startChild, stopAllChildren, stopChild, waitForUrl } from './lib/util';

const skip = new Set((process.env.BENCH_SKIP ?? '').split(',').filter(Boolean));
const CHECKOUT_ORDERS = Number(process.env.BENCH_ORDERS ?? 200);

function ensureImageMagick(): void {
  if (magickCommand()) return;
  if (process.getuid?.() !== 0) {
    log('ImageMagick is missing and this is not root: its comparison will be skipped (apt-get install imagemagick)');
    return;
  }
  log('installing ImageMagick (Debian package, no recommends)');
  const install = () => execFileSync('apt-get', ['install', '-y', '--no-install-recommends', 'imagemagick'], { stdio: 'ignore', env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' } });
  try {
    install();
  } catch {
    execFileSync('apt-get', ['update'], { stdio: 'ignore' });
    install();
  }
}

function version(pkg: string): string {
  try {
    return (JSON.parse(fs.readFileSync(path.join(REPO, 'node_modules', pkg, 'package.json'), 'utf8')) as { version: string }).version;
  } catch {
    return 'not installed';
  }
}

function commandVersion(command: string, args: string[]): string {
  try {
    return execFileSync(command, args, { encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] }).split('\n')[0]!.trim();
  } catch {
    return 'not available';
  }
}

function machine() {
  const cpus = os.cpus();
  const im = magickCommand();
  return {
    cpu: cpus[0]?.model ?? 'unknown',
    cores: cpus.length,
    memoryGiB: round(os.totalmem() / 2 ** 30, 1),
    os: `${os.type()} ${os.release()}`,
    versions: {
      node: process.version,
      chromium: commandVersion('/usr/bin/chromium', ['--version']),
      imagemagick: im ? commandVersion(im.convert[0]!, [...im.convert.slice(1), '-version']) : 'not installed',
      libvips: sharp.versions.vips,
      packages: Object.fromEntries(
        ['astro', '@astrojs/node', 'react', 'react-dom', 'sharp', 'sqlite3', 'sequelize', 'zod', 'nanostores', 'better-auth', 'stripe', 'lighthouse', 'autocannon'].map((p) => [p, version(p)]),
      ),
    },
  };
}

async function main(): Promise<void> {
  const began = Date.now();
  const loadStart = os.loadavg();
  ensureImageMagick();
  const results: BenchResults = {
    date: new Date().toISOString(),
    machine: { ...machine(), loadAverageAtStart: loadStart.map((n) => round(n, 2)), loadAverageAtEnd: [] },
    settings: { connections: CONNECTIONS, durationS: DURATION_S, checkoutOrders: CHECKOUT_ORDERS, ports: PORTS },
    setup: { buildS: 0, seedS: 0 },
    pages: null,
    load: null,
    ingest: null,
    checkout: null,
    editions: null,
    durationS: 0,
  };

  let stack: Stack | undefined;
  let db: ReadDb | undefined;
  try {
    stack = await startStack();
    results.setup = stack.timings;
    db = new ReadDb(stack.dbFile);
    const origin = stack.appUrl;

    // What the pages are, and the bodies the bare server will return.
    const homeHtml = await (await fetch(`${origin}/`)).text();
    const seriesSlug = /href="\/series\/([a-z0-9-]+)"/.exec(homeHtml)?.[1];
    const workSlug = /href="\/works\/([a-z0-9-]+)"/.exec(homeHtml)?.[1];
    if (!seriesSlug || !workSlug) throw new Error('the home page links to no series or no work');
    const quoteBody = await realisticQuoteBody(origin, db);
    const bodiesDir = path.join(stack.workDir, 'bodies');
    fs.mkdirSync(bodiesDir);
    const keep = async (name: string, res: Response) => {
      if (!res.ok) throw new Error(`${name} answered ${res.status}`);
      const body = Buffer.from(await res.arrayBuffer());
      fs.writeFileSync(path.join(bodiesDir, name), body);
      fs.writeFileSync(path.join(bodiesDir, `${name}.type`), res.headers.get('content-type') ?? 'application/octet-stream');
      return body.length;
    };
    const sizes = {
      home: await keep('home', await fetch(`${origin}/`)),
      work: await keep('work', await fetch(`${origin}/works/${workSlug}`)),
      quote: await keep('quote', await fetch(`${origin}/api/cart/quote`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: quoteBody })),
    };
    const barePage = path.join(stack.workDir, 'bare-page.html');
    fs.writeFileSync(barePage, barePageFrom(homeHtml));
    const bareUrl = `http://127.0.0.1:${PORTS.bare}`;
    const bare = startChild('bare-server', process.execPath, ['--import', 'tsx', 'bench/bare-server.ts'], {
      ...process.env,
      BARE_PORT: String(PORTS.bare),
      BARE_BODIES_DIR: bodiesDir,
      BARE_PAGE_FILE: barePage,
      BARE_SMTP_URL: stack.env.SMTP_URL,
    });
    await waitForUrl(`${bareUrl}/health`, 20_000, bare);

    if (!skip.has('pages')) {
      results.pages = await measurePages(
        [
          { name: 'home', url: `${origin}/` },
          { name: 'series', url: `${origin}/series/${seriesSlug}` },
          { name: 'work', url: `${origin}/works/${workSlug}` },
        ],
        `${bareUrl}/page`,
        path.join(stack.workDir, 'lighthouse'),
      );
    }

    if (!skip.has('load')) {
      results.load = await measureLoad([
        { name: 'home', method: 'GET', appUrl: `${origin}/`, bareUrl: `${bareUrl}/body/home`, bodyBytes: sizes.home },
        { name: `work (/works/${workSlug})`, method: 'GET', appUrl: `${origin}/works/${workSlug}`, bareUrl: `${bareUrl}/body/work`, bodyBytes: sizes.work },
        { name: 'cart quote (POST /api/cart/quote)', method: 'POST', appUrl: `${origin}/api/cart/quote`, bareUrl: `${bareUrl}/body/quote`, body: quoteBody, bodyBytes: sizes.quote },
      ]);
    }

    if (!skip.has('ingest')) {
      const watermark = (await db.one<{ watermark_text: string }>('SELECT watermark_text FROM shop_settings WHERE id = 1'))?.watermark_text ?? 'Stillmark';
      results.ingest = await measureIngest(stack.workDir, stack.env, watermark);
    }

    if (!skip.has('checkout')) {
      const floorState = path.join(stack.workDir, 'stripe-floor.json');
      const floorFake = startChild('stripe-fake-floor', process.execPath, ['--import', 'tsx', 'src/fakes/stripe/cli.ts'], {
        ...process.env,
        STRIPE_FAKE_PORT: String(PORTS.floorFake),
        STRIPE_FAKE_STATE: floorState,
        STRIPE_WEBHOOK_URL: `${bareUrl}/webhook`,
        STRIPE_WEBHOOK_SECRET: stack.webhookSecret,
      });
      const floorUrl = `http://127.0.0.1:${PORTS.floorFake}`;
      await waitForUrl(`${floorUrl}/`, 20_000, floorFake);
      results.checkout = await measureCheckout({
        origin, mailApi: stack.mailApi, stateFile: stack.stripeStateFile, floorUrl, floorStateFile: floorState, db, orders: CHECKOUT_ORDERS,
      });
      await stopChild(floorFake);
    }

    if (!skip.has('editions')) {
      results.editions = await measureEditions({ origin, mailApi: stack.mailApi, db, attempts: 100, buyers: 20, left: 5 });
    }
    await stopChild(bare);
  } finally {
    await db?.close();
    await stack?.stop();
    await stopAllChildren();
    if (stack && process.env.BENCH_KEEP !== '1') fs.rmSync(stack.workDir, { recursive: true, force: true });
  }
  results.machine.loadAverageAtEnd = os.loadavg().map((n) => round(n, 2));
  results.durationS = round((Date.now() - began) / 1000);
  writeReport(results);
  log(`done in ${results.durationS} s: bench/results.json and bench/RESULTS.md`);
}

main().catch(async (error: unknown) => {
  console.error(error);
  await stopAllChildren();
  process.exit(1);
});
