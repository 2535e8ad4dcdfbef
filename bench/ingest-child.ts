/**
 * One image measurement in a process of its own, so its peak memory is its own:
 *   node --import tsx bench/ingest-child.ts pipeline <file> [<file>…]  the whole upload pipeline (ingestUpload), once per file
 *   node --import tsx bench/ingest-child.ts floor <file> <out> one bare sharp resize to 2400 px, JPEG
 * Prints one JSON line: the measured milliseconds (and CPU milliseconds, all threads), the RSS before the
 * work and the process's peak RSS.
 * STILLMARK_DATA_DIR must name a migrated, seeded data folder (the pipeline watermarks with its settings).
 */
import fs from 'node:fs';
import { Readable } from 'node:stream';
import { performance } from 'node:perf_hooks';
import sharp from 'sharp';

const [mode, file, out] = process.argv.slice(2);
if (!file || (mode !== 'pipeline' && mode !== 'floor')) {
  console.error('usage: ingest-child.ts pipeline|floor <file> [out]');
  process.exit(2);
}

async function main(): Promise<Record<string, unknown>> {
  if (mode === 'floor') {
    const rssBefore = process.memoryUsage().rss;
    const started = performance.now();
    await sharp(file).resize(2400, 2400, { fit: 'inside' }).jpeg().toFile(out!);
    return { ms: performance.now() - started, rssBeforeKB: Math.round(rssBefore / 1024) };
  }
  // Loaded before the clock starts: module loading is start-up, not ingest.
  const { ingestUpload } = await import('../src/lib/server/ingest');
  const { db, closeDb } = await import('../src/lib/server/db');
  const { Work } = await import('../src/lib/server/models');
  db();
  await Work.count();
  const rssBefore = process.memoryUsage().rss;
  // Each file given is one upload, in order: the first is a server's first upload after it started,
  // the next ones are what a running server does (fonts, encoders and code already warm).
  const files = [file, ...process.argv.slice(4)];
  const uploads: { ms: number; cpuMs: number }[] = [];
  let last: Awaited<ReturnType<typeof ingestUpload>> | null = null;
  for (const [i, upload] of files.entries()) {
    const bytes = fs.statSync(upload).size;
    const body = Readable.toWeb(fs.createReadStream(upload, { highWaterMark: 256 * 1024 })) as ReadableStream<Uint8Array>;
    const cpu = process.cpuUsage();
    const started = performance.now();
    last = await ingestUpload(body, { fileName: `bench-still-life-${i + 1}.jpg`, declaredBytes: bytes, userId: 'bench' });
    const ms = performance.now() - started;
    const used = process.cpuUsage(cpu);
    if (last.status !== 'created') throw new Error(`expected a new work, got ${last.status}`);
    uploads.push({ ms, cpuMs: (used.user + used.system) / 1000 });
  }
  const work = last!.status === 'created' ? last!.work : null;
  const variants = work?.derivatives?.variants.length ?? 0;
  const formats = work?.derivatives?.formats.length ?? 0;
  await closeDb();
  return {
    ms: uploads[uploads.length - 1]!.ms,
    uploads,
    rssBeforeKB: Math.round(rssBefore / 1024),
    work: work && { id: work.id, width: work.width, height: work.height, files: variants * formats, hasPlaceholder: work.placeholder.startsWith('data:image/webp'), capture: work.capture, dominantColor: work.dominantColor },
  };
}

main().then(
  (result) => {
    // maxRSS is in kilobytes (getrusage ru_maxrss).
    console.log(JSON.stringify({ ...result, maxRssKB: process.resourceUsage().maxRSS }));
  },
  (error: unknown) => {
    console.error(error);
    process.exit(1);
  },
);
