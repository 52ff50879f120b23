import type { Knex } from 'knex';
import type Stripe from 'stripe';
import type { AppContext } from '../context';
import { HttpError } from '../middleware/errors';
import { paymentReceiptMail } from '../mail/templates';
import { applySubscription } from './billing';
import { deliverQueuedEmails, queueEmails, type QueuedMail } from './email-log';
import { lockSeats } from './seats';
import { stripeFor, viaStripe } from './stripe';

/**
 * Stripe webhooks. Each delivery is verified on its raw bytes, stored by event id (a repeat is a
 * no-op insert) and processed at most once: processing locks the stored event row, skips it when
 * `processed_at` is set, and commits its effects together with `processed_at`. A failure rolls the
 * effects back, keeps the error, and answers 500 so Stripe delivers again.
 *
 * Payment receipts go through the e-mail outbox: one row per admin, queued in the transaction that
 * records the paid invoice (so once per invoice, however often or wherever its event is delivered),
 * sent right after commit, and retried by the delivery job while the mail server is down.
 *
 * Ordering: subscription events do not trust their payload. Under the company's seat lock the
 * subscription is re-fetched from Stripe and that current state is written, so whatever order
 * events arrive in, the last one processed writes the newest state. An event older than the one
 * the mirror was last updated from is skipped without a fetch.
 */

export class WebhookSignatureError extends HttpError {
  constructor(message: string) {
    super(400, 'bad_signature', message);
  }
}

export function verifyWebhook(ctx: AppContext, rawBody: unknown, signature: string | undefined): Stripe.Event {
  if (!signature) throw new WebhookSignatureError('The Stripe-Signature header is missing; this request was not sent by the payment service.');
  if (!Buffer.isBuffer(rawBody) || rawBody.length === 0) throw new WebhookSignatureError('The webhook body is empty.');
  try {
    return stripeFor(ctx.config).webhooks.constructEvent(rawBody, signature, ctx.config.stripe.webhookSecret);
  } catch {
    throw new WebhookSignatureError('The webhook signature does not verify; nothing was changed.');
  }
}

export type WebhookOutcome = 'processed' | 'duplicate';

/** Stores the event (once) and processes it (once). */
export async function receiveEvent(ctx: AppContext, event: Stripe.Event): Promise<WebhookOutcome> {
  await ctx.knex('stripe_events')
    .insert({ id: event.id, type: event.type, event_created: new Date(event.created * 1000), payload: JSON.stringify(event) })
    .onConflict('id')
    .ignore();
  return processStoredEvent(ctx, event);
}

type AfterCommit = () => Promise<void>;

export async function processStoredEvent(ctx: AppContext, event: Stripe.Event): Promise<WebhookOutcome> {
  const afterCommit: AfterCommit[] = [];
  let outcome: WebhookOutcome;
  try {
    outcome = await ctx.knex.transaction(async (trx) => {
      // Concurrent deliveries of one event wait here; the second finds processed_at set.
      const stored = await trx('stripe_events').where({ id: event.id }).forUpdate().first('processed_at');
      if (stored?.processed_at) return 'duplicate' as const;
      const companyId = await dispatch(ctx, trx, event, afterCommit);
      await trx('stripe_events')
        .where({ id: event.id })
        .update({ processed_at: trx.fn.now(), attempts: trx.raw('attempts + 1'), last_error: null, company_id: companyId ?? null });
      return 'processed' as const;
    });
  } catch (error) {
    await ctx.knex('stripe_events')
      .where({ id: event.id })
      .update({ attempts: ctx.knex.raw('attempts + 1'), last_error: String((error as Error).message ?? error).slice(0, 1000) })
      .catch(() => undefined);
    throw error;
  }
  for (const task of afterCommit) {
    await task().catch((err) => ctx.logger.warn({ err, eventId: event.id }, 'webhook follow-up failed'));
  }
  return outcome;
}

async function companyForCustomer(trx: Knex.Transaction, customer: string | { id: string } | null | undefined): Promise<string | undefined> {
  const id = typeof customer === 'string' ? customer : customer?.id;
  if (!id) return undefined;
  const row = await trx('subscriptions').where({ stripe_customer_id: id }).first('company_id');
  return row?.company_id;
}

