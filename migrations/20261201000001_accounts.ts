import type { Knex } from 'knex';

export async function up(knex: Knex) {
  await knex.raw('create extension if not exists citext');

  await knex.schema.createTable('companies', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.text('name').notNullable();
    // customer: a testing company that buys seats; platform: our own staff; auditing: an assessor's firm.
    t.text('kind').notNullable().defaultTo('customer');
    t.timestamps(true, true);
  });
  await knex.raw("alter table companies add constraint companies_kind_check check (kind in ('customer', 'platform', 'auditing'))");

  await knex.schema.createTable('users', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.specificType('email', 'citext').notNullable().unique();
    t.text('name').notNullable();
    t.text('password_hash');
    t.timestamp('password_changed_at', { useTz: true });
    t.timestamp('disabled_at', { useTz: true });
    t.timestamps(true, true);
  });

  await knex.schema.createTable('memberships', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.uuid('company_id').notNullable().references('companies.id').onDelete('CASCADE');
    t.specificType('roles', 'text[]').notNullable().defaultTo('{}');
    // The field crew a member works with (a company's own grouping, used to filter readiness).
    t.text('crew');
    t.timestamps(true, true);
    t.unique(['user_id', 'company_id']);
    t.index(['company_id']);
  });
  await knex.raw(
    "alter table memberships add constraint memberships_roles_check check (roles <@ array['admin','manager','crew','auditor','operator']::text[])",
  );

  await knex.schema.createTable('password_reset_tokens', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.text('token_hash').notNullable().unique();
    t.timestamp('expires_at', { useTz: true }).notNullable();
    t.timestamp('used_at', { useTz: true });
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });

  await knex.schema.createTable('audit_log', (t) => {
    t.bigIncrements('id');
    t.timestamp('at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.uuid('actor_user_id').references('users.id').onDelete('SET NULL');
    t.uuid('company_id').references('companies.id').onDelete('SET NULL');
    t.text('action').notNullable();
    t.text('target_type');
    t.text('target_id');
    t.jsonb('details').notNullable().defaultTo('{}');
    t.text('ip');
    t.index(['company_id', 'at']);
    t.index(['actor_user_id', 'at']);
  });

  // connect-pg-simple's table, as its own table.sql defines it.
  await knex.schema.createTable('session', (t) => {
    t.string('sid').primary();
    t.json('sess').notNullable();
    t.timestamp('expire', { precision: 6 }).notNullable().index('IDX_session_expire');
  });
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('session');
  await knex.schema.dropTableIfExists('audit_log');
  await knex.schema.dropTableIfExists('password_reset_tokens');
  await knex.schema.dropTableIfExists('memberships');
  await knex.schema.dropTableIfExists('users');
  await knex.schema.dropTableIfExists('companies');
}
