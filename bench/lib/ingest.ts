/**
 * Image ingest: a generated 24-megapixel JPEG through the whole upload pipeline (a child process running
 * `ingestUpload`), against ImageMagick making the same derivatives, and a single bare sharp resize.
 * Wall time and peak RSS per process come from GNU time (`/usr/bin/time -v`).
 */
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import sharp from 'sharp';
import { log, median, REPO, round } from './util';

export const WIDTH = 6000;
export const HEIGHT = 4000;
const RUNS = Number(process.env.BENCH_INGEST_RUNS ?? 3);
const MAGICK_RUNS = Number(process.env.BENCH_MAGICK_RUNS ?? 2);
const WATERMARK_FONT = path.join(REPO, 'node_modules/@expo-google-fonts/dm-serif-display/400Regular/DMSerifDisplay_400Regular.ttf');
/** The pipeline's sizes (long edge) and its formats and qualities, from src/lib/server/images.ts. */
const SIZES = [['sm', 480], ['md', 960], ['lg', 1600], ['xl', 2400]] as const;

/**
 * Approximately Gaussian noise around 128 (each draw the sum of three uniforms), 3 channels from a seeded
 * xorshift: a luminance part shared by the channels (σ = `mono`) plus a smaller colour part (σ = `chroma`).
 */
function noise(width: number, height: number, mono: number, chroma: number, seed: number): Buffer {
  const out = Buffer.allocUnsafe(width * height * 3);
  let x = 0x9e3779b9 ^ seed;
  // The sum of three uniforms on [0, 1) has mean 1.5 and σ 0.5, so (u − 1.5) × 2σ has σ.
  const draw = () => {
    x ^= x << 13;
    x ^= x >>> 17;
    x ^= x << 5;
    return ((x & 0x3ff) + ((x >>> 10) & 0x3ff) + ((x >>> 20) & 0x3ff)) / 1024 - 1.5;
  };
  for (let i = 0; i < out.length; i += 3) {
    const l = 128 + draw() * 2 * mono;
    for (let c = 0; c < 3; c++) {
      const v = l + draw() * 2 * chroma;
      out[i + c] = v < 0 ? 0 : v > 255 ? 255 : v;
    }
  }
  return out;
}

/** A still life drawn at full size (fine linen texture, glass, shadows) with sensor-like noise and camera EXIF. */
export async function makeTestImage(file: string): Promise<{ bytes: number; ms: number }> {
  const started = Date.now();
  const W = WIDTH;
  const H = HEIGHT;
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}">
  <defs>
    <linearGradient id="wall" x1="0" y1="0" x2="0" y2="1"><stop offset="0" stop-color="#5b5147"/><stop offset="1" stop-color="#2c2722"/></linearGradient>
    <linearGradient id="table" x1="0" y1="0" x2="0" y2="1"><stop offset="0" stop-color="#8a6a4a"/><stop offset="1" stop-color="#4a3423"/></linearGradient>
    <radialGradient id="glass" cx="0.35" cy="0.3" r="0.8"><stop offset="0" stop-color="#e9f2f0" stop-opacity="0.9"/><stop offset="0.5" stop-color="#6f9a94" stop-opacity="0.7"/><stop offset="1" stop-color="#1d3a37" stop-opacity="0.9"/></radialGradient>
    <radialGradient id="fruit" cx="0.4" cy="0.35" r="0.7"><stop offset="0" stop-color="#f6c26b"/><stop offset="0.6" stop-color="#c8611f"/><stop offset="1" stop-color="#5e2208"/></radialGradient>
    <pattern id="linen" width="6" height="6" patternUnits="userSpaceOnUse"><rect width="6" height="6" fill="#d9cfbf"/><path d="M0 1h6M0 4h6" stroke="#bfb2a0" stroke-width="1"/><path d="M2 0v6M5 0v6" stroke="#c9bdab" stroke-width="0.8"/></pattern>
    <pattern id="grain" width="40" height="9" patternUnits="userSpaceOnUse"><path d="M0 3 Q10 1 20 3 T40 3 M0 7 Q10 8 20 6.5 T40 7" stroke="#3b2818" stroke-width="1.2" fill="none" opacity="0.45"/></pattern>
  </defs>
  <rect width="${W}" height="${H}" fill="url(#wall)"/>
  <rect y="${H * 0.62}" width="${W}" height="${H * 0.38}" fill="url(#table)"/>
  <rect y="${H * 0.62}" width="${W}" height="${H * 0.38}" fill="url(#grain)"/>
  <path d="M${W * 0.08} ${H * 0.7} L${W * 0.62} ${H * 0.66} L${W * 0.7} ${H * 0.95} L${W * 0.04} ${H * 0.98} Z" fill="url(#linen)"/>
  <ellipse cx="${W * 0.42}" cy="${H * 0.83}" rx="${W * 0.2}" ry="${H * 0.035}" fill="#000" opacity="0.35"/>
  <path d="M${W * 0.34} ${H * 0.3} C${W * 0.3} ${H * 0.5} ${W * 0.28} ${H * 0.78} ${W * 0.36} ${H * 0.82} L${W * 0.48} ${H * 0.82} C${W * 0.56} ${H * 0.78} ${W * 0.54} ${H * 0.5} ${W * 0.5} ${H * 0.3} Z" fill="url(#glass)"/>
  <rect x="${W * 0.395}" y="${H * 0.18}" width="${W * 0.05}" height="${H * 0.13}" fill="url(#glass)"/>
  <circle cx="${W * 0.64}" cy="${H * 0.76}" r="${H * 0.09}" fill="url(#fruit)"/>
  <circle cx="${W * 0.74}" cy="${H * 0.79}" r="${H * 0.07}" fill="url(#fruit)"/>
  <path d="M${W * 0.37} ${H * 0.35} C${W * 0.35} ${H * 0.5} ${W * 0.35} ${H * 0.65} ${W * 0.38} ${H * 0.78}" stroke="#fff" stroke-width="${W * 0.006}" opacity="0.35" fill="none"/>
