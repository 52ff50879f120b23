import type { Knex } from 'knex';

/**
 * Seats and billing: the mirror of each company's subscription, every payment event received,
 * paid invoices (for receipts), seat status on memberships, invitations with roster imports, and
 * the company logo printed on certificates.
 */
export async function up(knex: Knex) {
  // One row per company: the lock every seat change takes (select ... for update), so seats can never be over-assigned.
  await knex.schema.createTable('subscriptions', (t) => {
    t.uuid('company_id').primary().references('companies.id').onDelete('CASCADE');
    t.text('stripe_customer_id').unique();
    t.text('stripe_subscription_id').unique();
    t.text('stripe_price_id');
    // Stripe's subscription status; null until the first payment lands.
    t.text('status');
    t.text('interval');
    t.integer('quantity').notNullable().defaultTo(0);
    t.timestamp('current_period_end', { useTz: true });
    t.boolean('cancel_at_period_end').notNullable().defaultTo(false);
    t.timestamp('cancel_at', { useTz: true });
    t.timestamp('subscription_created', { useTz: true });
    // The newest event whose state was applied; together with re-fetching, a late older event never wins.
    t.timestamp('updated_from_event_created', { useTz: true });
    t.timestamps(true, true);
  });
  await knex.raw("alter table subscriptions add constraint subscriptions_interval_check check (interval in ('month', 'year'))");
  await knex.raw('alter table subscriptions add constraint subscriptions_quantity_check check (quantity >= 0)');

  await knex.schema.createTable('stripe_events', (t) => {
    t.text('id').primary();
    t.text('type').notNullable();
    t.timestamp('event_created', { useTz: true }).notNullable();
    t.jsonb('payload').notNullable();
    t.timestamp('received_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('processed_at', { useTz: true });
    t.integer('attempts').notNullable().defaultTo(0);
    t.text('last_error');
    t.uuid('company_id').references('companies.id').onDelete('SET NULL');
    t.index(['type', 'received_at']);
  });
  await knex.raw('create index stripe_events_unprocessed on stripe_events (received_at) where processed_at is null');

  await knex.schema.createTable('stripe_invoices', (t) => {
    t.text('id').primary();
    t.uuid('company_id').notNullable().references('companies.id').onDelete('CASCADE');
    t.text('stripe_subscription_id');
    t.text('number');
    t.text('currency').notNullable();
    t.integer('amount_paid').notNullable();
    t.text('hosted_invoice_url');
    t.timestamp('period_start', { useTz: true });
    t.timestamp('period_end', { useTz: true });
    t.timestamp('paid_at', { useTz: true }).notNullable();
    t.timestamp('receipt_sent_at', { useTz: true });
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['company_id', 'paid_at']);
  });

  await knex.schema.alterTable('memberships', (t) => {
    t.text('seat_status').notNullable().defaultTo('none');
    t.timestamp('seat_assigned_at', { useTz: true });
    t.timestamp('queued_at', { useTz: true });
  });
  await knex.raw("alter table memberships add constraint memberships_seat_status_check check (seat_status in ('assigned', 'queued', 'none'))");
  await knex.raw('create index memberships_company_seat on memberships (company_id, seat_status, queued_at)');

  await knex.schema.createTable('roster_imports', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('company_id').notNullable().references('companies.id').onDelete('CASCADE');
    t.uuid('created_by').references('users.id').onDelete('SET NULL');
    t.text('file_name').notNullable();
    t.integer('row_count').notNullable();
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });

  await knex.schema.createTable('invitations', (t) => {
    t.uuid('id').primary().defaultTo(knex.raw('gen_random_uuid()'));
    t.uuid('company_id').notNullable().references('companies.id').onDelete('CASCADE');
    t.specificType('email', 'citext').notNullable();
    t.text('name').notNullable();
    t.specificType('roles', 'text[]').notNullable();
    t.text('crew');
    // Only the SHA-256 of the link's token is kept; null until the invitation is first sent.
    t.text('token_hash').unique();
    t.timestamp('expires_at', { useTz: true });
    t.timestamp('sent_at', { useTz: true });
    t.text('send_error');
    t.timestamp('accepted_at', { useTz: true });
    t.uuid('accepted_user_id').references('users.id').onDelete('SET NULL');
    t.timestamp('revoked_at', { useTz: true });
    t.uuid('invited_by').references('users.id').onDelete('SET NULL');
    t.uuid('roster_import_id').references('roster_imports.id').onDelete('SET NULL');
    t.timestamps(true, true);
    t.index(['company_id', 'created_at']);
    t.index(['roster_import_id']);
  });
  await knex.raw("alter table invitations add constraint invitations_roles_check check (cardinality(roles) > 0 and roles <@ array['admin','manager','crew']::text[])");
  // At most one open invitation per person per company.
  await knex.raw('create unique index invitations_one_open on invitations (company_id, email) where accepted_at is null and revoked_at is null');

  await knex.schema.createTable('company_logos', (t) => {
    t.uuid('company_id').primary().references('companies.id').onDelete('CASCADE');
    t.text('mime').notNullable();
    t.binary('bytes').notNullable();
    t.integer('size').notNullable();
    t.uuid('updated_by').references('users.id').onDelete('SET NULL');
    t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });
  await knex.raw("alter table company_logos add constraint company_logos_mime_check check (mime in ('image/png', 'image/jpeg'))");
  await knex.raw('alter table company_logos add constraint company_logos_size_check check (size > 0 and size <= 1048576)');
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('company_logos');
  await knex.schema.dropTableIfExists('invitations');
  await knex.schema.dropTableIfExists('roster_imports');
  await knex.raw('drop index if exists memberships_company_seat');
  await knex.raw('alter table memberships drop constraint if exists memberships_seat_status_check');
  await knex.schema.alterTable('memberships', (t) => {
    t.dropColumn('queued_at');
    t.dropColumn('seat_assigned_at');
    t.dropColumn('seat_status');
  });
  await knex.schema.dropTableIfExists('stripe_invoices');
  await knex.schema.dropTableIfExists('stripe_events');
  await knex.schema.dropTableIfExists('subscriptions');
}
