/**
 * `npm start`: everything the product needs on this machine, on loopback, then the app on :3000.
 * Safe to run twice (reuses a running database and services); Ctrl-C stops what it started.
 * `npm run dev` does the same but serves the client from Vite's dev server with hot reload.
 */
import path from 'node:path';
import { spawn } from 'node:child_process';
import { buildClientIfNeeded } from './client-build';
import { ensureDatabase, startCluster, type Cluster } from './postgres';
import { startMailCatcher, startPaymentFake, stopChild, type RunningService } from './services';
import { DEMO_PASSWORD, demoSignIns, seedDemo } from './demo-data';
import { createDb, migrateLatest } from '../db';
import { syncOnStart } from './sync';
import { seedDemoBilling } from './demo-billing';
import { seedDemoCertificates } from './demo-certificates';
import { seedDemoReadiness } from './demo-readiness';

const ROOT = path.resolve(import.meta.dirname, '../..');
const DATA = path.join(ROOT, '.data');
const devMode = process.argv.includes('--dev');

const ports = {
  app: Number(process.env.PORT ?? 3000),
  postgres: Number(process.env.PG_PORT ?? 54329),
  smtp: Number(process.env.SMTP_PORT ?? 1025),
  inbox: Number(process.env.MAIL_WEB_PORT ?? 1080),
  payments: Number(process.env.STRIPE_FAKE_PORT ?? 12111),
};

const cleanups: (() => Promise<void> | void)[] = [];
let stopping = false;
async function stopAll(code = 0) {
  if (stopping) return;
  stopping = true;
  console.log('\nStopping…');
  for (const cleanup of cleanups.reverse()) {
    try {
      await cleanup();
    } catch (error) {
      console.error((error as Error).message);
    }
  }
  process.exit(code);
}
process.once('SIGINT', () => void stopAll());
process.once('SIGTERM', () => void stopAll());

async function main() {
  let databaseUrl = process.env.DATABASE_URL;
  let cluster: Cluster | undefined;
  if (!databaseUrl) {
    cluster = await startCluster({ baseDir: path.join(DATA, 'postgres'), port: ports.postgres });
    // A cluster another npm start left running is theirs to stop.
    if (!cluster.reused) cleanups.push(() => cluster!.stop());
    await ensureDatabase(cluster.adminUrl(), 'plumewright');
    databaseUrl = cluster.adminUrl('plumewright');
  }

  const appUrl = process.env.APP_URL ?? `http://127.0.0.1:${devMode ? 5173 : ports.app}`;
  const webhookSecret = process.env.STRIPE_WEBHOOK_SECRET ?? 'whsec_plumewright_local_fake';
  const services: RunningService[] = [];
  const mail = await startMailCatcher({ smtpPort: ports.smtp, webPort: ports.inbox, mailDir: path.join(DATA, 'mail') });
  services.push(mail);
  cleanups.push(mail.stop);
  if (!process.env.STRIPE_API_URL) {
    const payments = await startPaymentFake({
      port: ports.payments,
      stateFile: path.join(DATA, 'payments/state.json'),
      webhookUrl: `http://127.0.0.1:${ports.app}/api/webhooks/stripe`,
      webhookSecret,
    });
    services.push(payments);
    cleanups.push(payments.stop);
  }

  Object.assign(process.env, {
    NODE_ENV: devMode ? 'development' : 'production',
    DATABASE_URL: databaseUrl,
    PORT: String(ports.app),
    APP_URL: appUrl,
    SMTP_PORT: String(ports.smtp),
    MAIL_INBOX_URL: mail.url,
    STRIPE_API_URL: process.env.STRIPE_API_URL ?? `http://127.0.0.1:${ports.payments}`,
    STRIPE_WEBHOOK_SECRET: webhookSecret,
    SERVE_CLIENT: devMode ? 'false' : 'true',
    SESSION_SECRET: process.env.SESSION_SECRET ?? 'local-demo-session-secret-not-for-production',
  });

  const knex = createDb(databaseUrl, { min: 0, max: 2 });
  await migrateLatest(knex);
  const seeded = await seedDemo(knex);
  await syncOnStart(knex);
  console.log(await seedDemoBilling(knex).catch((error: Error) => `Demo billing: not set up (${error.message}).`));
  await seedDemoCertificates(knex, appUrl);
  await seedDemoReadiness(knex);
  await knex.destroy();

  if (devMode) {
    const vite = spawn(process.execPath, [path.join(ROOT, 'node_modules/vite/bin/vite.js')], { cwd: ROOT, stdio: 'inherit', env: { ...process.env, API_PORT: String(ports.app) } });
    cleanups.push(() => stopChild(vite));
  } else {
    buildClientIfNeeded();
  }

  process.env.MIGRATE_ON_START = 'false';
  const { startServer } = await import('../index');
  const { shutdown } = await startServer();
  cleanups.push(shutdown);

  console.log(`
  Plumewright is running.
    App:          ${appUrl}
    Mail inbox:   ${mail.url}
    Payment fake: ${process.env.STRIPE_API_URL}
    Database:     ${cluster ? `PostgreSQL on 127.0.0.1:${cluster.port} (data in .data/postgres)` : 'DATABASE_URL'}
    Demo data:    ${seeded === 'seeded' ? 'seeded now' : 'already in place'}

  Demo sign-ins (password: ${DEMO_PASSWORD}):
${demoSignIns.map((s) => `    ${s.email.padEnd(36)} ${s.note}`).join('\n')}

  Press Ctrl-C to stop everything started here.
`);
}

main().catch((error) => {
  console.error(error);
  void stopAll(1);
});
