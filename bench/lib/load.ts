/**
 * Throughput and latency with autocannon: each app route against the bare server returning a body of
 * the same bytes from memory, one after the other in the same run.
 */
import autocannon from 'autocannon';
import { log, round, sleep } from './util';

export const CONNECTIONS = Number(process.env.BENCH_CONNECTIONS ?? 50);
export const DURATION_S = Number(process.env.BENCH_DURATION_S ?? 20);
const WARMUP_S = Number(process.env.BENCH_WARMUP_S ?? 3);

export interface LoadFigures {
  url: string;
  requestsPerS: number;
  total: number;
  p50Ms: number;
  p90Ms: number;
  p99Ms: number;
  maxMs: number;
  /** Socket errors + timeouts + non-2xx answers. */
  errors: number;
  non2xx: number;
  bodyBytes: number;
}

export interface LoadTarget {
  name: string;
  method: 'GET' | 'POST';
  appUrl: string;
  bareUrl: string;
  body?: string;
  bodyBytes: number;
}

export interface LoadResult {
  name: string;
  method: string;
  app: LoadFigures;
  bare: LoadFigures;
  /** App requests/s as a share of the bare server's. */
  ratio: number;
}

async function run(url: string, target: LoadTarget, durationS: number): Promise<LoadFigures> {
  const result = await autocannon({
    url,
    connections: CONNECTIONS,
    duration: durationS,
    method: target.method,
    timeout: 10,
    ...(target.body ? { body: target.body, headers: { 'content-type': 'application/json' } } : {}),
  });
  return {
    url,
    requestsPerS: round(result.requests.total / result.duration, 1),
    total: result.requests.total,
    p50Ms: result.latency.p50,
    p90Ms: result.latency.p90,
    p99Ms: result.latency.p99,
    maxMs: result.latency.max,
    errors: result.errors + result.timeouts + result.non2xx,
    non2xx: result.non2xx,
    bodyBytes: target.bodyBytes,
  };
}

export async function measureLoad(targets: LoadTarget[]): Promise<LoadResult[]> {
  const results: LoadResult[] = [];
  for (const target of targets) {
    log(`autocannon: ${target.name} — bare server ${DURATION_S} s`);
    const bare = await run(target.bareUrl, target, DURATION_S);
    log(`autocannon: ${target.name} — app warm-up ${WARMUP_S} s, then ${DURATION_S} s`);
    await run(target.appUrl, target, WARMUP_S);
    // Requests cut off by the end of the warm-up are still being answered: let them drain first.
    await sleep(2_000);
    const app = await run(target.appUrl, target, DURATION_S);
    const ratio = round(app.requestsPerS / bare.requestsPerS, 3);
    log(`  ${target.name}: app ${app.requestsPerS}/s p50 ${app.p50Ms} ms p99 ${app.p99Ms} ms; bare ${bare.requestsPerS}/s; ratio ${(ratio * 100).toFixed(1)} %`);
    results.push({ name: target.name, method: target.method, app, bare, ratio });
  }
  return results;
}
