import pino from 'pino';
import { createApp } from './app';
import { loadConfig } from './config';
import { bindModels, createDb, migrateLatest } from './db';
import { createMailer } from './mail/mailer';

/** Starts the API (and, in production mode, the built client) on one port. */
export async function startServer() {
  const config = loadConfig();
  const logger = pino({ level: config.logLevel });
  const knex = createDb(config.databaseUrl, { min: 0, max: 20 });
  bindModels(knex);
  if (process.env.MIGRATE_ON_START !== 'false') await migrateLatest(knex);
  const mailer = createMailer(config, logger);
  const ctx = { config, knex, logger, mailer };
  const { app, close } = createApp(ctx);
  const server = app.listen(config.port, config.host);
  await new Promise<void>((resolve, reject) => {
    server.once('listening', resolve);
    server.once('error', reject);
  });
  logger.info(`Plumewright listening on http://${config.host}:${config.port}`);

  const shutdown = async () => {
    server.close();
    server.closeAllConnections();
    mailer.close();
    await close();
    await knex.destroy();
  };
  return { server, shutdown, ctx };
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
