/** Writes bench/results.json and bench/RESULTS.md from one run's figures, budgets checked plainly. */
import fs from 'node:fs';
import path from 'node:path';
import type { CheckoutResult, EditionsResult } from './checkout';
import type { IngestResult } from './ingest';
import type { LoadResult } from './load';
import type { PageResult } from './pages';
import { REPO } from './util';

export interface BenchResults {
  date: string;
  machine: {
    cpu: string;
    cores: number;
    memoryGiB: number;
    os: string;
    versions: { node: string; chromium: string; imagemagick: string; libvips: string; packages: Record<string, string> };
    loadAverageAtStart: number[];
    loadAverageAtEnd: number[];
  };
  settings: { connections: number; durationS: number; checkoutOrders: number; ports: Record<string, number> };
  setup: { buildS: number; seedS: number };
  pages: { baseline: PageResult; pages: PageResult[] } | null;
  load: LoadResult[] | null;
  ingest: IngestResult | null;
  checkout: CheckoutResult | null;
  editions: EditionsResult | null;
  durationS: number;
  budgets?: Budget[];
}

export interface Budget {
  area: string;
  check: string;
  measured: string;
  budget: string;
  baseline: string;
  met: boolean;
}

const KB = 1024;
const kb = (bytes: number) => `${(bytes / KB).toFixed(1)} KB`;
const ms = (n: number) => `${Math.round(n)} ms`;
const yes = (met: boolean) => (met ? 'met' : '**missed**');

export function budgetsOf(r: BenchResults): Budget[] {
  const out: Budget[] = [];
  if (r.pages) {
    const b = r.pages.baseline;
    for (const p of r.pages.pages) {
      out.push({ area: 'pages', check: `${p.name}: performance score`, measured: String(p.score), budget: '≥ 95', baseline: String(b.score), met: p.score >= 95 });
      out.push({ area: 'pages', check: `${p.name}: CLS`, measured: p.cls.toFixed(3), budget: '< 0.02', baseline: b.cls.toFixed(3), met: p.cls < 0.02 });
      out.push({ area: 'pages', check: `${p.name}: island JS, gzip`, measured: kb(p.islandJsGzip), budget: '≤ 80 KB', baseline: kb(b.loadedJsGzip), met: p.islandJsGzip <= 80 * KB });
      const blockingCss = p.renderBlocking.filter((x) => x.type === 'stylesheet');
      const other = p.renderBlocking.filter((x) => x.type !== 'stylesheet');
      const fontCss = p.renderBlocking.filter((x) => /font/i.test(x.url) && x.type === 'stylesheet');
      out.push({
        area: 'pages',
        check: `${p.name}: render-blocking`,
        measured: p.renderBlocking.length ? p.renderBlocking.map((x) => `${x.type} ${x.url}`).join(', ') : 'none',
        budget: '≤ 1 stylesheet, no font CSS, no script',
        baseline: b.renderBlocking.length ? String(b.renderBlocking.length) : 'none',
        met: blockingCss.length <= 1 && other.length === 0 && fontCss.length === 0,
      });
    }
  }
  for (const l of r.load ?? []) {
    out.push({ area: 'load', check: `${l.name}: requests/s vs bare server`, measured: `${l.app.requestsPerS}/s (${(l.ratio * 100).toFixed(1)} %)`, budget: '≥ 25 %', baseline: `${l.bare.requestsPerS}/s`, met: l.ratio >= 0.25 });
    out.push({ area: 'load', check: `${l.name}: p99 latency`, measured: ms(l.app.p99Ms), budget: '< 100 ms', baseline: ms(l.bare.p99Ms), met: l.app.p99Ms < 100 });
    out.push({ area: 'load', check: `${l.name}: errors (incl. non-2xx)`, measured: String(l.app.errors), budget: '0', baseline: String(l.bare.errors), met: l.app.errors === 0 });
  }
  const ing = r.ingest;
  if (ing) {
    const t = ing.pipeline.innerMs ?? ing.pipeline.wallMs;
    out.push({ area: 'ingest', check: '24 MP upload pipeline, wall', measured: ms(t), budget: '≤ 1500 ms', baseline: `bare sharp resize ${ms(ing.floor.innerMs ?? ing.floor.wallMs)}`, met: t <= 1500 });
    out.push({
      area: 'ingest',
      check: 'faster than ImageMagick',
      measured: ing.speedupVsMagick === null ? 'ImageMagick not run' : `${ing.speedupVsMagick.toFixed(1)}×`,
      budget: '≥ 2×',
      baseline: ing.magick ? `ImageMagick ${ms(ing.magick.wallMs)}` : '—',
      met: (ing.speedupVsMagick ?? 0) >= 2,
    });
    out.push({ area: 'ingest', check: 'peak memory (RSS)', measured: `${ing.pipeline.maxRssMB} MB`, budget: '≤ 500 MB', baseline: `bare sharp ${ing.floor.maxRssMB} MB`, met: ing.pipeline.maxRssMB <= 500 });
  }
  const c = r.checkout;
  if (c) {
    out.push({ area: 'checkout', check: `completed → paid, licensed, mail caught (p99 of ${c.app.orders})`, measured: ms(c.app.p99Ms), budget: '≤ 250 ms', baseline: `bare receiver ${ms(c.floor.p99Ms)}`, met: c.app.p99Ms <= 250 });
    const allDone = c.app.paid === c.app.orders && c.app.receipts === c.app.orders && c.app.licences >= c.app.orders && c.app.failedDeliveries === 0;
    out.push({ area: 'checkout', check: 'every order paid, licensed, mailed', measured: `${c.app.paid} paid, ${c.app.licences} licences, ${c.app.receipts} receipts`, budget: `${c.app.orders} each`, baseline: '—', met: allDone });
  }
  const e = r.editions;
  if (e) {
    out.push({ area: 'editions', check: `${e.attempts} checkouts for the last 5: sold`, measured: `${e.paidAfter} orders paid; ${e.soldNumbers} of ${e.edition.total} numbers sold`, budget: 'exactly 5', baseline: '—', met: e.paidAfter === 5 && e.soldNumbers === e.edition.total && e.reservedNumbers === 0 && e.distinctNumbers });
    out.push({ area: 'editions', check: 'refused or refunded', measured: String(e.refused + e.refundedAfter), budget: String(e.attempts - 5), baseline: '—', met: e.refused + e.refundedAfter === e.attempts - 5 });
    out.push({ area: 'editions', check: 'server errors (5xx or no answer)', measured: String(e.serverErrors), budget: '0', baseline: '—', met: e.serverErrors === 0 });
  }
  return out;
}

