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
  /** Seconds of measured load. */
  seconds: number;
  /** Answers received over the warm-up and the measured run. */
  allRequests: number;
  /** The server's CPU time per answer (when its pid was given): what the route costs, whatever else the machine is doing. */
  cpuMsPerRequest?: number;
}

export interface HttpTarget {
  url: string;
  method?: 'GET' | 'POST';
  headers?: Record<string, string>;
  body?: string;
  requests?: autocannon.Request[];
  serverPid?: number;
}

interface Run { requests: number; allRequests: number; non2xx: number; errors: number; seconds: number; cpuSeconds?: number; latencies: number[] }

/**
 * One autocannon run of `warmupSeconds + seconds` on the same connections: answers in the first
 * `warmupSeconds` are not counted (a server in service runs warm: its first requests compile the
 * route's code, and fresh connections arrive in one burst), failures anywhere are. `atMeasureStart`
 * runs when the counted part begins (e.g. to count what the warm-up stored).
 */
async function load(target: HttpTarget, opts: { seconds: number; warmupSeconds: number; connections: number; atMeasureStart?: () => Promise<void> }): Promise<Run> {
  const latencies: number[] = [];
  let counting = opts.warmupSeconds <= 0;
  let cpuAtStart = counting ? cpuSeconds(target.serverPid) : undefined;
  let startedAt = performance.now();
  let atStart: Promise<void> | undefined = counting ? opts.atMeasureStart?.() : undefined;
  const timer = counting ? undefined : setTimeout(() => {
    counting = true;
    startedAt = performance.now();
    cpuAtStart = cpuSeconds(target.serverPid);
    atStart = opts.atMeasureStart?.();
  }, opts.warmupSeconds * 1000);
  let non2xx = 0;
  const result = await new Promise<autocannon.Result>((resolve, reject) => {
    const instance = autocannon({
      url: target.url,
      method: target.method ?? 'GET',
      headers: target.headers,
      body: target.body,
      requests: target.requests,
      connections: opts.connections,
      duration: opts.warmupSeconds + opts.seconds,
    }, (error, done) => (error ? reject(error) : resolve(done)));
    instance.on('response', (_client, status, _bytes, responseTime) => {
      if (status < 200 || status >= 300) non2xx++;
      if (counting) latencies.push(responseTime);
    });
  });
  const seconds = (performance.now() - startedAt) / 1000;
  const cpuAtEnd = cpuSeconds(target.serverPid);
  clearTimeout(timer);
  await atStart;
  return {
    requests: latencies.length,
    allRequests: result.requests.total,
    non2xx,
    errors: result.errors + result.timeouts,
    seconds,
    cpuSeconds: cpuAtStart === undefined || cpuAtEnd === undefined ? undefined : cpuAtEnd - cpuAtStart,
    latencies,
  };
}

function figures(runs: Run[]): HttpFigures {
  const sum = (pick: (r: Run) => number) => runs.reduce((total, r) => total + pick(r), 0);
  const requests = sum((r) => r.requests);
  const cpu = runs.every((r) => r.cpuSeconds !== undefined) ? sum((r) => r.cpuSeconds ?? 0) : undefined;
  const sorted = runs.flatMap((r) => r.latencies).sort((a, b) => a - b);
  return {
    requestsPerSecond: requests / Math.max(1e-9, sum((r) => r.seconds)),
    // The 99th percentile of every counted answer's time (nearest rank).
    p99Ms: sorted.length ? +sorted[Math.min(sorted.length - 1, Math.ceil(sorted.length * 0.99) - 1)].toFixed(1) : NaN,
    non2xx: sum((r) => r.non2xx),
    errors: sum((r) => r.errors),
    requests,
    seconds: sum((r) => r.seconds),
    allRequests: sum((r) => r.allRequests),
    cpuMsPerRequest: cpu === undefined ? undefined : +((cpu * 1000) / Math.max(1, requests)).toFixed(3),
  };
}

export interface MeasureOptions {
  durationSeconds: number;
  /** Seconds of load before the counted part, on the same connections (see `load`). */
  warmupSeconds: number;
  /** Runs when the counted part of the route's run begins. */
  atMeasureStart?: () => Promise<void>;
  connections?: number;
}

/** Requests per second, p99 and server CPU of one target, after a warm-up. */
export async function measureHttp(opts: HttpTarget & MeasureOptions): Promise<HttpFigures> {
  return figures([await load(opts, { seconds: opts.durationSeconds, warmupSeconds: opts.warmupSeconds, connections: opts.connections ?? 50, atMeasureStart: opts.atMeasureStart })]);
}

/**
 * A route measured in one run, bracketed by runs of its reference of half the length before and
 * after, its ratio taken against both together: on a shared host the speed available drifts over
 * seconds, and a reference measured a minute away from the route drifts the ratio with it.
 */
export async function measureAgainst(subject: HttpTarget, reference: HttpTarget, opts: MeasureOptions): Promise<{ subject: HttpFigures; reference: HttpFigures }> {
  const connections = opts.connections ?? 50;
  const referenceRun = () => load(reference, { seconds: opts.durationSeconds / 2, warmupSeconds: Math.min(opts.warmupSeconds, 2), connections });
  const before = await referenceRun();
  const measured = await load(subject, { seconds: opts.durationSeconds, warmupSeconds: opts.warmupSeconds, connections, atMeasureStart: opts.atMeasureStart });
  const after = await referenceRun();
  return { subject: figures([measured]), reference: figures([before, after]) };
}

export function median(values: number[]) {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = Math.floor(sorted.length / 2);
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}
