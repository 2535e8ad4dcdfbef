// The few parts of autocannon 9's API the bench uses (the package ships no types).
declare module 'autocannon' {
  interface Histogram {
    average: number;
    mean: number;
    stddev: number;
    min: number;
    max: number;
    total: number;
    p50: number;
    p90: number;
    p97_5: number;
    p99: number;
  }
  interface Result {
    latency: Histogram;
    requests: Histogram & { sent: number };
    throughput: Histogram;
    errors: number;
    timeouts: number;
    non2xx: number;
    '2xx': number;
    '4xx': number;
    '5xx': number;
    duration: number;
  }
  interface Options {
    url: string;
    connections?: number;
    duration?: number;
    method?: 'GET' | 'POST';
    headers?: Record<string, string>;
    body?: string;
    timeout?: number;
  }
  function autocannon(options: Options): Promise<Result>;
  export default autocannon;
}
