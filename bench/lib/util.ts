/** Small helpers for the bench: processes, waiting, HTTP with cookies, statistics. */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import http from 'node:http';
import net from 'node:net';
import path from 'node:path';
import zlib from 'node:zlib';

export const REPO = path.resolve(import.meta.dirname, '..', '..');
export const LOG_DIR = path.join(REPO, 'bench', '.logs');

export function log(message: string): void {
  const t = new Date().toISOString().slice(11, 19);
  process.stdout.write(`[bench ${t}] ${message}\n`);
}

const children = new Set<ChildProcess>();

/** Starts a child whose output goes to bench/.logs/<name>.log; it is stopped when the bench ends. */
export function startChild(name: string, command: string, args: string[], env: NodeJS.ProcessEnv): ChildProcess {
  fs.mkdirSync(LOG_DIR, { recursive: true });
  const out = fs.openSync(path.join(LOG_DIR, `${name}.log`), 'w');
  const child = spawn(command, args, { cwd: REPO, env, stdio: ['ignore', out, out] });
  fs.closeSync(out);
  children.add(child);
  child.on('exit', () => children.delete(child));
  return child;
}

/** Runs a child to its end; resolves with its stdout (stderr goes to the log), rejects on a non-zero exit. */
export function runChild(name: string, command: string, args: string[], env: NodeJS.ProcessEnv = process.env): Promise<string> {
  fs.mkdirSync(LOG_DIR, { recursive: true });
  const logFile = path.join(LOG_DIR, `${name}.log`);
  return new Promise((resolve, reject) => {
    const child = spawn(command, args, { cwd: REPO, env, stdio: ['ignore', 'pipe', 'pipe'] });
    children.add(child);
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (c: Buffer) => (stdout += c.toString()));
    child.stderr.on('data', (c: Buffer) => (stderr += c.toString()));
    child.on('exit', (code, signal) => {
      children.delete(child);
      fs.writeFileSync(logFile, `${stdout}\n--- stderr ---\n${stderr}`);
      if (code === 0) resolve(stdout);
      else reject(new Error(`${name} exited with ${code ?? signal}; see ${path.relative(REPO, logFile)}\n${stderr.slice(-2000)}`));
    });
    child.on('error', reject);
  });
}

export async function stopChild(child: ChildProcess | undefined, timeoutMs = 5_000): Promise<void> {
  if (!child || child.exitCode !== null || child.signalCode !== null) return;
  await new Promise<void>((resolve) => {
    const timer = setTimeout(() => {
      child.kill('SIGKILL');
      resolve();
    }, timeoutMs);
    child.once('exit', () => {
      clearTimeout(timer);
      resolve();
    });
    child.kill('SIGTERM');
  });
}

export async function stopAllChildren(): Promise<void> {
  await Promise.all([...children].map((c) => stopChild(c)));
}

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

export async function waitForUrl(url: string, timeoutMs: number, child?: ChildProcess): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (child && child.exitCode !== null) throw new Error(`the process for ${url} exited with ${child.exitCode}`);
    try {
      const res = await fetch(url, { signal: AbortSignal.timeout(2_000) });
      await res.arrayBuffer();
      if (res.ok) return;
    } catch {
      // not listening yet
    }
    await sleep(200);
  }
  throw new Error(`nothing answered at ${url} within ${timeoutMs} ms`);
}

/** Fails fast, with a clear message, when another process already listens on one of the bench's ports. */
export async function assertPortFree(port: number): Promise<void> {
  await new Promise<void>((resolve, reject) => {
    const server = net.createServer();
    server.once('error', () => reject(new Error(`port ${port} is in use; stop what listens there (or set BENCH_PORTS) and run again`)));
    server.listen(port, '127.0.0.1', () => server.close(() => resolve()));
  });
}

/** The value at quantile q (0–1) of the numbers, by the nearest-rank method. */
export function quantile(values: readonly number[], q: number): number {
  if (!values.length) return NaN;
  const sorted = [...values].sort((a, b) => a - b);
  const rank = Math.max(1, Math.ceil(q * sorted.length));
  return sorted[Math.min(sorted.length, rank) - 1]!;
}

export function median(values: readonly number[]): number {
  return quantile(values, 0.5);
}

export const round = (n: number, digits = 0) => {
  const f = 10 ** digits;
  return Math.round(n * f) / f;
};

/** Bytes after gzip at the default level (6), as a web server would send them. */
export function gzipSize(data: Buffer | string): number {
  return zlib.gzipSync(data, { level: 6 }).length;
}

/** A tiny cookie jar for one signed-in visitor: keeps name=value pairs from Set-Cookie. */
export class Visitor {
  cookies = new Map<string, string>();
  constructor(readonly origin: string, readonly localAddress?: string) {}

  header(): string {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
  }

  keep(res: Response): void {
    for (const line of res.headers.getSetCookie()) {
      const [pair] = line.split(';');
      const eq = pair!.indexOf('=');
      const name = pair!.slice(0, eq).trim();
      const value = pair!.slice(eq + 1).trim();
      if (/max-age=0/i.test(line) || value === '') this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
  }

  async request(pathOrUrl: string, init: RequestInit & { json?: unknown } = {}): Promise<Response> {
    const url = pathOrUrl.startsWith('http') ? pathOrUrl : `${this.origin}${pathOrUrl}`;
    const headers = new Headers(init.headers);
    if (this.cookies.size) headers.set('cookie', this.header());
    headers.set('origin', this.origin);
    let body = init.body;
    if (init.json !== undefined) {
      headers.set('content-type', 'application/json');
      body = JSON.stringify(init.json);
    }
    const res = this.localAddress
      ? await requestFrom(this.localAddress, url, init.method ?? 'GET', headers, typeof body === 'string' ? body : undefined)
      : await fetch(url, { ...init, headers, body, redirect: 'manual' });
    this.keep(res);
    return res;
  }
}

/** One HTTP request sent from a given loopback address (fetch cannot choose it), answered as a Response. */
function requestFrom(localAddress: string, url: string, method: string, headers: Headers, body: string | undefined): Promise<Response> {
  return new Promise((resolve, reject) => {
    const outgoing: Record<string, string> = Object.fromEntries(headers);
    if (body !== undefined) outgoing['content-length'] = String(Buffer.byteLength(body));
    const req = http.request(url, { method, headers: outgoing, localAddress }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => {
        const answer = new Headers();
        for (let i = 0; i < res.rawHeaders.length; i += 2) answer.append(res.rawHeaders[i]!, res.rawHeaders[i + 1]!);
        const status = res.statusCode ?? 0;
        resolve(new Response(status === 204 || status === 304 ? null : Buffer.concat(chunks), { status, headers: answer }));
      });
      res.on('error', reject);
    });
    req.on('error', reject);
    req.end(body);
  });
}
