import fs from 'node:fs';
import path from 'node:path';
import type { ChildProcess } from 'node:child_process';
import { portOpen, spawnService, waitForPort } from './exec';

const ROOT = path.resolve(import.meta.dirname, '../..');

export interface RunningService {
  name: string;
  url: string;
  stop: () => Promise<void>;
}

function stopChild(child: ChildProcess): Promise<void> {
  return new Promise((resolve) => {
    if (child.exitCode !== null || child.signalCode) return resolve();
    const timer = setTimeout(() => child.kill('SIGKILL'), 5_000);
    child.once('exit', () => {
      clearTimeout(timer);
      resolve();
    });
    child.kill('SIGTERM');
  });
}

/** The local mail catcher: SMTP for the app, a web inbox and REST API for people and tests. */
export async function startMailCatcher(opts: { smtpPort: number; webPort: number; mailDir: string; quiet?: boolean }): Promise<RunningService & { apiUrl: string; smtpPort: number }> {
  const url = `http://127.0.0.1:${opts.webPort}`;
  if ((await portOpen(opts.smtpPort)) && (await portOpen(opts.webPort))) {
    return { name: 'mail catcher', url, apiUrl: `${url}/api`, smtpPort: opts.smtpPort, stop: async () => undefined };
  }
  fs.mkdirSync(opts.mailDir, { recursive: true });
  const child = spawnService('mail', process.execPath, [
    path.join(ROOT, 'node_modules/maildev/dist/bin/maildev.js'),
    '--smtp', String(opts.smtpPort), '--web', String(opts.webPort),
    '--ip', '127.0.0.1', '--web-ip', '127.0.0.1', '--mail-directory', opts.mailDir, '--silent',
  ], { quiet: opts.quiet });
  await waitForPort(opts.webPort);
  await waitForPort(opts.smtpPort);
  return { name: 'mail catcher', url, apiUrl: `${url}/api`, smtpPort: opts.smtpPort, stop: () => stopChild(child) };
}

/** Our local fake of the payment API, in its own process, as a real payment service would be. */
export async function startPaymentFake(opts: { port: number; stateFile: string; webhookUrl: string; webhookSecret: string; publicUrl?: string; quiet?: boolean }): Promise<RunningService> {
  const url = `http://127.0.0.1:${opts.port}`;
  if (await portOpen(opts.port)) return { name: 'payment fake', url, stop: async () => undefined };
  fs.mkdirSync(path.dirname(opts.stateFile), { recursive: true });
  const child = spawnService('payments', process.execPath, ['--import', 'tsx', path.join(ROOT, 'server/fakes/stripe/main.ts')], {
    quiet: opts.quiet,
    env: {
      ...process.env,
      STRIPE_FAKE_PORT: String(opts.port),
      STRIPE_FAKE_STATE_FILE: opts.stateFile,
      STRIPE_WEBHOOK_URL: opts.webhookUrl,
      STRIPE_WEBHOOK_SECRET: opts.webhookSecret,
      STRIPE_FAKE_PUBLIC_URL: opts.publicUrl ?? url,
    },
  });
  await waitForPort(opts.port);
  return { name: 'payment fake', url, stop: () => stopChild(child) };
}

export { stopChild };
