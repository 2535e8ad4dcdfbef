/**
 * Pages in Chromium: Lighthouse 12 (mobile, simulated throttling) on Debian's Chromium, plus what each
 * page's islands would load if they all hydrated, measured from the built files.
 */
import fs from 'node:fs';
import path from 'node:path';
import { gzipSize, log, REPO, round, runChild } from './util';

const CHROME_FLAGS = '--headless=new --no-sandbox --disable-gpu --disable-background-networking --disable-component-update --disable-sync --no-first-run --disable-dev-shm-usage';

export interface PageResult {
  name: string;
  url: string;
  /** Every run's score; the figures below are from the run with the median score. */
  runScores: number[];
  score: number;
  lcpMs: number;
  fcpMs: number;
  tbtMs: number;
  cls: number;
  speedIndexMs: number;
  /** Render-blocking requests Lighthouse found (URL and type). */
  renderBlocking: { url: string; type: string }[];
  /** Scripts the page loaded during the Lighthouse run, with their gzip size. */
  loadedScripts: { url: string; bytes: number; gzip: number }[];
  loadedJsGzip: number;
  /** Every chunk the page's islands import (statically), as if all of them hydrated. */
  islandChunks: { file: string; gzip: number }[];
  islandJsGzip: number;
  islands: string[];
  stylesheets: string[];
  fontPreloads: string[];
  htmlBytes: number;
}

interface Lhr {
  categories: { performance: { score: number | null } };
  audits: Record<string, { numericValue?: number; details?: { items?: Record<string, unknown>[] } }>;
  runtimeError?: { code: string; message: string };
}

async function lighthouse(url: string, outFile: string): Promise<Lhr> {
  await runChild(`lighthouse-${path.basename(outFile, '.json')}`, process.execPath, [
    path.join(REPO, 'node_modules/lighthouse/cli/index.js'),
    url,
    '--quiet',
    '--only-categories=performance',
    '--output=json',
    `--output-path=${outFile}`,
    `--chrome-flags=${CHROME_FLAGS}`,
    '--max-wait-for-load=60000',
  ], { ...process.env, CHROME_PATH: '/usr/bin/chromium' });
  const lhr = JSON.parse(fs.readFileSync(outFile, 'utf8')) as Lhr;
  if (lhr.runtimeError) throw new Error(`Lighthouse on ${url}: ${lhr.runtimeError.code} ${lhr.runtimeError.message}`);
  return lhr;
}

/** Static and dynamic imports of a built chunk, as file names in the same folder. */
function importsOf(code: string): { staticDeps: string[]; dynamicDeps: string[] } {
  const staticDeps = new Set<string>();
  const dynamicDeps = new Set<string>();
  for (const m of code.matchAll(/import\(\s*["']\.\/([^"']+\.js)["']\s*\)/g)) dynamicDeps.add(m[1]!);
  const withoutDynamic = code.replace(/import\(\s*["'][^"']+["']\s*\)/g, '');
  for (const m of withoutDynamic.matchAll(/(?:from|import)\s*["']\.\/([^"']+\.js)["']/g)) staticDeps.add(m[1]!);
  return { staticDeps: [...staticDeps], dynamicDeps: [...dynamicDeps] };
}

/** The static import closure of the page's islands (component and renderer), from the built client files. */
export function islandClosure(html: string, clientDir: string): { islands: string[]; chunks: { file: string; gzip: number }[] } {
  const entries = new Set<string>();
  const islands: string[] = [];
  for (const m of html.matchAll(/<astro-island\b[^>]*>/g)) {
    const tag = m[0];
    const component = /component-url="\/_astro\/([^"]+)"/.exec(tag)?.[1];
    const renderer = /renderer-url="\/_astro\/([^"]+)"/.exec(tag)?.[1];
    const directive = /client="([^"]+)"/.exec(tag)?.[1] ?? '?';
    if (component) {
      entries.add(component);
      islands.push(`${component.replace(/\.[^.]+\.js$/, '')} (client:${directive})`);
    }
    if (renderer) entries.add(renderer);
  }
  for (const m of html.matchAll(/<script[^>]*type="module"[^>]*src="\/_astro\/([^"]+)"/g)) entries.add(m[1]!);
  const seen = new Set<string>();
  const queue = [...entries];
  while (queue.length) {
    const file = queue.shift()!;
    if (seen.has(file)) continue;
    seen.add(file);
    const code = fs.readFileSync(path.join(clientDir, '_astro', file), 'utf8');
    queue.push(...importsOf(code).staticDeps);
  }
  const chunks = [...seen].map((file) => ({ file, gzip: gzipSize(fs.readFileSync(path.join(clientDir, '_astro', file))) }));
  chunks.sort((a, b) => b.gzip - a.gzip);
  return { islands, chunks };
}

