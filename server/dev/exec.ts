import { spawn, spawnSync, type SpawnOptions } from 'node:child_process';
import net from 'node:net';

export const isRoot = () => typeof process.getuid === 'function' && process.getuid() === 0;

/** Runs a command to completion; throws with its output when it fails. */
export function run(cmd: string, args: string[], opts: { asUser?: string; cwd?: string; quiet?: boolean } = {}) {
  const [file, argv] = opts.asUser && isRoot() ? ['runuser', ['-u', opts.asUser, '--', cmd, ...args]] : [cmd, args];
  const result = spawnSync(file, argv, { cwd: opts.cwd, encoding: 'utf8' });
  if (result.status !== 0) {
    const output = `${result.stdout ?? ''}${result.stderr ?? ''}`.trim();
    throw new Error(`${cmd} ${args.join(' ')} failed (${result.status ?? result.signal}): ${output || result.error?.message}`);
  }
  return result.stdout;
}

export function commandExists(cmd: string) {
  return spawnSync('sh', ['-c', `command -v ${cmd}`], { encoding: 'utf8' }).status === 0;
}

/** Installs Debian packages when a binary is missing; only possible as root, as on CI and our machines. */
export function aptInstall(packages: string[], why: string) {
  if (!isRoot()) {
    throw new Error(`${why} is missing. Install it with: sudo apt-get install -y ${packages.join(' ')}`);
  }
  console.log(`[setup] installing ${packages.join(' ')} from Debian's packages (${why} is missing)…`);
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  for (const args of [['update'], ['install', '-y', '--no-install-recommends', ...packages]]) {
    const r = spawnSync('apt-get', args, { stdio: 'inherit', env });
    if (r.status !== 0) throw new Error(`apt-get ${args.join(' ')} failed`);
  }
}

/** Asks the kernel for a free loopback port. */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = net.createServer();
    server.unref();
    server.on('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const address = server.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      server.close(() => resolve(port));
    });
  });
}

export function portOpen(port: number, host = '127.0.0.1'): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ port, host });
    socket.once('connect', () => { socket.destroy(); resolve(true); });
    socket.once('error', () => resolve(false));
  });
}

export async function waitForPort(port: number, timeoutMs = 20_000) {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    if (await portOpen(port)) return;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`Nothing answered on 127.0.0.1:${port} within ${timeoutMs} ms`);
}

export function spawnService(name: string, cmd: string, args: string[], opts: SpawnOptions & { quiet?: boolean } = {}) {
  const child = spawn(cmd, args, { stdio: opts.quiet ? 'ignore' : ['ignore', 'inherit', 'inherit'], ...opts });
  child.on('exit', (code, signal) => {
    if (code && code !== 0) console.error(`[${name}] exited with ${code ?? signal}`);
  });
  return child;
}