function bar(value: number, max: number, width = 32): string {
  const n = max > 0 ? Math.round((value / max) * width) : 0;
  return '█'.repeat(Math.max(0, Math.min(width, n))).padEnd(width, '·');
}

function chart(rows: [string, number, string][]): string {
  const max = Math.max(...rows.map((r) => r[1]));
  const label = Math.max(...rows.map((r) => r[0].length));
  return ['```', ...rows.map(([name, value, text]) => `${name.padEnd(label)}  ${bar(value, max)}  ${text}`), '```'].join('\n');
}

function table(head: string[], rows: string[][]): string {
  return [`| ${head.join(' | ')} |`, `| ${head.map(() => '---').join(' | ')} |`, ...rows.map((r) => `| ${r.join(' | ')} |`)].join('\n');
}

function beforeAfter(r: BenchResults, before: BenchResults | null): string {
  if (!before) return '';
  const rows: string[][] = [];
  const pageOf = (x: BenchResults | null, name: string) => x?.pages?.pages.find((p) => p.name === name);
  for (const p of r.pages?.pages ?? []) {
    const b = pageOf(before, p.name);
    if (!b) continue;
    rows.push([`${p.name}: island JS, gzip`, kb(b.islandJsGzip), kb(p.islandJsGzip)]);
    rows.push([`${p.name}: performance score / LCP`, `${b.score} / ${ms(b.lcpMs)}`, `${p.score} / ${ms(p.lcpMs)}`]);
  }
  for (const l of r.load ?? []) {
    const b = before.load?.find((x) => x.name.split(' ')[0] === l.name.split(' ')[0]);
    if (!b) continue;
    rows.push([`${l.name}: requests/s (share of bare)`, `${b.app.requestsPerS} (${(b.ratio * 100).toFixed(1)} %)`, `${l.app.requestsPerS} (${(l.ratio * 100).toFixed(1)} %)`]);
    rows.push([`${l.name}: p50 / p99`, `${ms(b.app.p50Ms)} / ${ms(b.app.p99Ms)}`, `${ms(l.app.p50Ms)} / ${ms(l.app.p99Ms)}`]);
  }
  if (r.ingest && before.ingest) {
    rows.push(['ingest: pipeline wall / peak RSS (after: over two uploads per process)', `${ms(before.ingest.pipeline.innerMs ?? before.ingest.pipeline.wallMs)} / ${before.ingest.pipeline.maxRssMB} MB`, `${ms(r.ingest.pipeline.innerMs ?? r.ingest.pipeline.wallMs)} / ${r.ingest.pipeline.maxRssMB} MB`]);
  }
  if (r.checkout && before.checkout) {
    rows.push(['checkout: p50 / p99', `${ms(before.checkout.app.p50Ms)} / ${ms(before.checkout.app.p99Ms)}`, `${ms(r.checkout.app.p50Ms)} / ${ms(r.checkout.app.p99Ms)}`]);
  }
  if (r.editions && before.editions) {
    rows.push(['editions: 100 checkouts answered in', ms(before.editions.wallMs), ms(r.editions.wallMs)]);
  }
  if (!rows.length) return '';
  return [
    '## Before and after the fixes',
    '',
    `"Before" is the run of ${before.date.slice(0, 16).replace('T', ' ')} UTC on the code before the fixes (bench/before.json), on the same machine; both runs shared it with other work, so small differences are noise.`,
    '',
    table(['figure', 'before', 'after (this run)'], rows),
    '',
  ].join('\n');
}

