import type { Knex } from 'knex';

/**
 * Certificates (issued from exam passes), the log of every verification lookup, the auditor batches
 * whose results can be downloaded again, and the evidence grants a company gives auditors.
 * (`company_logos`, printed on certificates, comes with the billing migration.)
 */
export async function up(knex: Knex) {
  await knex.schema.createTable('certificates', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    // Canonical form, e.g. PW-7K3M-Q9TD-R4E (server/services/certificate-number.ts).
    t.text('number').notNullable().unique();
    // A certificate outlives the account: holder_name and the PDF keep what was issued.
    t.uuid('user_id').references('users.id').onDelete('SET NULL');
    t.uuid('company_id').references('companies.id').onDelete('SET NULL');
    t.text('area_id').notNullable().references('areas.id');
    // Stored status; `expired` is never stored, it is computed from expires_on at read time (UTC dates).
    t.text('status').notNullable().defaultTo('valid');
    t.date('issued_on').notNullable();
    // The last day the certificate is valid (inclusive).
    t.date('expires_on').notNullable();
    t.text('holder_name').notNullable();
    t.text('area_name').notNullable();
    t.specificType('methods', 'text[]').notNullable().defaultTo('{}');
    t.text('company_name');
    t.timestamp('revoked_at', { useTz: true });
    t.text('revoked_reason');
    t.uuid('revoked_by').references('users.id').onDelete('SET NULL');
    t.uuid('superseded_by').references('certificates.id').onDelete('SET NULL');
    t.timestamp('superseded_at', { useTz: true });
    // renewal | name-correction
    t.text('superseded_reason');
    t.uuid('exam_pass_id').references('exam_passes.id').onDelete('SET NULL');
    t.binary('pdf').notNullable();
    t.text('pdf_sha256').notNullable().unique();
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['user_id', 'area_id']);
    t.index(['company_id', 'area_id']);
    t.index(['exam_pass_id']);
  });
  await knex.raw("alter table certificates add constraint certificates_status_check check (status in ('valid', 'revoked', 'superseded'))");
  await knex.raw('alter table certificates add constraint certificates_dates_check check (expires_on > issued_on)');
  await knex.raw("alter table certificates add constraint certificates_revoked_check check ((status = 'revoked') = (revoked_at is not null))");
  await knex.raw("alter table certificates add constraint certificates_superseded_reason_check check (superseded_reason is null or superseded_reason in ('renewal', 'name-correction'))");
  await knex.schema.alterTable('exam_passes', (t) => {
    t.foreign('certificate_id', 'exam_passes_certificate_id_foreign').references('certificates.id').onDelete('SET NULL');
  });

  await knex.schema.createTable('verification_batches', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.text('file_name');
    t.integer('row_count').notNullable();
    // The per-row results as answered, so the CSV download matches what was shown.
    t.jsonb('results').notNullable();
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['user_id', 'created_at']);
  });

  await knex.schema.createTable('verification_log', (t) => {
    t.bigIncrements('id');
    t.timestamp('at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    // single (one number), batch (a CSV row), file (a PDF's SHA-256)
    t.text('kind').notNullable();
    // What was typed, or for files the SHA-256 of the upload; capped at 64 characters.
    t.text('number_tried').notNullable();
    // valid | expired | revoked | superseded | not-found | malformed | authentic | not-authentic
    t.text('result').notNullable();
    t.uuid('certificate_id').references('certificates.id').onDelete('SET NULL');
    t.uuid('user_id').references('users.id').onDelete('SET NULL');
    t.uuid('batch_id').references('verification_batches.id').onDelete('CASCADE');
    // A keyed hash of the caller's address: enough to spot abuse, never the address itself.
    t.text('ip_hash');
    t.index(['user_id', 'at']);
    t.index(['certificate_id', 'at']);
    t.index(['at']);
  });
  await knex.raw("alter table verification_log add constraint verification_log_kind_check check (kind in ('single', 'batch', 'file'))");

  await knex.schema.createTable('evidence_grants', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    // The company whose members' exam evidence may be seen.
    t.uuid('company_id').notNullable().references('companies.id').onDelete('CASCADE');
    // Either one auditor, or every auditor of an auditing firm.
    t.uuid('grantee_user_id').references('users.id').onDelete('CASCADE');
    t.uuid('grantee_company_id').references('companies.id').onDelete('CASCADE');
    t.uuid('granted_by').references('users.id').onDelete('SET NULL');
    t.timestamp('granted_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.uuid('withdrawn_by').references('users.id').onDelete('SET NULL');
    t.timestamp('withdrawn_at', { useTz: true });
    t.index(['company_id']);
  });
  await knex.raw('alter table evidence_grants add constraint evidence_grants_one_grantee_check check ((grantee_user_id is null) <> (grantee_company_id is null))');
  await knex.raw('create unique index evidence_grants_active_user on evidence_grants (company_id, grantee_user_id) where withdrawn_at is null and grantee_user_id is not null');
  await knex.raw('create unique index evidence_grants_active_firm on evidence_grants (company_id, grantee_company_id) where withdrawn_at is null and grantee_company_id is not null');
  await knex.raw('create index evidence_grants_grantee_user on evidence_grants (grantee_user_id) where withdrawn_at is null');
  await knex.raw('create index evidence_grants_grantee_company on evidence_grants (grantee_company_id) where withdrawn_at is null');
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('evidence_grants');
  await knex.schema.dropTableIfExists('verification_log');
  await knex.schema.dropTableIfExists('verification_batches');
  await knex.schema.alterTable('exam_passes', (t) => {
    t.dropForeign('certificate_id', 'exam_passes_certificate_id_foreign');
  });
  await knex.schema.dropTableIfExists('certificates');
}
