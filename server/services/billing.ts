import type { Knex } from 'knex';
import type Stripe from 'stripe';
import type { BillingSummary, CompanySummary, InvoiceView, PlanView, SeatInterval, SubscriptionView } from '../../shared/billing';
import type { AppContext } from '../context';
import { HttpError, conflict, notFound } from '../middleware/errors';
import { recordAudit } from './audit';
import { logoMeta } from './logos';
import { hashPassword } from './passwords';
import {
  fillFromQueue, inGoodStanding, lockSeats, seatCounts, seatTotal, seatUsage, trimToTotal, type Actor, type SubscriptionRow,
} from './seats';
import { ensureSeatPrices, planForPrice, stripeFor, viaStripe } from './stripe';

/**
 * Billing: company sign-up with checkout, the subscription mirror, seat quantity, cancelling at the
 * end of the period and resuming, invoices and the billing portal. Stripe is the source of truth
 * for the subscription; the `subscriptions` row mirrors it and is what seat decisions lock.
 */

const toDate = (seconds: number | null | undefined) => (seconds ? new Date(seconds * 1000) : null);
const iso = (date: Date | null | undefined) => (date ? date.toISOString() : null);

export function subscriptionView(row: SubscriptionRow | undefined, plan: PlanView | null): SubscriptionView | null {
  if (!row?.status) return null;
  return {
    status: row.status,
    interval: row.interval,
    quantity: row.quantity,
    currentPeriodEnd: iso(row.current_period_end),
    cancelAtPeriodEnd: row.cancel_at_period_end,
    inGoodStanding: inGoodStanding(row),
    plan,
  };
}

async function subscriptionRow(db: Knex | Knex.Transaction, companyId: string) {
  return db<SubscriptionRow>('subscriptions').where({ company_id: companyId }).first();
}

/** What the billing page and `GET /api/billing` show. */
export async function billingSummary(ctx: AppContext, companyId: string): Promise<BillingSummary> {
  const row = await subscriptionRow(ctx.knex, companyId);
  let plan: PlanView | null = null;
  if (row?.stripe_price_id) {
    // The plan name and price are decoration; a slow payment service must not hide the seats.
    const priceId = row.stripe_price_id;
    plan = await Promise.resolve()
      .then(() => planForPrice(stripeFor(ctx.config), priceId))
      .catch((err) => {
        ctx.logger.warn({ err }, 'plan lookup failed');
        return null;
      });
  }
  return { seats: await seatCounts(ctx.knex, companyId), subscription: subscriptionView(row, plan) };
}

function checkoutUrls(ctx: AppContext, seats: number, interval: SeatInterval) {
  const base = ctx.config.appUrl;
  return {
    // Stripe fills in {CHECKOUT_SESSION_ID} when it sends the browser back.
    success_url: `${base}/billing/return?session_id={CHECKOUT_SESSION_ID}`,
    cancel_url: `${base}/billing/cancelled?seats=${seats}&interval=${interval}`,
  };
}

async function createCheckoutSession(ctx: AppContext, companyId: string, customerId: string, seats: number, interval: SeatInterval) {
  const stripe = stripeFor(ctx.config);
  const catalogue = await viaStripe('the checkout', () => ensureSeatPrices(stripe), ctx.logger);
  const session = await viaStripe(
    'the checkout',
    () =>
      stripe.checkout.sessions.create({
        mode: 'subscription',
        customer: customerId,
        line_items: [{ price: catalogue[interval].priceId, quantity: seats }],
        ...checkoutUrls(ctx, seats, interval),
        client_reference_id: companyId,
        metadata: { company_id: companyId },
        subscription_data: { metadata: { company_id: companyId } },
      }),
    ctx.logger,
  );
  if (!session.url) throw new HttpError(502, 'payment_error', 'The payment service did not return a payment page.');
  return session.url;
}

export interface SignupInput {
  companyName: string;
  adminName: string;
  email: string;
  password: string;
  seats: number;
  interval: SeatInterval;
}

/**
 * A new company: the company, its first admin, its customer at the payment service and a checkout
 * for the chosen seats, all or nothing. The subscription itself arrives by webhook once paid.
 */
