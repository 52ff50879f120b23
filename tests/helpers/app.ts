import pino from 'pino';
import type { Knex } from 'knex';
import { createApp } from '../../server/app';
import { loadConfig, type AppConfig } from '../../server/config';
import type { AppContext } from '../../server/context';
import { bindModels, createDb } from '../../server/db';
import { createMailer } from '../../server/mail/mailer';
import { withEmailLog } from '../../server/services/email-log';
import { createTestDatabase } from './db';

export interface TestApp {
  app: ReturnType<typeof createApp>['app'];
  routes: ReturnType<typeof createApp>['routes'];
  ctx: AppContext;
  knex: Knex;
  databaseUrl: string;
  close: () => Promise<void>;
}

/** The real app factory on a database of this test file's own. */
export async function createTestApp(overrides: Partial<AppConfig> = {}, env: NodeJS.ProcessEnv = {}): Promise<TestApp> {
  const db = await createTestDatabase();
  const config = {
    ...loadConfig({ ...process.env, NODE_ENV: 'test', DATABASE_URL: db.url, LOGIN_RATE_MAX: '1000', ...env }),
    ...overrides,
  };
  const logger = pino({ level: process.env.TEST_LOG_LEVEL ?? 'silent' });
  const knex = createDb(db.url, { min: 0, max: 10 });
  bindModels(knex);
  // As in server/index.ts: every message is written to the e-mail log.
  const mailer = withEmailLog(knex, createMailer(config, logger), logger);
  const ctx: AppContext = { config, knex, logger, mailer };
  const created = createApp(ctx);
  return {
    app: created.app,
    routes: created.routes,
    ctx,
    knex,
    databaseUrl: db.url,
    close: async () => {
      mailer.close();
      await created.close();
      await knex.destroy();
      await db.drop();
    },
  };
}
