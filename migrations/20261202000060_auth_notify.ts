import type { Knex } from 'knex';

/**
 * Change notices for the in-process cache of sessions and signed-in users (server/services/auth-cache.ts).
 * Triggers, not application code, raise them, so every path that changes a session, a user, a
 * membership, a company or a subscription (sign-out, password change, seat moves, a webhook, a
 * hand-written SQL fix) reaches every app process through `LISTEN plumewright_auth`.
 * Payloads: `s:<sid>` one session, `u:<user id>` one user, `*` everything.
 */
export async function up(knex: Knex) {
  await knex.raw(`
    create function plumewright_auth_notify() returns trigger language plpgsql as $$
    begin
      if tg_table_name = 'session' then
        perform pg_notify('plumewright_auth', 's:' || old.sid);
      elsif tg_table_name = 'users' then
        perform pg_notify('plumewright_auth', 'u:' || old.id);
      elsif tg_table_name = 'memberships' then
        if tg_op <> 'INSERT' then perform pg_notify('plumewright_auth', 'u:' || old.user_id); end if;
        if tg_op <> 'DELETE' then perform pg_notify('plumewright_auth', 'u:' || new.user_id); end if;
      else
        perform pg_notify('plumewright_auth', '*');
      end if;
      return null;
    end $$`);
  await knex.raw('create trigger session_auth_notify after update or delete on session for each row execute function plumewright_auth_notify()');
  await knex.raw('create trigger users_auth_notify after update or delete on users for each row execute function plumewright_auth_notify()');
  await knex.raw('create trigger memberships_auth_notify after insert or update or delete on memberships for each row execute function plumewright_auth_notify()');
  await knex.raw('create trigger companies_auth_notify after update or delete on companies for each statement execute function plumewright_auth_notify()');
  await knex.raw('create trigger subscriptions_auth_notify after insert or update or delete on subscriptions for each statement execute function plumewright_auth_notify()');
}

export async function down(knex: Knex) {
  for (const table of ['session', 'users', 'memberships', 'companies', 'subscriptions']) {
    await knex.raw(`drop trigger if exists ${table}_auth_notify on ${table}`);
  }
  await knex.raw('drop function if exists plumewright_auth_notify()');
}
