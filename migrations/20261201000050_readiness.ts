import type { Knex } from 'knex';

/**
 * Crew readiness: each company's time zone (its "today"), saved job checks, refresher assignments,
 * the notifications decided by the reminder scan (unique keys make each one happen once), and the
 * e-mail log every outgoing message is written to (the reminder outbox lives in it too).
 */
export async function up(knex: Knex) {
  await knex.schema.alterTable('companies', (t) => {
    // An IANA zone name; readiness, job dates, reminders and digests count days in it.
    t.text('time_zone').notNullable().defaultTo('UTC');
  });

  // Reminder scans look for valid certificates by expiry across companies.
  await knex.raw("create index certificates_valid_expiry on certificates (expires_on) where status = 'valid'");

  await knex.schema.createTable('job_checks', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('company_id').notNullable().references('companies.id').onDelete('CASCADE');
    t.text('name').notNullable();
    t.specificType('area_ids', 'text[]').notNullable();
    t.date('job_date').notNullable();
    t.text('crew');
    t.jsonb('last_counts');
    t.timestamp('last_run_at', { useTz: true });
    t.uuid('created_by').references('users.id').onDelete('SET NULL');
    t.timestamps(true, true);
  });
  await knex.raw('create unique index job_checks_company_name on job_checks (company_id, lower(name))');

  await knex.schema.createTable('assignments', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('company_id').notNullable().references('companies.id').onDelete('CASCADE');
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.text('kind').notNullable();
    t.text('drill_id');
    // For an exam: the area examined. For a drill: the drill's own area, kept for display and filtering.
    t.text('area_id').references('areas.id');
    t.date('due_on').notNullable();
    t.text('note');
    t.uuid('created_by').references('users.id').onDelete('SET NULL');
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('withdrawn_at', { useTz: true });
    t.index(['company_id', 'due_on']);
    t.index(['user_id', 'due_on']);
  });
  await knex.raw("alter table assignments add constraint assignments_kind_check check (kind in ('drill', 'exam'))");
  await knex.raw("alter table assignments add constraint assignments_target_check check ((kind = 'drill' and drill_id is not null) or (kind = 'exam' and drill_id is null and area_id is not null))");

  await knex.schema.createTable('notifications', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    // expiry-90 | expiry-30 | expiry-7 | digest
    t.text('kind').notNullable();
    t.uuid('company_id').notNullable().references('companies.id').onDelete('CASCADE');
    // Reminders: the certificate holder. Digests: the manager.
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.uuid('certificate_id').references('certificates.id').onDelete('CASCADE');
    t.text('area_id');
    t.date('expires_on');
    // Digests: the ISO week, e.g. 2027-W09, in the company's time zone.
    t.text('period');
    // The company-local day the scan decided on.
    t.date('for_date').notNullable();
    t.timestamp('dismissed_at', { useTz: true });
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['user_id', 'created_at']);
  });
  await knex.raw("alter table notifications add constraint notifications_kind_check check (kind in ('expiry-90', 'expiry-30', 'expiry-7', 'digest'))");
  await knex.raw("alter table notifications add constraint notifications_shape_check check ((kind = 'digest' and period is not null and certificate_id is null) or (kind <> 'digest' and certificate_id is not null))");
  // The exactly-once keys: whichever process inserts first sends; every other insert conflicts and sends nothing.
  await knex.raw('create unique index notifications_reminder_once on notifications (certificate_id, kind) where certificate_id is not null');
  await knex.raw("create unique index notifications_digest_once on notifications (company_id, user_id, period) where kind = 'digest'");

  await knex.schema.createTable('email_log', (t) => {
    t.bigIncrements('id');
    t.uuid('notification_id').references('notifications.id').onDelete('SET NULL');
    t.uuid('company_id').references('companies.id').onDelete('SET NULL');
    // outbox: queued here and delivered after commit by the delivery sweep; direct: sent at once by the caller.
    t.text('source').notNullable();
    t.text('kind').notNullable();
    t.text('to_address').notNullable();
    t.text('subject').notNullable();
    t.text('body_text').notNullable();
    t.text('body_html');
    t.text('status').notNullable();
    t.integer('attempts').notNullable().defaultTo(0);
    t.text('last_error');
    t.timestamp('next_attempt_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('claimed_at', { useTz: true });
    t.timestamp('sent_at', { useTz: true });
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['created_at']);
    t.index(['notification_id']);
  });
  await knex.raw("alter table email_log add constraint email_log_status_check check (status in ('queued', 'sending', 'sent', 'failed'))");
  await knex.raw("alter table email_log add constraint email_log_source_check check (source in ('outbox', 'direct'))");
  await knex.raw("create index email_log_pending on email_log (next_attempt_at) where source = 'outbox' and status in ('queued', 'failed', 'sending')");
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('email_log');
  await knex.schema.dropTableIfExists('notifications');
  await knex.schema.dropTableIfExists('assignments');
  await knex.schema.dropTableIfExists('job_checks');
  await knex.raw('drop index if exists certificates_valid_expiry');
  await knex.schema.alterTable('companies', (t) => {
    t.dropColumn('time_zone');
  });
}
