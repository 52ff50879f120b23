import fs from 'node:fs';
import autocannon from 'autocannon';

/** CPU seconds a process has used (user + system), from /proc; undefined where there is no /proc. */
function cpuSeconds(pid: number | undefined): number | undefined {
  if (!pid) return undefined;
  try {
    const fields = fs.readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1].split(' ');
    return (Number(fields[11]) + Number(fields[12])) / 100;
  } catch {
    return undefined;
  }
}

export interface HttpFigures {
  requestsPerSecond: number;
  p99Ms: number;
  non2xx: number;
  errors: number;
  /** Answers received over the run. */
  requests: number;
  /** The server's CPU time per answer (when its pid was given): what the route costs, whatever else the machine is doing. */
  cpuMsPerRequest?: number;
}

export async function measureHttp(opts: {
  url: string;
  method?: 'GET' | 'POST';
  headers?: Record<string, string>;
  body?: string;
  requests?: autocannon.Request[];
  connections?: number;
  durationSeconds: number;
  serverPid?: number;
}): Promise<HttpFigures> {
  const cpuBefore = cpuSeconds(opts.serverPid);
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
    cpuMsPerRequest: cpuBefore === undefined ? undefined : +((((cpuSeconds(opts.serverPid) ?? cpuBefore) - cpuBefore) * 1000) / Math.max(1, result.requests.total)).toFixed(3),
  };
}

export function median(values: number[]) {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = Math.floor(sorted.length / 2);
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}
