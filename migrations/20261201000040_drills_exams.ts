import type { Knex } from 'knex';

/**
 * Drill attempts (practice, and the questions of an exam) and exam attempts.
 *
 * A drill attempt stores only its seed: the field sheet and the expected answers are regenerated
 * from it by the drill template (server/engine/drills), so nothing secret sits in a row the client
 * could be handed by mistake. An exam attempt snapshots its blueprint (time limit, pass mark and
 * each question's drill id and seed) when it starts, so an operator's later edit never changes a
 * running exam; its deadline is fixed on the server at the start.
 */
export async function up(knex: Knex) {
  await knex.schema.createTable('exam_attempts', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.uuid('company_id').references('companies.id').onDelete('SET NULL');
    t.text('area_id').notNullable().references('areas.id');
    // { title, timeLimitMinutes, passMarkPct, questionCount, mix, questions: [{ index, drillId, seed }] }
    t.jsonb('blueprint').notNullable();
    t.timestamp('started_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('deadline_at', { useTz: true }).notNullable();
    t.text('status').notNullable().defaultTo('active');
    // When the member submitted (null for an attempt closed by its deadline).
    t.timestamp('submitted_at', { useTz: true });
    // When the attempt stopped taking answers: at submission, or when its expiry was noticed.
    t.timestamp('closed_at', { useTz: true });
    t.double('score_pct');
    t.boolean('passed');
    // { "<question index>": { "<answer key>": "text as typed" } }
    t.jsonb('draft_answers').notNullable().defaultTo('{}');
    t.timestamp('drafts_saved_at', { useTz: true });
    t.index(['user_id', 'started_at']);
    t.index(['area_id']);
  });
  await knex.raw("alter table exam_attempts add constraint exam_attempts_status_check check (status in ('active', 'submitted', 'expired'))");
  await knex.raw('alter table exam_attempts add constraint exam_attempts_deadline_check check (deadline_at > started_at)');
  await knex.raw(
    "alter table exam_attempts add constraint exam_attempts_closed_check check ((status = 'active') = (closed_at is null) and (status = 'active') = (score_pct is null) and (status = 'submitted') = (submitted_at is not null))",
  );
  // One active attempt per member per area; a second start races into this and is refused.
  await knex.raw("create unique index exam_attempts_one_active on exam_attempts (user_id, area_id) where status = 'active'");
  // The lazy expiry sweep looks for active attempts past their deadline.
  await knex.raw("create index exam_attempts_active_deadline on exam_attempts (deadline_at) where status = 'active'");

  await knex.schema.createTable('drill_attempts', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.uuid('company_id').references('companies.id').onDelete('SET NULL');
    t.text('drill_id').notNullable();
    t.bigInteger('seed').notNullable();
    t.text('mode').notNullable().defaultTo('practice');
    t.uuid('exam_attempt_id').references('exam_attempts.id').onDelete('CASCADE');
    t.integer('question_index');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('submitted_at', { useTz: true });
    // The answers as typed, by field key.
    t.jsonb('answers');
    // The graded fields (verdict, expected, given, credit, message); the worked steps come from the seed.
    t.jsonb('result');
    t.double('score');
    t.index(['user_id', 'submitted_at']);
    t.index(['exam_attempt_id']);
  });
  await knex.raw("alter table drill_attempts add constraint drill_attempts_mode_check check (mode in ('practice', 'exam'))");
  await knex.raw('alter table drill_attempts add constraint drill_attempts_seed_check check (seed between 0 and 4294967295)');
  await knex.raw(
    "alter table drill_attempts add constraint drill_attempts_exam_check check ((mode = 'exam') = (exam_attempt_id is not null) and (exam_attempt_id is null) = (question_index is null))",
  );
  await knex.raw('alter table drill_attempts add constraint drill_attempts_submitted_check check ((submitted_at is null) = (score is null))');
  await knex.raw('create unique index drill_attempts_exam_question on drill_attempts (exam_attempt_id, question_index) where exam_attempt_id is not null');

  // A recorded pass points at the attempt that earned it (rows from before exams existed may have none).
  await knex.schema.alterTable('exam_passes', (t) => {
    t.foreign('exam_attempt_id', 'exam_passes_exam_attempt_id_foreign').references('exam_attempts.id');
  });
}

export async function down(knex: Knex) {
  await knex.schema.alterTable('exam_passes', (t) => {
    t.dropForeign(['exam_attempt_id'], 'exam_passes_exam_attempt_id_foreign');
  });
  await knex.schema.dropTableIfExists('drill_attempts');
  await knex.schema.dropTableIfExists('exam_attempts');
}