/** Lighthouse runs per page; the run with the median performance score is reported (scores move between runs on a busy machine). */
const RUNS = Number(process.env.BENCH_LH_RUNS ?? 3);

async function measurePage(name: string, url: string, outDir: string, clientDir: string | null, runs = RUNS): Promise<PageResult> {
  log(`lighthouse: ${name} (${url}), ${runs} run${runs === 1 ? '' : 's'}`);
  const html = await (await fetch(url)).text();
  const all: Lhr[] = [];
  for (let i = 1; i <= runs; i++) all.push(await lighthouse(url, path.join(outDir, `${name}-${i}.json`)));
  const scores = all.map((l) => l.categories.performance.score ?? 0);
  const lhr = all.map((l, i) => ({ l, s: scores[i]! })).sort((a, b) => a.s - b.s)[Math.floor((all.length - 1) / 2)]!.l;
  const a = lhr.audits;
  const num = (id: string) => a[id]?.numericValue ?? NaN;
  const blocking = new Map<string, string>();
  for (const id of ['render-blocking-resources', 'render-blocking-insight']) {
    for (const item of a[id]?.details?.items ?? []) {
      const u = String(item.url ?? '');
      if (u) blocking.set(u, /\.css(\?|$)/.test(u) ? 'stylesheet' : /\.js(\?|$)/.test(u) ? 'script' : 'other');
    }
  }
  const requests = (a['network-requests']?.details?.items ?? []) as { url: string; resourceType?: string; resourceSize?: number }[];
  const scripts = requests.filter((r) => r.resourceType === 'Script' && r.url.startsWith('http'));
  const loadedScripts = await Promise.all(
    scripts.map(async (r) => {
      const body = Buffer.from(await (await fetch(r.url)).arrayBuffer());
      return { url: new URL(r.url).pathname, bytes: body.length, gzip: gzipSize(body) };
    }),
  );
  const closure = clientDir ? islandClosure(html, clientDir) : { islands: [], chunks: [] };
  return {
    name,
    url,
    runScores: scores.map((x) => Math.round(x * 100)),
    score: Math.round((lhr.categories.performance.score ?? 0) * 100),
    lcpMs: round(num('largest-contentful-paint')),
    fcpMs: round(num('first-contentful-paint')),
    tbtMs: round(num('total-blocking-time')),
    cls: round(num('cumulative-layout-shift'), 4),
    speedIndexMs: round(num('speed-index')),
    renderBlocking: [...blocking].map(([u, type]) => ({ url: u.startsWith('http') ? new URL(u).pathname : u, type })),
    loadedScripts,
    loadedJsGzip: loadedScripts.reduce((n, s) => n + s.gzip, 0),
    islandChunks: closure.chunks,
    islandJsGzip: closure.chunks.reduce((n, c) => n + c.gzip, 0),
    islands: closure.islands,
    stylesheets: [...html.matchAll(/<link[^>]*rel="stylesheet"[^>]*href="([^"]+)"/g)].map((m) => m[1]!),
    fontPreloads: [...html.matchAll(/<link[^>]*rel="preload"[^>]*as="font"[^>]*>/g)].map((m) => /href="([^"]+)"/.exec(m[0])?.[1] ?? ''),
    htmlBytes: Buffer.byteLength(html),
  };
}

export async function measurePages(
  targets: { name: string; url: string }[],
  baselineUrl: string,
  outDir: string,
): Promise<{ baseline: PageResult; pages: PageResult[] }> {
  fs.mkdirSync(outDir, { recursive: true });
  const clientDir = path.join(REPO, 'bench/.dist/client');
  const baseline = await measurePage('baseline', baselineUrl, outDir, null, 1);
  const pages: PageResult[] = [];
  for (const t of targets) pages.push(await measurePage(t.name, t.url, outDir, clientDir));
  return { baseline, pages };
}

/** A page with the same words as `html` and nothing else: no script, stylesheet, image or font. */
export function barePageFrom(html: string): string {
  return html
    .replace(/<script[\s\S]*?<\/script>/g, '')
    .replace(/<style[\s\S]*?<\/style>/g, '')
    .replace(/<link[^>]*>/g, '')
    .replace(/<(picture|svg)[\s\S]*?<\/\1>/g, '')
    .replace(/<(img|source)[^>]*>/g, '')
    .replace(/<astro-island[^>]*>/g, '<div>')
    .replace(/<\/astro-island>/g, '</div>')
    .replace(/\s(style|class)="[^"]*"/g, '');
}
