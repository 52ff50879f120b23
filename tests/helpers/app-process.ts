import path from 'node:path';
import { spawn, type ChildProcess } from 'node:child_process';

const ROOT = path.resolve(import.meta.dirname, '../..');

/** The app as its own operating-system process (`server/index.ts`, as in production), for crash tests. */
export interface AppProcess {
  url: string;
  port: number;
  pid: number;
  /** SIGKILL: no shutdown handler runs, open transactions and sockets are simply cut. */
  kill(): Promise<void>;
  /** SIGTERM: the app's own orderly shutdown. */
  stop(): Promise<void>;
  /** What the process printed, for failure messages. */
  output(): string;
}

const running = new Set<ChildProcess>();
// A test run that dies half-way never leaves an app process behind.
process.once('exit', () => {
  for (const child of running) child.kill('SIGKILL');
});

function exited(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve();
  return new Promise((resolve) => child.once('exit', () => resolve()));
}

/**
 * Starts `server/index.ts` under tsx on `port` against `databaseUrl` (already migrated), and waits
 * until /api/health answers 200. Scheduled jobs are off unless `env.JOBS` says otherwise.
 */
export async function startAppProcess(opts: { databaseUrl: string; port: number; env?: NodeJS.ProcessEnv; timeoutMs?: number }): Promise<AppProcess> {
  const child = spawn(process.execPath, ['--import', 'tsx', path.join(ROOT, 'server/index.ts')], {
    cwd: ROOT,
    stdio: ['ignore', 'pipe', 'pipe'],
    env: {
      ...process.env,
      NODE_ENV: 'test',
      DATABASE_URL: opts.databaseUrl,
      HOST: '127.0.0.1',
      PORT: String(opts.port),
      MIGRATE_ON_START: 'false',
      LOGIN_RATE_MAX: '1000',
      LOG_LEVEL: 'warn',
      JOBS: 'off',
      ...opts.env,
    },
  });
  running.add(child);
  child.once('exit', () => running.delete(child));
  let log = '';
  const keep = (chunk: Buffer) => {
    log = (log + chunk.toString('utf8')).slice(-20_000);
  };
  child.stdout!.on('data', keep);
  child.stderr!.on('data', keep);

  const url = `http://127.0.0.1:${opts.port}`;
  const until = Date.now() + (opts.timeoutMs ?? 45_000);
  for (;;) {
    if (child.exitCode !== null || child.signalCode !== null) {
      throw new Error(`the app process exited (${child.exitCode ?? child.signalCode}) before answering:\n${log}`);
    }
    const healthy = await fetch(`${url}/api/health`, { signal: AbortSignal.timeout(2_000) }).then((r) => r.status === 200, () => false);
    if (healthy) break;
    if (Date.now() > until) {
      child.kill('SIGKILL');
      throw new Error(`the app process did not answer on ${url} in time:\n${log}`);
    }
    await new Promise((r) => setTimeout(r, 150));
  }

  return {
    url,
    port: opts.port,
    pid: child.pid!,
    async kill() {
      child.kill('SIGKILL');
      await exited(child);
    },
    async stop() {
      if (child.exitCode !== null || child.signalCode !== null) return;
      const timer = setTimeout(() => child.kill('SIGKILL'), 10_000);
      child.kill('SIGTERM');
      await exited(child);
      clearTimeout(timer);
    },
    output: () => log,
  };
}

/** A browser-like client for an app reached over HTTP: keeps cookies and sends the CSRF token. */
export class HttpClient {
  private readonly jar = new Map<string, string>();
  private token?: string;

  constructor(public base: string) {}

  private keep(res: Response) {
    for (const cookie of res.headers.getSetCookie()) {
      const [pair] = cookie.split(';');
      this.jar.set(pair.split('=')[0], pair);
    }
  }

  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- response bodies are read as loosely as supertest's
  async request(method: string, path: string, body?: unknown): Promise<{ status: number; body: any }> {
    const headers: Record<string, string> = { cookie: [...this.jar.values()].join('; ') };
    if (method !== 'GET') {
      this.token ??= await this.csrf();
      headers['x-csrf-token'] = this.token;
      headers['content-type'] = 'application/json';
      headers.cookie = [...this.jar.values()].join('; ');
    }
    const res = await fetch(`${this.base}${path}`, { method, headers, body: body === undefined ? undefined : JSON.stringify(body), signal: AbortSignal.timeout(20_000) });
    this.keep(res);
    const text = await res.text();
    return { status: res.status, body: text ? JSON.parse(text) : null };
  }

  /** A fresh token (the session id changes at sign-in, and the token is bound to it). */
  async csrf() {
    const res = await fetch(`${this.base}/api/auth/csrf`, { headers: { cookie: [...this.jar.values()].join('; ') } });
    this.keep(res);
    this.token = ((await res.json()) as { csrfToken: string }).csrfToken;
    return this.token;
  }

  get(path: string) {
    return this.request('GET', path);
  }

  post(path: string, body: unknown = {}) {
    return this.request('POST', path, body);
  }

  put(path: string, body: unknown) {
    return this.request('PUT', path, body);
  }

  async signIn(email: string, password: string) {
    const res = await this.post('/api/auth/login', { email, password });
    if (res.status !== 200) throw new Error(`sign-in failed for ${email}: ${res.status} ${JSON.stringify(res.body)}`);
    await this.csrf();
  }
}