export async function signUp(ctx: AppContext, input: SignupInput, ip?: string) {
  const taken = await ctx.knex('users').where({ email: input.email }).first('id');
  if (taken) {
    throw new HttpError(409, 'email_taken', 'An account with this e-mail address already exists. Sign in with it, or use another address.', [
      { field: 'email', message: 'email: already has a Plumewright account; sign in with it or use another address' },
    ]);
  }
  const passwordHash = await hashPassword(input.password);
  const stripe = stripeFor(ctx.config);
  // Prices first, outside the transaction: the usual first call, and the one that shows the service is up.
  await viaStripe('the sign-up', () => ensureSeatPrices(stripe), ctx.logger);

  return ctx.knex.transaction(async (trx) => {
    const [company] = await trx('companies').insert({ name: input.companyName, kind: 'customer' }).returning(['id', 'name']);
    let user: { id: string };
    try {
      [user] = await trx('users').insert({ email: input.email, name: input.adminName, password_hash: passwordHash }).returning(['id']);
    } catch (error) {
      if ((error as { code?: string }).code === '23505') {
        throw new HttpError(409, 'email_taken', 'An account with this e-mail address already exists.', [
          { field: 'email', message: 'email: already has a Plumewright account; sign in with it or use another address' },
        ]);
      }
      throw error;
    }
    await trx('memberships').insert({ user_id: user.id, company_id: company.id, roles: ['admin', 'manager'] });
    // If anything below fails the transaction rolls back; a customer left at the payment service has no effect.
    const customer = await viaStripe(
      'the sign-up',
      () => stripe.customers.create({ email: input.email, name: input.companyName, metadata: { company_id: company.id } }),
      ctx.logger,
    );
    await trx('subscriptions').insert({ company_id: company.id, stripe_customer_id: customer.id });
    const checkoutUrl = await createCheckoutSession(ctx, company.id, customer.id, input.seats, input.interval);
    await recordAudit(trx, {
      actorUserId: user.id,
      companyId: company.id,
      action: 'company.signed-up',
      targetType: 'company',
      targetId: company.id,
      details: { seats: input.seats, interval: input.interval },
      ip,
    });
    return { userId: user.id, companyId: company.id, checkoutUrl };
  });
}

/** A checkout for a company that has no subscription in good standing (after a declined card, or to start again). */
export async function startCheckout(ctx: AppContext, companyId: string, seats: number, interval: SeatInterval, actor: Actor = {}) {
  const stripe = stripeFor(ctx.config);
  const { customerId } = await ctx.knex.transaction(async (trx) => {
    const row = await lockSeats(trx, companyId);
    if (inGoodStanding(row)) {
      throw conflict('The company already has an active subscription. Change the number of seats on the billing page instead.');
    }
    let id = row.stripe_customer_id;
    if (!id) {
      const company = await trx('companies').where({ id: companyId }).first('name');
      const admin = await trx('users').where({ id: actor.userId ?? null }).first('email');
      id = (await viaStripe('the checkout', () => stripe.customers.create({ name: company.name, email: admin?.email, metadata: { company_id: companyId } }), ctx.logger)).id;
      await trx('subscriptions').where({ company_id: companyId }).update({ stripe_customer_id: id, updated_at: trx.fn.now() });
    }
    await recordAudit(trx, { actorUserId: actor.userId, companyId, action: 'billing.checkout-started', details: { seats, interval }, ip: actor.ip });
    return { customerId: id };
  });
  // A second open payment page for the same customer could end in two subscriptions; close earlier ones.
  const open = await viaStripe('the checkout', () => stripe.checkout.sessions.list({ customer: customerId, status: 'open', limit: 10 }), ctx.logger);
  for (const session of open.data) await viaStripe('the checkout', () => stripe.checkout.sessions.expire(session.id), ctx.logger);
  return { checkoutUrl: await createCheckoutSession(ctx, companyId, customerId, seats, interval) };
}

/** Whether the payment page a browser came back from was paid; only the company's own sessions. */
export async function checkoutStatus(ctx: AppContext, companyId: string, sessionId: string) {
  const row = await subscriptionRow(ctx.knex, companyId);
  if (!row?.stripe_customer_id) throw notFound('Checkout');
  const stripe = stripeFor(ctx.config);
  let session: Stripe.Checkout.Session;
  try {
    session = await viaStripe('the payment check', () => stripe.checkout.sessions.retrieve(sessionId), ctx.logger);
  } catch (error) {
    if (error instanceof HttpError && error.status === 502) throw notFound('Checkout');
    throw error;
  }
  const customer = typeof session.customer === 'string' ? session.customer : session.customer?.id;
  if (customer !== row.stripe_customer_id) throw notFound('Checkout');
  return { status: session.status, paymentStatus: session.payment_status };
}

