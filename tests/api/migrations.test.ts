import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Knex } from 'knex';
import { createDb } from '../../server/db';
import { dropDatabase, withAdminClient } from '../../server/dev/postgres';

let knex: Knex;
const name = `pw_t_migrations_${process.pid}`;

beforeAll(async () => {
  await withAdminClient(process.env.TEST_ADMIN_URL!, (c) => c.query(`create database "${name}"`));
  const url = new URL(process.env.TEST_ADMIN_URL!);
  url.pathname = `/${name}`;
  knex = createDb(url.toString(), { min: 0, max: 1 });
});
afterAll(async () => {
  await knex.destroy();
  await dropDatabase(process.env.TEST_ADMIN_URL!, name);
});

describe('migrations', () => {
  it('go up, all the way down, and up again on an empty database', async () => {
    await knex.migrate.latest();
    const tables = async () => (await knex.raw("select tablename from pg_tables where schemaname = 'public' and tablename not like 'knex_%'")).rows.map((r: { tablename: string }) => r.tablename).sort();
    const up = await tables();
    expect(up).toEqual(expect.arrayContaining(['companies', 'users', 'memberships', 'session', 'audit_log']));
    await knex.migrate.rollback(undefined, true);
    expect(await tables()).toEqual([]);
    await knex.migrate.latest();
    expect(await tables()).toEqual(up);
  });
});