</svg>`;
  // Drawn at a quarter of the area and enlarged (librsvg is slow at 24 MP), then given detail at full size:
  // mottled texture from enlarged coarse noise, and per-pixel sensor noise.
  const scene = await sharp(Buffer.from(svg), { density: 36 }).removeAlpha().resize(W, H, { kernel: 'lanczos3' }).raw().toBuffer();
  const mottle = await sharp(noise(W / 8, H / 8, 22, 3, 1), { raw: { width: W / 8, height: H / 8, channels: 3 } })
    .resize(W, H, { kernel: 'cubic' })
    .raw()
    .toBuffer();
  const grain = noise(W, H, 18, 6, 2);
  const info = await sharp(scene, { raw: { width: W, height: H, channels: 3 } })
    .composite([
      { input: mottle, raw: { width: W, height: H, channels: 3 }, blend: 'soft-light' },
      { input: grain, raw: { width: W, height: H, channels: 3 }, blend: 'soft-light' },
    ])
    .withExif({
      IFD0: {
        Make: 'Bench Optics', Model: 'Studio Body 24', Artist: 'Bench Photographer', Copyright: '2026 Bench Photographer',
        ImageDescription: 'Glass and two apricots on linen', DateTime: '2026:03:14 10:22:05', Software: 'stillmark bench',
      },
      IFD2: {
        ExposureTime: '1/125', FNumber: '11/1', ISOSpeedRatings: '100', FocalLength: '90/1',
        DateTimeOriginal: '2026:03:14 10:22:05', DateTimeDigitized: '2026:03:14 10:22:05', LensModel: 'Macro 90mm f/2.8', ColorSpace: '1',
      },
    })
    .jpeg({ quality: 92, chromaSubsampling: '4:2:0' })
    .toFile(file);
  return { bytes: info.size, ms: Date.now() - started };
}

/** The same JPEG with a comment segment after SOI, so each run is a new upload (a different SHA-256), not a duplicate. */
function variantOf(file: string, run: number, out: string): void {
  const data = fs.readFileSync(file);
  const text = Buffer.from(`bench run ${run}`);
  const com = Buffer.concat([Buffer.from([0xff, 0xfe, 0, text.length + 2]), text]);
  fs.writeFileSync(out, Buffer.concat([data.subarray(0, 2), com, data.subarray(2)]));
}

interface Timed { wallMs: number; maxRssMB: number; stdout: string }

/** Runs a command under GNU time; wall time and peak RSS from its report. */
function timed(command: string, args: string[], env: NodeJS.ProcessEnv): Promise<Timed> {
  return new Promise((resolve, reject) => {
    const child = spawn('/usr/bin/time', ['-v', command, ...args], { cwd: REPO, env, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (c: Buffer) => (stdout += c.toString()));
    child.stderr.on('data', (c: Buffer) => (stderr += c.toString()));
    child.on('exit', (code) => {
      if (code !== 0) return reject(new Error(`${command} ${args.join(' ')} failed (${code}):\n${stderr.slice(-3000)}`));
      const rss = /Maximum resident set size \(kbytes\): (\d+)/.exec(stderr);
      const wall = /Elapsed \(wall clock\) time \(h:mm:ss or m:ss\): (?:(\d+):)?(\d+):([\d.]+)/.exec(stderr);
      if (!rss || !wall) return reject(new Error(`no GNU time report for ${command}`));
      const wallMs = ((Number(wall[1] ?? 0) * 60 + Number(wall[2])) * 60 + Number(wall[3])) * 1000;
      resolve({ wallMs: Math.round(wallMs), maxRssMB: round(Number(rss[1]) / 1024, 1), stdout });
    });
    child.on('error', reject);
  });
}

/** ImageMagick's command: IM7's `magick` where it exists, else IM6's `convert` (the real one, in /usr/bin). */
export function magickCommand(): { convert: string[]; identify: string[]; version: string } | null {
  for (const dir of ['/usr/bin', '/usr/local/bin']) {
    if (fs.existsSync(`${dir}/magick`)) return { convert: [`${dir}/magick`], identify: [`${dir}/magick`, 'identify'], version: 'IM7' };
  }
  if (fs.existsSync('/usr/bin/convert-im6.q16')) return { convert: ['/usr/bin/convert-im6.q16'], identify: ['/usr/bin/identify-im6.q16'], version: 'IM6' };
  return null;
}

/**
 * ImageMagick making what the pipeline makes, in one process that decodes once (with the JPEG
 * shrink-on-load hint, as sharp does): oriented sRGB working copy ≤ 2400 px, then per size a resize,
 * the same watermark text in the same font at 30 % white, and AVIF q55, WebP q78, JPEG q82; the
 * blurred 24 px WebP placeholder; and the EXIF read (`identify -ping`).
 */
function magickArgs(input: string, outDir: string, watermark: string): string[] {
  const args = ['-define', 'jpeg:size=4800x4800', input, '-auto-orient', '-colorspace', 'sRGB', '-resize', '2400x2400>', '-write', 'mpr:work', '+delete'];
  for (const [name, edge] of SIZES) {
    const pointsize = Math.round(edge * 0.05);
    args.push(
      '(', 'mpr:work', '-resize', `${edge}x${edge}>`,
      '-gravity', 'center', '-font', WATERMARK_FONT, '-pointsize', String(pointsize), '-fill', 'rgba(255,255,255,0.3)', '-annotate', '+0+0', watermark,
      '-quality', '55', '-write', path.join(outDir, `${name}.avif`),
      '-quality', '78', '-write', path.join(outDir, `${name}.webp`),
      '-quality', '82', '-write', path.join(outDir, `${name}.jpg`),
      '+delete', ')',
    );
  }
  args.push('mpr:work', '-resize', '24x24', '-blur', '0x1.2', '-quality', '40', path.join(outDir, 'placeholder.webp'));
  return args;
}

export interface IngestFigures {
  runs: { wallMs: number; innerMs?: number; maxRssMB: number }[];
  wallMs: number;
  innerMs?: number;
  maxRssMB: number;
}

export interface IngestResult {
  image: { width: number; height: number; bytes: number; generatedMs: number };
  pipeline: IngestFigures & {
    files: number; capture: unknown; placeholder: boolean; rssBeforeMB: number;
    /** CPU time of the measured upload, every thread counted: wall time on a machine with both cores free would be about half. */
    cpuMs?: number;
    /** The first upload a fresh server process makes (fonts, encoders and code still cold). */
    firstUploadMs?: number;
    firstUploadCpuMs?: number;
  };
  magick: (IngestFigures & { version: string; files: string[]; notMade: string[] }) | null;
  floor: IngestFigures;
  speedupVsMagick: number | null;
}

function summarise(runs: IngestFigures['runs']): IngestFigures {
  const inner = runs.map((r) => r.innerMs).filter((v): v is number => v !== undefined);
  return {
    runs,
    wallMs: median(runs.map((r) => r.wallMs)),
    ...(inner.length ? { innerMs: round(median(inner)) } : {}),
    maxRssMB: Math.max(...runs.map((r) => r.maxRssMB)),
  };
}

export async function measureIngest(workDir: string, env: NodeJS.ProcessEnv, watermark: string): Promise<IngestResult> {
  const dir = path.join(workDir, 'ingest');
  fs.mkdirSync(dir, { recursive: true });
  const source = path.join(dir, 'still-life-24mp.jpg');
  log(`ingest: generating a ${WIDTH}×${HEIGHT} JPEG`);
  const made = await makeTestImage(source);
  log(`  ${(made.bytes / 1e6).toFixed(1)} MB in ${made.ms} ms`);

  const pipelineRuns: IngestFigures['runs'] = [];
  let last: { files: number; capture: unknown; hasPlaceholder: boolean } | null = null;
  let rssBefore = 0;
  const firstUploads: { ms: number; cpuMs: number }[] = [];
  const cpu: number[] = [];
  for (let run = 1; run <= RUNS; run++) {
    // Two uploads per process: the server's first after starting, then one as a running server does it.
    const files = [1, 2].map((n) => {
      const file = path.join(dir, `upload-${run}-${n}.jpg`);
      variantOf(source, run * 10 + n, file);
      return file;
    });
    const t = await timed(process.execPath, ['--import', 'tsx', 'bench/ingest-child.ts', 'pipeline', ...files], env);
    const out = JSON.parse(t.stdout.trim().split('\n').pop()!) as {
      ms: number; uploads: { ms: number; cpuMs: number }[]; rssBeforeKB: number; work: { files: number; capture: unknown; hasPlaceholder: boolean };
    };
    last = out.work;
    rssBefore = Math.max(rssBefore, out.rssBeforeKB);
    firstUploads.push(out.uploads[0]!);
    cpu.push(out.uploads[1]!.cpuMs);
    pipelineRuns.push({ wallMs: t.wallMs, innerMs: round(out.ms), maxRssMB: t.maxRssMB });
    log(`  pipeline run ${run}: ${round(out.ms)} ms for an upload (${round(out.uploads[1]!.cpuMs)} ms CPU); the process's first: ${round(out.uploads[0]!.ms)} ms; peak RSS ${t.maxRssMB} MB`);
  }

  const floorRuns: IngestFigures['runs'] = [];
  for (let run = 1; run <= RUNS; run++) {
    const t = await timed(process.execPath, ['--import', 'tsx', 'bench/ingest-child.ts', 'floor', source, path.join(dir, 'floor.jpg')], env);
    const out = JSON.parse(t.stdout.trim().split('\n').pop()!) as { ms: number };
    floorRuns.push({ wallMs: t.wallMs, innerMs: round(out.ms), maxRssMB: t.maxRssMB });
    log(`  bare sharp resize run ${run}: ${round(out.ms)} ms (${t.wallMs} ms with process start), peak RSS ${t.maxRssMB} MB`);
  }

  const im = magickCommand();
  let magick: IngestResult['magick'] = null;
  if (im) {
    const magickRuns: IngestFigures['runs'] = [];
    const outDir = path.join(dir, 'magick');
    for (let run = 1; run <= MAGICK_RUNS; run++) {
      fs.rmSync(outDir, { recursive: true, force: true });
      fs.mkdirSync(outDir);
      const [cmd, ...pre] = im.convert;
      const convert = await timed(cmd!, [...pre, ...magickArgs(source, outDir, watermark)], { ...process.env });
      const [idCmd, ...idPre] = im.identify;
      const identify = await timed(idCmd!, [...idPre, '-ping', '-format', '%[EXIF:*]', source], { ...process.env });
      magickRuns.push({ wallMs: convert.wallMs + identify.wallMs, maxRssMB: Math.max(convert.maxRssMB, identify.maxRssMB) });
      log(`  ImageMagick run ${run}: ${convert.wallMs + identify.wallMs} ms, peak RSS ${Math.max(convert.maxRssMB, identify.maxRssMB)} MB`);
    }
    magick = {
      ...summarise(magickRuns),
      version: im.version,
      files: fs.readdirSync(outDir).sort(),
      notMade: ['the dominant colour (sharp stats(); ImageMagick would need a separate histogram pass)', 'an embedded sRGB ICC profile on each file (not attached in this comparison)'],
    };
  } else {
    log('  ImageMagick not found: its comparison is skipped');
  }

  const pipeline = summarise(pipelineRuns);
  const floor = summarise(floorRuns);
  return {
    image: { width: WIDTH, height: HEIGHT, bytes: made.bytes, generatedMs: made.ms },
    pipeline: {
      ...pipeline, files: last?.files ?? 0, capture: last?.capture, placeholder: last?.hasPlaceholder ?? false, rssBeforeMB: round(rssBefore / 1024, 1),
      cpuMs: round(median(cpu)), firstUploadMs: round(median(firstUploads.map((u) => u.ms))), firstUploadCpuMs: round(median(firstUploads.map((u) => u.cpuMs))),
    },
    magick,
    floor,
    speedupVsMagick: magick ? round(magick.wallMs / (pipeline.innerMs ?? pipeline.wallMs), 2) : null,
  };
}