/**
 * Writes a subscription fetched from Stripe into the company's mirror row (the seat lock must be
 * held) and moves seats to match: added seats go to the queue's front, lost seats send the most
 * recent holders back to the queue. A different, older or ended subscription never replaces the
 * company's current one.
 */
export async function applySubscription(
  trx: Knex.Transaction,
  companyId: string,
  row: SubscriptionRow,
  subscription: Stripe.Subscription,
  opts: { eventCreated?: Date; actor?: Actor } = {},
): Promise<{ applied: boolean }> {
  const customer = typeof subscription.customer === 'string' ? subscription.customer : subscription.customer.id;
  if (row.stripe_customer_id && customer !== row.stripe_customer_id) return { applied: false };
  if (row.stripe_subscription_id && row.stripe_subscription_id !== subscription.id) {
    const currentEnded = !row.status || row.status === 'canceled' || row.status === 'incomplete_expired';
    const newer = !row.subscription_created || subscription.created * 1000 > row.subscription_created.getTime();
    if (subscription.status === 'canceled' || !(currentEnded || newer)) return { applied: false };
  }
  const item = subscription.items.data[0];
  const interval: string | undefined = item?.price.recurring?.interval;
  const next: Partial<SubscriptionRow> = {
    stripe_customer_id: customer,
    stripe_subscription_id: subscription.id,
    stripe_price_id: item?.price.id ?? null,
    status: subscription.status,
    interval: interval === 'month' || interval === 'year' ? interval : null,
    quantity: item?.quantity ?? 0,
    current_period_end: toDate(item?.current_period_end),
    cancel_at_period_end: subscription.cancel_at_period_end,
    cancel_at: toDate(subscription.cancel_at),
    subscription_created: toDate(subscription.created),
  };
  if (opts.eventCreated && (!row.updated_from_event_created || opts.eventCreated > row.updated_from_event_created)) {
    next.updated_from_event_created = opts.eventCreated;
  }
  await trx('subscriptions').where({ company_id: companyId }).update({ ...next, updated_at: trx.fn.now() });
  const updated = { ...row, ...next } as SubscriptionRow;

  const before = seatTotal(row);
  const after = seatTotal(updated);
  if (before !== after || row.status !== updated.status) {
    await recordAudit(trx, {
      actorUserId: opts.actor?.userId ?? null,
      companyId,
      action: 'billing.subscription-synced',
      targetType: 'subscription',
      targetId: subscription.id,
      details: { status: updated.status, quantity: updated.quantity, seatsBefore: before, seatsAfter: after, cancelAtPeriodEnd: updated.cancel_at_period_end },
      ip: opts.actor?.ip,
    });
  }
  const { used } = await seatUsage(trx, companyId);
  if (used > after) await trimToTotal(trx, companyId, updated, opts.actor);
  else if (used < after) await fillFromQueue(trx, companyId, updated, opts.actor);
  return { applied: true };
}

async function requireLiveSubscription(trx: Knex.Transaction, companyId: string) {
  const row = await lockSeats(trx, companyId);
  if (!row.stripe_subscription_id || !inGoodStanding(row)) {
    throw conflict('The company has no active subscription. Start one from the billing page first.');
  }
  return row;
}

/**
 * Changes the number of seats. Refused with 409 (naming the number) below the seats in use; the
 * seat lock is held through the call to Stripe so no acceptance can slip in between the check and
 * the change.
 */
