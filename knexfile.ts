import fs from 'node:fs';
import path from 'node:path';
import type { Knex } from 'knex';

const MIGRATIONS_DIR = path.join(import.meta.dirname, 'migrations');

/**
 * Lists migrations/ and imports each file from our own code, so the same TypeScript migrations load
 * under tsx (npm start) and under vitest (which only transforms imports made by project code).
 */
class TypeScriptMigrationSource implements Knex.MigrationSource<string> {
  async getMigrations() {
    return fs.readdirSync(MIGRATIONS_DIR).filter((f) => /^\d+_.+\.ts$/.test(f)).sort();
  }
  getMigrationName(file: string) {
    return file;
  }
  async getMigration(file: string): Promise<Knex.Migration> {
    return import(path.join(MIGRATIONS_DIR, file));
  }
}

/** knex settings shared by the server, the migration script and the tests. */
export function knexConfig(databaseUrl: string, pool = { min: 0, max: 10 }): Knex.Config {
  return {
    client: 'pg',
    connection: databaseUrl,
    pool: { ...pool, idleTimeoutMillis: 10_000 },
    acquireConnectionTimeout: 5_000,
    migrations: { migrationSource: new TypeScriptMigrationSource(), tableName: 'knex_migrations' },
  };
}

export default knexConfig(process.env.DATABASE_URL ?? 'postgres://localhost/plumewright');
