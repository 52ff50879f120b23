import pino from 'pino';
import { createApp } from './app';
import { loadConfig } from './config';
import { bindModels, createDb, migrateLatest } from './db';
import { createMailer } from './mail/mailer';
import { startJobs } from './jobs';
import { withEmailLog } from './services/email-log';

/** Starts the API (and, in production mode, the built client) on one port. */
export async function startServer() {
  const config = loadConfig();
  const logger = pino({ level: config.logLevel });
  if (config.env === 'production' && !config.secureCookies && config.appUrl.startsWith('https:')) {
    logger.warn('APP_URL is https but SECURE_COOKIES is not "true": session cookies go out without the Secure flag. Set SECURE_COOKIES=true behind a TLS proxy that sends X-Forwarded-Proto.');
  }
  const knex = createDb(config.databaseUrl, { min: 0, max: 20 });
  bindModels(knex);
  if (process.env.MIGRATE_ON_START !== 'false') await migrateLatest(knex);
  // Every message goes through the e-mail log (operators read it at /operate/emails).
  const mailer = withEmailLog(knex, createMailer(config, logger), logger);
  const ctx = { config, knex, logger, mailer };
  const { app, close } = createApp(ctx);
  // Reminders and digests (pg-boss); JOBS=off leaves them to other processes.
  const jobs = process.env.JOBS === 'off' ? null : await startJobs(ctx);
  const server = app.listen(config.port, config.host);
  await new Promise<void>((resolve, reject) => {
    server.once('listening', resolve);
    server.once('error', reject);
  });
  logger.info(`Plumewright listening on http://${config.host}:${config.port}`);

  const shutdown = async () => {
    server.close();
    server.closeAllConnections();
    await jobs?.stop().catch((err) => logger.warn({ err }, 'job queue did not stop cleanly'));
    mailer.close();
    await close();
    await knex.destroy();
  };
  return { server, shutdown, ctx, jobs };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  startServer()
    .then(({ shutdown }) => {
      const stop = () => void shutdown().finally(() => process.exit(0));
      process.once('SIGINT', stop);
      process.once('SIGTERM', stop);
    })
    .catch((error) => {
      console.error(error);
      process.exit(1);
    });
}
