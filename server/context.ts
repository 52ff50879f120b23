import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type { Passport } from 'passport';
import type { AppConfig } from './config';
import type { Mailer } from './mail/mailer';
import type { ReadCache } from './services/read-cache';

/** What every route module and service is given: no globals beyond this. */
export interface AppContext {
  config: AppConfig;
  knex: Knex;
  mailer: Mailer;
  logger: Logger;
  /** Set by the app factory; the sign-in route authenticates through it. */
  passport?: InstanceType<typeof Passport>;
  /** Set by the app factory: sessions, users and certificate lookups read a moment ago (server/services/read-cache.ts). */
  readCache?: ReadCache;
}
