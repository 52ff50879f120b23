import type { Knex } from 'knex';

/**
 * A passed exam, recorded as an event: the exam runner writes it, the certificate issuer consumes it
 * (sets consumed_at and certificate_id) exactly once.
 */
export async function up(knex: Knex) {
  await knex.schema.createTable('exam_passes', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.uuid('company_id').references('companies.id').onDelete('SET NULL');
    t.text('area_id').notNullable().references('areas.id');
    // Set by the exams migration's foreign key once exam attempts exist; demo history may have none.
    t.uuid('exam_attempt_id').unique();
    t.decimal('score_pct', 5, 2).notNullable();
    t.integer('duration_seconds');
    t.timestamp('passed_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('consumed_at', { useTz: true });
    t.uuid('certificate_id');
    t.index(['user_id', 'area_id']);
  });
  await knex.raw('create index exam_passes_unconsumed on exam_passes (passed_at) where consumed_at is null');
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('exam_passes');
}