export async function changeSeatQuantity(ctx: AppContext, companyId: string, seats: number, actor: Actor = {}) {
  const stripe = stripeFor(ctx.config);
  await ctx.knex.transaction(async (trx) => {
    const row = await requireLiveSubscription(trx, companyId);
    const { used } = await seatUsage(trx, companyId);
    if (seats < used) {
      throw new HttpError(
        409,
        'seats_in_use',
        `${used} ${used === 1 ? 'seat is' : 'seats are'} in use, so the count cannot go below ${used}. Unassign seats first, then lower the count.`,
        [{ field: 'seats', message: `seats: ${used} ${used === 1 ? 'seat is' : 'seats are'} in use; choose ${used} or more` }],
      );
    }
    if (seats === row.quantity) return;
    const current = await viaStripe('the seat change', () => stripe.subscriptions.retrieve(row.stripe_subscription_id!), ctx.logger);
    const updated = await viaStripe(
      'the seat change',
      () => stripe.subscriptions.update(current.id, { items: [{ id: current.items.data[0].id, quantity: seats }], proration_behavior: 'create_prorations' }),
      ctx.logger,
    );
    await applySubscription(trx, companyId, row, updated, { actor });
    await recordAudit(trx, { actorUserId: actor.userId, companyId, action: 'billing.seats-changed', details: { from: row.quantity, to: seats }, ip: actor.ip });
  });
  return billingSummary(ctx, companyId);
}

/** Cancel at the end of the paid period (the company keeps its seats until then), or take that back. */
export async function setCancelAtPeriodEnd(ctx: AppContext, companyId: string, cancel: boolean, actor: Actor = {}) {
  const stripe = stripeFor(ctx.config);
  await ctx.knex.transaction(async (trx) => {
    const row = await requireLiveSubscription(trx, companyId);
    if (row.cancel_at_period_end === cancel) return;
    const updated = await viaStripe(
      cancel ? 'the cancellation' : 'resuming the subscription',
      () => stripe.subscriptions.update(row.stripe_subscription_id!, { cancel_at_period_end: cancel }),
      ctx.logger,
    );
    await applySubscription(trx, companyId, row, updated, { actor });
    await recordAudit(trx, {
      actorUserId: actor.userId,
      companyId,
      action: cancel ? 'billing.cancel-requested' : 'billing.resumed',
      details: { periodEnd: iso(toDate(updated.items.data[0]?.current_period_end)) },
      ip: actor.ip,
    });
  });
  return billingSummary(ctx, companyId);
}

export async function billingPortalUrl(ctx: AppContext, companyId: string) {
  const row = await subscriptionRow(ctx.knex, companyId);
  if (!row?.stripe_customer_id) throw conflict('The company has no billing account yet. Start a subscription first.');
  const stripe = stripeFor(ctx.config);
  const session = await viaStripe(
    'opening the billing portal',
    () => stripe.billingPortal.sessions.create({ customer: row.stripe_customer_id!, return_url: `${ctx.config.appUrl}/company/billing` }),
    ctx.logger,
  );
  return { url: session.url };
}

/** The company's invoices, newest first, straight from Stripe through the SDK. */
export async function listInvoices(ctx: AppContext, companyId: string, startingAfter?: string): Promise<{ invoices: InvoiceView[]; hasMore: boolean }> {
  const row = await subscriptionRow(ctx.knex, companyId);
  if (!row?.stripe_customer_id) return { invoices: [], hasMore: false };
  const stripe = stripeFor(ctx.config);
  const page = await viaStripe(
    'loading invoices',
    () => stripe.invoices.list({ customer: row.stripe_customer_id!, limit: 12, ...(startingAfter ? { starting_after: startingAfter } : {}) }),
    ctx.logger,
  );
  return {
    hasMore: page.has_more,
    invoices: page.data.map((invoice) => ({
      id: invoice.id!,
      number: invoice.number,
      created: new Date(invoice.created * 1000).toISOString(),
      periodStart: iso(toDate(invoice.lines.data[0]?.period.start ?? invoice.period_start)),
      periodEnd: iso(toDate(invoice.lines.data[0]?.period.end ?? invoice.period_end)),
      total: invoice.total,
      amountPaid: invoice.amount_paid,
      currency: invoice.currency,
      status: invoice.status,
      hostedInvoiceUrl: invoice.hosted_invoice_url ?? null,
    })),
  };
}

/** The company page's header facts: seats, subscription, logo and open invitations. */
export async function companySummary(ctx: AppContext, companyId: string): Promise<CompanySummary> {
  const company = await ctx.knex('companies').where({ id: companyId }).first('id', 'name');
  if (!company) throw notFound('Company');
  const billing = await billingSummary(ctx, companyId);
  const [{ count }] = await ctx.knex('invitations').where({ company_id: companyId }).whereNull('accepted_at').whereNull('revoked_at').count<{ count: number }[]>('* as count');
  return { company, seats: billing.seats, subscription: billing.subscription, logo: await logoMeta(ctx.knex, companyId), openInvitations: Number(count) };
}
