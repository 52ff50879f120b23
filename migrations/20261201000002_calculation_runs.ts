import type { Knex } from 'knex';

/** Each user's saved calculator runs: inputs and results, so a run can be reopened and re-run. */
export async function up(knex: Knex) {
  await knex.schema.createTable('calculation_runs', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.uuid('company_id').references('companies.id').onDelete('SET NULL');
    t.text('calculation_id').notNullable();
    t.text('label');
    t.jsonb('inputs').notNullable();
    t.jsonb('results').notNullable();
    t.jsonb('warnings').notNullable().defaultTo('[]');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['user_id', 'created_at']);
  });
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('calculation_runs');
}
