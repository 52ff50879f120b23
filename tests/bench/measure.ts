import autocannon from 'autocannon';

export interface HttpFigures {
  requestsPerSecond: number;
  p99Ms: number;
  non2xx: number;
  errors: number;
  /** Answers received over the run. */
  requests: number;
}

export async function measureHttp(opts: {
  url: string;
  method?: 'GET' | 'POST';
  headers?: Record<string, string>;
  body?: string;
  requests?: autocannon.Request[];
  connections?: number;
  durationSeconds: number;
}): Promise<HttpFigures> {
  const result = await autocannon({
    url: opts.url,
    method: opts.method ?? 'GET',
    headers: opts.headers,
    body: opts.body,
    requests: opts.requests,
    connections: opts.connections ?? 50,
    duration: opts.durationSeconds,
  });
  return {
    requestsPerSecond: result.requests.average,
    p99Ms: result.latency.p99,
    non2xx: result.non2xx,
    errors: result.errors + result.timeouts,
    requests: result.requests.total,
  };
}

export function median(values: number[]) {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = Math.floor(sorted.length / 2);
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}