async function dispatch(ctx: AppContext, trx: Knex.Transaction, event: Stripe.Event, afterCommit: AfterCommit[]): Promise<string | undefined> {
  switch (event.type) {
    case 'checkout.session.completed': {
      const session = event.data.object;
      const companyId = await companyForCustomer(trx, session.customer);
      const subscription = typeof session.subscription === 'string' ? session.subscription : session.subscription?.id;
      if (companyId && subscription) await syncSubscription(ctx, trx, companyId, subscription, event);
      return companyId;
    }
    case 'customer.subscription.created':
    case 'customer.subscription.updated':
    case 'customer.subscription.deleted': {
      const subscription = event.data.object;
      const companyId = await companyForCustomer(trx, subscription.customer);
      if (companyId) await syncSubscription(ctx, trx, companyId, subscription.id, event);
      return companyId;
    }
    case 'invoice.paid': {
      const invoice = event.data.object;
      const companyId = await companyForCustomer(trx, invoice.customer);
      if (companyId) await recordPaidInvoice(ctx, trx, companyId, invoice, afterCommit);
      return companyId;
    }
    default:
      // Stored for the record; nothing in the app depends on it.
      return undefined;
  }
}

async function syncSubscription(ctx: AppContext, trx: Knex.Transaction, companyId: string, subscriptionId: string, event: Stripe.Event) {
  const row = await lockSeats(trx, companyId);
  const eventCreated = new Date(event.created * 1000);
  // The mirror already holds state fetched after a newer event, which includes this one's change.
  if (row.stripe_subscription_id === subscriptionId && row.updated_from_event_created && eventCreated < row.updated_from_event_created) return;
  const stripe = stripeFor(ctx.config);
  const subscription = await viaStripe('the subscription update', () => stripe.subscriptions.retrieve(subscriptionId), ctx.logger);
  await applySubscription(trx, companyId, row, subscription, { eventCreated });
}

async function recordPaidInvoice(ctx: AppContext, trx: Knex.Transaction, companyId: string, invoice: Stripe.Invoice, afterCommit: AfterCommit[]) {
  const line = invoice.lines?.data?.[0];
  const inserted = await trx('stripe_invoices')
    .insert({
      id: invoice.id,
      company_id: companyId,
      stripe_subscription_id: invoice.parent?.subscription_details?.subscription
        ? String(typeof invoice.parent.subscription_details.subscription === 'string' ? invoice.parent.subscription_details.subscription : invoice.parent.subscription_details.subscription.id)
        : null,
      number: invoice.number,
      currency: invoice.currency,
      amount_paid: invoice.amount_paid,
      hosted_invoice_url: invoice.hosted_invoice_url ?? null,
      period_start: line?.period?.start ? new Date(line.period.start * 1000) : null,
      period_end: line?.period?.end ? new Date(line.period.end * 1000) : null,
      paid_at: new Date((invoice.status_transitions?.paid_at ?? invoice.created) * 1000),
    })
    .onConflict('id')
    .ignore()
    .returning('id');
  // A zero-amount invoice (a seat change covered by credit) needs no receipt. A repeat of the invoice
  // (the row already stood) queues nothing, so each admin gets one receipt per invoice.
  if (!inserted.length || invoice.amount_paid <= 0) return;
  const queued = await queueEmails(trx, await receiptMails(ctx, trx, companyId, invoice.id!));
  if (queued.length) afterCommit.push(() => deliverQueuedEmails(ctx.knex, ctx.mailer, ctx.logger, { ids: queued }).then(() => undefined));
}

function formatMoney(amountMinor: number, currency: string) {
  const format = new Intl.NumberFormat('en-US', { style: 'currency', currency: currency.toUpperCase() });
  const digits = format.resolvedOptions().maximumFractionDigits ?? 2;
  return format.format(amountMinor / 10 ** digits);
}

/** The payment receipt for a recorded invoice, one message for each active admin of the company. */
async function receiptMails(ctx: AppContext, trx: Knex.Transaction, companyId: string, invoiceId: string): Promise<QueuedMail[]> {
  const invoice = await trx('stripe_invoices as i').join('companies as c', 'c.id', 'i.company_id').where('i.id', invoiceId).first('i.*', 'c.name as company_name');
  const admins: string[] = await trx('memberships as m')
    .join('users as u', 'u.id', 'm.user_id')
    .where('m.company_id', companyId)
    .whereRaw("'admin' = any(m.roles)")
    .whereNull('u.disabled_at')
    .orderBy('u.email')
    .pluck('u.email');
  const mail = paymentReceiptMail({
    companyName: invoice.company_name,
    amount: formatMoney(invoice.amount_paid, invoice.currency),
    invoiceNumber: invoice.number,
    paidAt: invoice.paid_at,
    periodEnd: invoice.period_end,
    url: invoice.hosted_invoice_url,
    billingUrl: `${ctx.config.appUrl}/company/billing`,
  });
  return admins.map((to) => ({ to, kind: 'receipt', companyId, ...mail }));
}
