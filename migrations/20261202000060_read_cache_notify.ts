import type { Knex } from 'knex';

/**
 * Change notices for the in-process read cache (server/services/read-cache.ts): sessions, signed-in
 * users and public certificate lookups. Triggers, not application code, raise them, so every path
 * that changes a session, user, membership, company, subscription or certificate (sign-out, a
 * password change, seat moves, a webhook, a revocation, a hand-written SQL fix) reaches every app
 * process through `LISTEN plumewright_cache`.
 * Payloads: `s:<sid>` one session, `u:<user id>` one user, `c:<number>` one certificate, `*` everything.
 */
const TABLES: [table: string, events: string, level: 'row' | 'statement'][] = [
  ['session', 'update or delete', 'row'],
  ['users', 'update or delete', 'row'],
  ['memberships', 'insert or update or delete', 'row'],
  ['certificates', 'insert or update or delete', 'row'],
  ['companies', 'update or delete', 'statement'],
  ['subscriptions', 'insert or update or delete', 'statement'],
];

export async function up(knex: Knex) {
  await knex.raw(`
    create function plumewright_cache_notify() returns trigger language plpgsql as $$
    begin
      if tg_level = 'STATEMENT' then
        perform pg_notify('plumewright_cache', '*');
      elsif tg_table_name = 'session' then
        perform pg_notify('plumewright_cache', 's:' || old.sid);
      elsif tg_table_name = 'users' then
        perform pg_notify('plumewright_cache', 'u:' || old.id);
      elsif tg_table_name = 'memberships' then
        if tg_op <> 'INSERT' then perform pg_notify('plumewright_cache', 'u:' || old.user_id); end if;
        if tg_op <> 'DELETE' then perform pg_notify('plumewright_cache', 'u:' || new.user_id); end if;
      elsif tg_table_name = 'certificates' then
        if tg_op <> 'INSERT' then perform pg_notify('plumewright_cache', 'c:' || old.number); end if;
        if tg_op <> 'DELETE' then perform pg_notify('plumewright_cache', 'c:' || new.number); end if;
      end if;
      return null;
    end $$`);
  for (const [table, events, level] of TABLES) {
    await knex.raw(`create trigger ${table}_cache_notify after ${events} on ${table} for each ${level} execute function plumewright_cache_notify()`);
  }
}

export async function down(knex: Knex) {
  for (const [table] of TABLES) await knex.raw(`drop trigger if exists ${table}_cache_notify on ${table}`);
  await knex.raw('drop function if exists plumewright_cache_notify()');
}
