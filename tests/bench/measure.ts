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
  /** Answers received over the measured run. */
  requests: number;
  /** Answers received over the warm-up and the measured run. */
  allRequests: number;
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
  /** Seconds of the same load before the measured run, not counted (the server's code paths compiled). */
  warmupSeconds: number;
  /** Runs between the warm-up and the measured run (e.g. to count what the warm-up stored). */
  beforeMeasured?: () => Promise<void>;
  serverPid?: number;
}): Promise<HttpFigures> {
  const run = (duration: number) => autocannon({
    url: opts.url,
    method: opts.method ?? 'GET',
    headers: opts.headers,
    body: opts.body,
    requests: opts.requests,
    connections: opts.connections ?? 50,
    duration,
  });
  // A server in service runs warm: its first requests compile the route's code (V8 optimises what runs
  // often), which a short benchmark would otherwise count as its steady pace. Failures there still count.
  const warmup = opts.warmupSeconds > 0 ? await run(opts.warmupSeconds) : undefined;
  await opts.beforeMeasured?.();
  const cpuBefore = cpuSeconds(opts.serverPid);
  const result = await run(opts.durationSeconds);
  return {
    requestsPerSecond: result.requests.average,
    p99Ms: result.latency.p99,
    non2xx: result.non2xx + (warmup?.non2xx ?? 0),
    errors: result.errors + result.timeouts + (warmup ? warmup.errors + warmup.timeouts : 0),
    requests: result.requests.total,
    allRequests: result.requests.total + (warmup?.requests.total ?? 0),
    cpuMsPerRequest: cpuBefore === undefined ? undefined : +((((cpuSeconds(opts.serverPid) ?? cpuBefore) - cpuBefore) * 1000) / Math.max(1, result.requests.total)).toFixed(3),
  };
}

export function median(values: number[]) {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = Math.floor(sorted.length / 2);
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}
