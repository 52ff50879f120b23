import type { Knex } from 'knex';

/**
 * Payment receipts now go through the e-mail outbox: one `email_log` row per admin (kind `receipt`),
 * queued with the paid invoice and carrying its own sent/failed state. `stripe_invoices.receipt_sent_at`
 * no longer says anything (a receipt goes to several admins, each sent or retried on its own), so it goes.
 */
export async function up(knex: Knex) {
  await knex.schema.alterTable('stripe_invoices', (t) => {
    t.dropColumn('receipt_sent_at');
  });
}

/** Back as an empty column: the receipts' times are in `email_log`. */
export async function down(knex: Knex) {
  await knex.schema.alterTable('stripe_invoices', (t) => {
    t.timestamp('receipt_sent_at', { useTz: true });
  });
}
