import type { Knex } from 'knex';

/**
 * Competency areas, their lessons, each learner's lesson progress, and one exam blueprint per area.
 * The content sync (server/services/content-sync.ts) fills these from content/; `source` keeps the
 * file's values as last synced, so a later sync can tell an operator's edit from a content change.
 */
export async function up(knex: Knex) {
  await knex.schema.createTable('areas', (t) => {
    t.text('id').primary();
    t.text('name').notNullable();
    t.text('summary').notNullable();
    t.specificType('methods', 'text[]').notNullable().defaultTo('{}');
    t.integer('validity_months').notNullable().defaultTo(36);
    t.integer('sort_order').notNullable();
    t.jsonb('source').notNullable().defaultTo('{}');
    t.timestamps(true, true);
  });
  await knex.raw(
    "alter table areas add constraint areas_id_check check (id in ('flow-moisture', 'particulate', 'gas-analysis', 'emission-rates', 'monitor-audits', 'ambient-conversions'))",
  );
  await knex.raw('alter table areas add constraint areas_validity_months_check check (validity_months between 1 and 120)');

  await knex.schema.createTable('lessons', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.text('area_id').notNullable().references('areas.id').onDelete('RESTRICT');
    // The file name without `.md` and without its `NN-` order prefix, so reordering keeps identity.
    t.text('slug').notNullable();
    t.text('file_name').notNullable();
    t.text('title').notNullable();
    t.integer('sort_order').notNullable();
    t.integer('minutes').notNullable();
    t.specificType('methods', 'text[]').notNullable().defaultTo('{}');
    t.specificType('drills', 'text[]').notNullable().defaultTo('{}');
    t.text('body_md').notNullable();
    t.text('body_html').notNullable();
    t.text('content_hash').notNullable();
    t.integer('version').notNullable().defaultTo(1);
    t.timestamp('retired_at', { useTz: true });
    t.timestamps(true, true);
    t.unique(['area_id', 'slug']);
    t.index(['area_id', 'sort_order']);
  });

  await knex.schema.createTable('lesson_progress', (t) => {
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.uuid('lesson_id').notNullable().references('lessons.id').onDelete('CASCADE');
    t.timestamp('first_opened_at', { useTz: true });
    t.timestamp('completed_at', { useTz: true });
    t.integer('completed_version');
    t.primary(['user_id', 'lesson_id']);
    t.index(['lesson_id']);
  });

  await knex.schema.createTable('exam_blueprints', (t) => {
    t.text('area_id').primary().references('areas.id').onDelete('CASCADE');
    t.text('title').notNullable();
    t.integer('time_limit_minutes').notNullable();
    t.integer('pass_mark_pct').notNullable();
    t.integer('question_count').notNullable();
    // [{ drill, count }], counts adding up to question_count.
    t.jsonb('mix').notNullable();
    t.jsonb('source').notNullable().defaultTo('{}');
    t.text('source_hash').notNullable();
    t.boolean('edited_by_operator').notNullable().defaultTo(false);
    t.uuid('updated_by').references('users.id').onDelete('SET NULL');
    t.timestamps(true, true);
  });
  await knex.raw('alter table exam_blueprints add constraint exam_blueprints_time_limit_check check (time_limit_minutes between 5 and 480)');
  await knex.raw('alter table exam_blueprints add constraint exam_blueprints_pass_mark_check check (pass_mark_pct between 1 and 100)');
  await knex.raw('alter table exam_blueprints add constraint exam_blueprints_question_count_check check (question_count between 1 and 40)');
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('exam_blueprints');
  await knex.schema.dropTableIfExists('lesson_progress');
  await knex.schema.dropTableIfExists('lessons');
  await knex.schema.dropTableIfExists('areas');
}