export function renderMarkdown(r: BenchResults, before: BenchResults | null, findings: string): string {
  const budgets = r.budgets ?? budgetsOf(r);
  const missed = budgets.filter((b) => !b.met);
  const m = r.machine;
  const parts: string[] = [];
  parts.push('# Stillmark bench results', '');
  parts.push(`Run of ${r.date.slice(0, 19).replace('T', ' ')} UTC by \`npm run bench\` (${r.durationS} s in all). Every figure has a floor measured in the same run beside it.`, '');
  parts.push(missed.length ? `**${budgets.length - missed.length} of ${budgets.length} budgets met; missed: ${missed.map((b) => b.check).join('; ')}.**` : `**All ${budgets.length} budgets met.**`, '');
  parts.push('## Machine', '');
  parts.push(
    table(
      ['', ''],
      [
        ['CPU', `${m.cpu}, ${m.cores} cores`],
        ['Memory', `${m.memoryGiB} GiB`],
        ['OS', m.os],
        ['Load average (1/5/15 min) at start → end', `${m.loadAverageAtStart.join(' / ')} → ${m.loadAverageAtEnd.join(' / ')}`],
        ['Node', m.versions.node],
        ['Chromium', m.versions.chromium],
        ['ImageMagick', m.versions.imagemagick],
        ['libvips (sharp)', m.versions.libvips],
        ['Packages', Object.entries(m.versions.packages).map(([k, v]) => `${k} ${v}`).join(', ')],
        ['Build / seed', `${r.setup.buildS} s / ${r.setup.seedS} s (side by side)`],
      ],
    ),
    '',
  );
  parts.push('The machine is shared with other work while the bench runs (see the load average), so absolute numbers are noisy; the floors are measured in the same minutes for that reason.', '');
  parts.push('## Budgets', '');
  parts.push(table(['area', 'check', 'measured', 'budget', 'floor (same run)', 'result'], budgets.map((b) => [b.area, b.check, b.measured, b.budget, b.baseline, yes(b.met)])), '');

  if (r.pages) {
    const { baseline, pages } = r.pages;
    parts.push('## 1. Pages in Chromium (Lighthouse, mobile, simulated throttling)', '');
    parts.push('Each page is run three times and the run with the median score is shown. The floor is the home page\'s words alone (no script, stylesheet, image or font) served from memory by the bare server. JS sizes are gzip (level 6) of the files the page loaded in the run, and of every chunk its islands import if they all hydrate (the budget); the node server itself sends them uncompressed.', '');
    parts.push(
      table(
        ['page', 'score (runs)', 'LCP', 'FCP', 'TBT', 'CLS', 'speed index', 'JS loaded (gzip)', 'JS if every island hydrates (gzip)', 'stylesheets', 'font preloads'],
        [baseline, ...pages].map((p) => [
          p.name === 'baseline' ? 'floor (bare page)' : p.name,
          `${p.score} (${(p.runScores ?? [p.score]).join(', ')})`, ms(p.lcpMs), ms(p.fcpMs), ms(p.tbtMs), p.cls.toFixed(3), ms(p.speedIndexMs),
          kb(p.loadedJsGzip), p.name === 'baseline' ? '—' : kb(p.islandJsGzip), String(p.stylesheets.length), String(p.fontPreloads.length),
        ]),
      ),
      '',
    );
    parts.push(chart(pages.map((p) => [`${p.name} island JS`, p.islandJsGzip, `${kb(p.islandJsGzip)} of 80 KB`])), '');
    for (const p of pages) {
      parts.push(`- **${p.name}** islands: ${p.islands.join(', ') || 'none'}; chunks (gzip): ${p.islandChunks.map((c) => `${c.file} ${kb(c.gzip)}`).join(', ')}.`);
    }
    parts.push('');
  }

  if (r.load) {
    parts.push(`## 2. Throughput and latency (autocannon, ${r.settings.connections} connections, ${r.settings.durationS} s each)`, '');
    parts.push('The floor is a bare `node:http` server answering the same bytes (the app\'s own response for that route) from memory, run just before the app in the same run.', '');
    parts.push(
      table(
        ['route', 'body', 'app req/s', 'bare req/s', 'share', 'app p50', 'app p99', 'bare p50', 'bare p99', 'app errors'],
        r.load.map((l) => [l.name, kb(l.app.bodyBytes), String(l.app.requestsPerS), String(l.bare.requestsPerS), `${(l.ratio * 100).toFixed(1)} %`, ms(l.app.p50Ms), ms(l.app.p99Ms), ms(l.bare.p50Ms), ms(l.bare.p99Ms), String(l.app.errors)]),
      ),
      '',
    );
    parts.push(chart(r.load.flatMap((l) => [[`${l.name.split(' ')[0]} app`, l.app.requestsPerS, `${l.app.requestsPerS}/s`] as [string, number, string], [`${l.name.split(' ')[0]} bare`, l.bare.requestsPerS, `${l.bare.requestsPerS}/s`] as [string, number, string]])), '');
  }

  if (r.ingest) {
    const i = r.ingest;
    parts.push('## 3. Image ingest (24 megapixels)', '');
    parts.push(`Each child process makes two uploads of the same picture (different bytes, so neither is a duplicate): its first, with fonts, encoders and code still cold, and a second as a running server makes it; the budget is checked on the second. ${i.pipeline.firstUploadMs !== undefined ? `First uploads: ${ms(i.pipeline.firstUploadMs)} (${ms(i.pipeline.firstUploadCpuMs ?? 0)} CPU); second: ${ms(i.pipeline.innerMs ?? i.pipeline.wallMs)} (${ms(i.pipeline.cpuMs ?? 0)} CPU, all threads; the wall time is close to the CPU time when other work leaves this process one core).` : ''}`, '');
    parts.push(`A generated ${i.image.width} × ${i.image.height} JPEG (${(i.image.bytes / 1e6).toFixed(1)} MB, q92, textured and noisy, camera EXIF) through \`ingestUpload\` in a child process: streamed in, sniffed, header and pixel-limit check, SHA-256, EXIF and ICC read, stored, ${i.pipeline.files} derivatives (4 sizes × AVIF/WebP/JPEG, watermarked), blurred placeholder, dominant colour, database row. Peak memory is the child's maximum RSS (GNU time); the pipeline time is measured inside the child (module loading excluded), the process time beside it.`, '');
    const rows: string[][] = [
      ['Stillmark pipeline (process: 2 uploads)', ms(i.pipeline.innerMs ?? i.pipeline.wallMs), ms(i.pipeline.wallMs), `${i.pipeline.maxRssMB} MB`, i.pipeline.runs.map((x) => ms(x.innerMs ?? x.wallMs)).join(', ')],
    ];
    if (i.magick) rows.push([`ImageMagick (${i.magick.version}), same derivatives`, '—', ms(i.magick.wallMs), `${i.magick.maxRssMB} MB`, i.magick.runs.map((x) => ms(x.wallMs)).join(', ')]);
    rows.push(['bare sharp resize to 2400 px (floor)', ms(i.floor.innerMs ?? i.floor.wallMs), ms(i.floor.wallMs), `${i.floor.maxRssMB} MB`, i.floor.runs.map((x) => ms(x.innerMs ?? x.wallMs)).join(', ')]);
    parts.push(table(['what', 'work (median)', 'process wall (median)', 'peak RSS', 'runs'], rows), '');
    parts.push(
      chart([
        ['pipeline', i.pipeline.innerMs ?? i.pipeline.wallMs, ms(i.pipeline.innerMs ?? i.pipeline.wallMs)],
        ...(i.magick ? [['ImageMagick', i.magick.wallMs, ms(i.magick.wallMs)] as [string, number, string]] : []),
        ['bare resize', i.floor.innerMs ?? i.floor.wallMs, ms(i.floor.innerMs ?? i.floor.wallMs)],
      ]),
      '',
    );
    parts.push(`RSS of the pipeline's process before the upload started (Node, Sequelize, sharp loaded): ${i.pipeline.rssBeforeMB} MB.`);
    if (i.magick) parts.push(`ImageMagick made: ${i.magick.files.join(', ')}. Not made by it: ${i.magick.notMade.join('; ')}.`);
    parts.push('');
  }

  if (r.checkout) {
    const c = r.checkout;
    parts.push(`## 4. Checkout (${c.app.orders} licence orders, one after another)`, '');
    parts.push('From the moment the Stripe fake starts sending `checkout.session.completed` (its delivery log) to the moment the mail catcher has the receipt (its `receivedAt`); the app marks the order paid, issues the licence and download grant in one transaction, then mails. The floor is the same fake sending to a bare server that only sends one mail through the same catcher and answers.', '');
    parts.push(
      table(
        ['', 'p50', 'p90', 'p99', 'max', 'webhook answer p50 / p99'],
        [
          ['app', ms(c.app.p50Ms), ms(c.app.p90Ms), ms(c.app.p99Ms), ms(c.app.maxMs), `${ms(c.app.webhookP50Ms)} / ${ms(c.app.webhookP99Ms)}`],
          ['floor', ms(c.floor.p50Ms), ms(c.floor.p90Ms), ms(c.floor.p99Ms), ms(c.floor.maxMs), `${ms(c.floor.webhookP50Ms)} / ${ms(c.floor.webhookP99Ms)}`],
        ],
      ),
      '',
    );
    parts.push(`${c.app.paid} orders paid, ${c.app.licences} licences issued, ${c.app.receipts} receipts caught, ${c.app.failedDeliveries} failed webhook deliveries; \`POST /api/account/checkout\` p50 ${ms(c.app.checkoutP50Ms)}.`, '');
  }

  if (r.editions) {
    const e = r.editions;
    parts.push(`## 5. Editions under contention`, '');
    parts.push(`Limited edition ${e.edition.id} (${e.edition.work}, ${e.edition.total} numbers): ${e.edition.presold} sold through the shop first, then ${e.attempts} checkouts at once from ${e.buyers} signed-in buyers for the last ${e.edition.total - e.edition.presold}.`, '');
    parts.push(
      table(
        ['', ''],
        [
          ['answers', Object.entries(e.statuses).map(([k, v]) => `${v} × ${k}`).join(', ')],
          ['all answered in', `${ms(e.wallMs)} (p50 ${ms(e.p50Ms)}, p99 ${ms(e.p99Ms)} per request)`],
          ['paid after the fake\'s webhooks', `${e.paidAfter} (refunded ${e.refundedAfter}), in ${ms(e.payWallMs)}`],
          ['edition numbers', `${e.soldNumbers} sold (${e.distinctNumbers ? 'all distinct' : 'DUPLICATES'}), ${e.reservedNumbers} still reserved`],
        ],
      ),
      '',
    );
  }

  const ba = beforeAfter(r, before);
  if (ba) parts.push(ba);
  if (findings.trim()) parts.push(findings.trim(), '');
  return `${parts.join('\n')}\n`;
}

export function writeReport(r: BenchResults): void {
  r.budgets = budgetsOf(r);
  const dir = path.join(REPO, 'bench');
  fs.writeFileSync(path.join(dir, 'results.json'), `${JSON.stringify(r, null, 2)}\n`);
  const beforeFile = path.join(dir, 'before.json');
  const before = fs.existsSync(beforeFile) ? (JSON.parse(fs.readFileSync(beforeFile, 'utf8')) as BenchResults) : null;
  const findingsFile = path.join(dir, 'findings.md');
  const findings = fs.existsSync(findingsFile) ? fs.readFileSync(findingsFile, 'utf8') : '';
  fs.writeFileSync(path.join(dir, 'RESULTS.md'), renderMarkdown(r, before, findings));
}

