import { badRequest, invalidParam } from './errors';
import {
  listOf,
  planOf,
  pricingOf,
  type BillingReason,
  type CheckoutSession,
  type Customer,
  type Interval,
  type Invoice,
  type InvoiceItem,
  type InvoiceLineItem,
  type Period,
  type Price,
  type Recurring,
  type StripeEvent,
  type Subscription,
  type SubscriptionItem,
} from './objects';
import type { Metadata } from './params';
import { newId, type FakeStore } from './store';
import type { EmitOptions, WebhookSender } from './webhooks';

export type ProrationBehavior = 'create_prorations' | 'always_invoice' | 'none';

/** Where the change came from: the base URL for hosted links and the API request behind it, if any. */
export interface ChangeContext {
  baseUrl: string;
  requestId?: string | null;
  idempotencyKey?: string | null;
}

const SECONDS_PER_DAY = 86_400;
/** A bound on renewals per subscription in one clock advance, so a huge jump cannot spin forever. */
const MAX_PERIODS_PER_ADVANCE = 1000;

/**
 * Adds whole intervals to a billing anchor the way Stripe does: months keep the anchor's day and clamp to
 * the month's last day (31 Jan → 29 Feb → 31 Mar), and the time of day stays the same.
 */
export function addIntervals(anchor: number, interval: Interval, count: number): number {
  if (interval === 'day') return anchor + count * SECONDS_PER_DAY;
  if (interval === 'week') return anchor + count * 7 * SECONDS_PER_DAY;
  const months = interval === 'year' ? count * 12 : count;
  const start = new Date(anchor * 1000);
  const targetMonth = start.getUTCMonth() + months;
  const year = start.getUTCFullYear() + Math.floor(targetMonth / 12);
  const month = ((targetMonth % 12) + 12) % 12;
  const lastDay = new Date(Date.UTC(year, month + 1, 0)).getUTCDate();
  const day = Math.min(start.getUTCDate(), lastDay);
  return Math.floor(
    Date.UTC(year, month, day, start.getUTCHours(), start.getUTCMinutes(), start.getUTCSeconds()) / 1000,
  );
}

/** The first period boundary after `after`, counted from the anchor. */
export function nextPeriodEnd(anchor: number, recurring: Recurring, after: number): number {
  for (let periods = 1; periods <= 100_000; periods++) {
    const end = addIntervals(anchor, recurring.interval, recurring.interval_count * periods);
    if (end > after) return end;
  }
  throw new Error('Billing period search ran past its bound.');
}

export function formatMoney(amountMinor: number, currency: string): string {
  const format = new Intl.NumberFormat('en-US', { style: 'currency', currency: currency.toUpperCase() });
  const digits = format.resolvedOptions().maximumFractionDigits ?? 2;
  return format.format(amountMinor / 10 ** digits);
}

export const formatDate = (unixSeconds: number): string =>
  new Date(unixSeconds * 1000).toLocaleDateString('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' });

/** Snapshot for `previous_attributes`: the old values of the top-level fields that changed. */
function changedFields(before: object, after: object): Record<string, unknown> {
  const previous: Record<string, unknown> = {};
  const old = before as Record<string, unknown>;
  for (const [key, value] of Object.entries(after)) {
    if (JSON.stringify(old[key]) !== JSON.stringify(value)) previous[key] = old[key];
  }
  return previous;
}

interface LineDraft {
  amount: number;
  quantity: number;
  description: string;
  price: Price;
  period: Period;
  subscriptionItem: string;
  invoiceItem: InvoiceItem | null;
}

/** Subscription lifecycle: checkout completion, quantity changes, cancellation, renewal and their events. */
export class Billing {
  constructor(
    private readonly store: FakeStore,
    private readonly events: WebhookSender,
    private readonly merchantName: string,
  ) {}

  createCustomer(fields: { email?: string | null; name?: string | null; description?: string | null; phone?: string | null; metadata?: Metadata }, context: Omit<ChangeContext, 'baseUrl'> = {}): Customer {
    const customer: Customer = {
      id: newId('cus_', 14),
      object: 'customer',
      address: null,
      balance: 0,
      created: this.store.now(),
      currency: null,
      default_source: null,
      delinquent: false,
      description: fields.description ?? null,
      email: fields.email ?? null,
      invoice_prefix: newId('', 8).toUpperCase(),
      invoice_settings: { custom_fields: null, default_payment_method: null, footer: null, rendering_options: null },
      livemode: false,
      metadata: fields.metadata ?? {},
      name: fields.name ?? null,
      next_invoice_sequence: 1,
      phone: fields.phone ?? null,
      preferred_locales: [],
      shipping: null,
      tax_exempt: 'none',
      test_clock: null,
    };
    this.store.customers.set(customer.id, customer);
    this.store.save();
    this.emit('customer.created', customer, context);
    return customer;
  }

  productName(price: Price): string {
    return this.store.products.get(price.product)?.name ?? 'Subscription';
  }

  /** The hosted payment page's "Pay" button: creates the customer, subscription and first paid invoice. */
  completeCheckout(session: CheckoutSession, payer: { email: string | null; name: string }, context: ChangeContext): CheckoutSession {
    const details = this.store.checkoutDetails.get(session.id);
    if (!details) throw new Error(`Checkout session ${session.id} has no stored line items.`);
    const now = this.store.now();
    const customer = session.customer
      ? this.store.customers.get(session.customer)
      : this.createCustomer({ email: session.customer_email ?? payer.email, name: payer.name }, context);
    if (!customer) throw badRequest(`No such customer: '${session.customer}'`);
    if (!customer.currency) customer.currency = session.currency;

    const prices = details.lineItems.map((line) => this.store.prices.get(line.price) as Price);
    const recurring = prices[0].recurring as Recurring;
    const periodEnd = addIntervals(now, recurring.interval, recurring.interval_count);
    const subscriptionId = newId('sub_');
    const items: SubscriptionItem[] = details.lineItems.map((line, index) => ({
      id: newId('si_', 14),
      object: 'subscription_item',
      billing_thresholds: null,
      created: now,
      current_period_end: periodEnd,
      current_period_start: now,
      discounts: [],
      metadata: {},
      plan: planOf(prices[index]),
      price: prices[index],
      quantity: line.quantity,
      subscription: subscriptionId,
      tax_rates: [],
    }));
    const subscription: Subscription = {
      id: subscriptionId,
      object: 'subscription',
      billing_cycle_anchor: now,
      cancel_at: null,
      cancel_at_period_end: false,
      canceled_at: null,
      cancellation_details: { comment: null, feedback: null, reason: null },
      collection_method: 'charge_automatically',
      created: now,
      currency: session.currency,
      customer: customer.id,
      default_payment_method: null,
      description: details.subscriptionDescription,
      discounts: [],
      ended_at: null,
      items: listOf(`/v1/subscription_items?subscription=${subscriptionId}`, items),
      latest_invoice: null,
      livemode: false,
      metadata: details.subscriptionMetadata,
      pause_collection: null,
      pending_update: null,
      schedule: null,
      start_date: now,
      status: 'active',
      test_clock: null,
      trial_end: null,
      trial_start: null,
    };
    this.store.subscriptions.set(subscription.id, subscription);
    const invoice = this.createPaidInvoice(subscription, 'subscription_create', this.itemLines(subscription), { start: now, end: now }, now, context);
    subscription.latest_invoice = invoice.id;

    session.status = 'complete';
    session.payment_status = 'paid';
    session.customer = customer.id;
    session.subscription = subscription.id;
    session.invoice = invoice.id;
    session.customer_details = { address: null, email: customer.email, name: payer.name, phone: null, tax_exempt: 'none', tax_ids: [] };
    session.url = null;
    this.store.save();

    this.emit('customer.subscription.created', subscription, context);
    this.emitInvoicePaid(invoice, context);
    this.emit('checkout.session.completed', session, context);
    return session;
  }

  updateSubscription(
    subscription: Subscription,
    change: {
      quantities?: { itemId: string; quantity: number; label: string }[];
      cancelAtPeriodEnd?: boolean;
      metadata?: Metadata;
      description?: string | null;
      prorationBehavior?: ProrationBehavior;
      prorationDate?: number;
    },
    context: ChangeContext,
  ): Subscription {
    if (subscription.status === 'canceled') {
      throw badRequest('A canceled subscription can only update its cancellation_details and metadata.');
    }
    const before = structuredClone(subscription);
    const now = this.store.now();
    const behavior = change.prorationBehavior ?? 'create_prorations';
    const prorationTime = change.prorationDate ?? now;
    const newProrations: InvoiceItem[] = [];

    for (const { itemId, quantity, label } of change.quantities ?? []) {
      const item = subscription.items.data.find((candidate) => candidate.id === itemId);
      if (!item) throw invalidParam(label, `No such subscription item: '${itemId}'`, 'resource_missing');
      const oldQuantity = item.quantity;
      if (oldQuantity === quantity) continue;
      item.quantity = quantity;
      if (behavior !== 'none' && prorationTime < item.current_period_end) {
        newProrations.push(...this.prorate(subscription, item, oldQuantity, quantity, prorationTime));
      }
    }

    if (change.cancelAtPeriodEnd === true && !subscription.cancel_at_period_end) {
      subscription.cancel_at_period_end = true;
      subscription.cancel_at = subscription.items.data[0].current_period_end;
      subscription.canceled_at = now;
      subscription.cancellation_details = { comment: null, feedback: null, reason: 'cancellation_requested' };
    } else if (change.cancelAtPeriodEnd === false && subscription.cancel_at_period_end) {
      subscription.cancel_at_period_end = false;
      subscription.cancel_at = null;
      subscription.canceled_at = null;
      subscription.cancellation_details = { comment: null, feedback: null, reason: null };
    }
    if (change.metadata) subscription.metadata = change.metadata;
    if (change.description !== undefined) subscription.description = change.description;

    let invoice: Invoice | null = null;
    if (behavior === 'always_invoice' && newProrations.length > 0) {
      const lines = this.pendingItemLines(subscription);
      invoice = this.createPaidInvoice(subscription, 'subscription_update', lines, { start: now, end: now }, now, context);
      subscription.latest_invoice = invoice.id;
    }
    this.store.save();

    const previous = changedFields(before, subscription);
    if (Object.keys(previous).length > 0) {
      this.emit('customer.subscription.updated', subscription, { ...context, previousAttributes: previous });
    }
    if (invoice) this.emitInvoicePaid(invoice, context);
    return subscription;
  }

  /** `DELETE /v1/subscriptions/:id`: ends the subscription now; pending prorations stay pending, as in Stripe. */
  cancelNow(subscription: Subscription, context: ChangeContext, details: { comment: string | null; feedback: string | null } = { comment: null, feedback: null }): Subscription {
    if (subscription.status === 'canceled') throw badRequest('This subscription is already canceled.');
    const now = this.store.now();
    subscription.status = 'canceled';
    subscription.canceled_at = now;
    subscription.ended_at = now;
    subscription.cancel_at = null;
    subscription.cancellation_details = { ...details, reason: 'cancellation_requested' };
    this.store.save();
    this.emit('customer.subscription.deleted', subscription, context);
    return subscription;
  }

  emitCustomerUpdated(customer: Customer, previous: Record<string, unknown>, context: ChangeContext): void {
    this.emit('customer.updated', customer, { ...context, previousAttributes: previous });
  }

  expireCheckout(session: CheckoutSession, context: ChangeContext): StripeEvent {
    session.status = 'expired';
    session.url = null;
    this.store.save();
    return this.emit('checkout.session.expired', session, context);
  }

  /** Moves the clock forward and runs everything that fell due: session expiry, renewals, period-end cancellations. */
  advanceClock(seconds: number, context: ChangeContext): StripeEvent[] {
    this.store.clockOffsetSeconds += seconds;
    this.store.save();
    return this.processDue(context);
  }

  processDue(context: ChangeContext): StripeEvent[] {
    const now = this.store.now();
    const emitted: StripeEvent[] = [];
    for (const session of this.store.checkoutSessions.values()) {
      if (session.status === 'open' && session.expires_at <= now) emitted.push(this.expireCheckout(session, context));
    }
    for (const subscription of this.store.subscriptions.values()) {
      for (let period = 0; period < MAX_PERIODS_PER_ADVANCE && subscription.status !== 'canceled'; period++) {
        const periodEnd = subscription.items.data[0].current_period_end;
        if (periodEnd > now) break;
        if (subscription.cancel_at !== null && subscription.cancel_at <= periodEnd) {
          subscription.status = 'canceled';
          subscription.ended_at = subscription.cancel_at;
          this.store.save();
          emitted.push(this.emit('customer.subscription.deleted', subscription, context));
        } else {
          emitted.push(...this.renew(subscription, context));
        }
      }
    }
    return emitted;
  }

  private renew(subscription: Subscription, context: ChangeContext): StripeEvent[] {
    const before = structuredClone(subscription);
    const start = subscription.items.data[0].current_period_end;
    const recurring = subscription.items.data[0].price.recurring as Recurring;
    const end = nextPeriodEnd(subscription.billing_cycle_anchor, recurring, start);
    for (const item of subscription.items.data) {
      item.current_period_start = start;
      item.current_period_end = end;
    }
    const lines = [...this.itemLines(subscription), ...this.pendingItemLines(subscription)];
    const previousStart = before.items.data[0].current_period_start;
    const invoice = this.createPaidInvoice(subscription, 'subscription_cycle', lines, { start: previousStart, end: start }, start, context);
    subscription.latest_invoice = invoice.id;
    this.store.save();
    return [
      this.emit('customer.subscription.updated', subscription, { ...context, previousAttributes: changedFields(before, subscription) }),
      ...this.emitInvoicePaid(invoice, context),
    ];
  }

  /** Two pending invoice items, as Stripe creates: credit for unused time at the old quantity, charge at the new. */
  private prorate(subscription: Subscription, item: SubscriptionItem, oldQuantity: number, newQuantity: number, at: number): InvoiceItem[] {
    const { current_period_start: start, current_period_end: end } = item;
    const remaining = (end - Math.max(at, start)) / (end - start);
    const unit = item.price.unit_amount;
    const name = this.productName(item.price);
    const when = formatDate(at);
    const drafts = [
      { quantity: oldQuantity, amount: -Math.round(unit * oldQuantity * remaining), description: `Unused time on ${oldQuantity} × ${name} after ${when}` },
      { quantity: newQuantity, amount: Math.round(unit * newQuantity * remaining), description: `Remaining time on ${newQuantity} × ${name} after ${when}` },
    ];
    return drafts
      .filter((draft) => draft.quantity > 0)
      .map((draft) => {
        const invoiceItem: InvoiceItem = {
          id: newId('ii_'),
          object: 'invoiceitem',
          amount: draft.amount,
          currency: subscription.currency,
          customer: subscription.customer,
          date: this.store.now(),
          description: draft.description,
          discountable: false,
          discounts: [],
          invoice: null,
          livemode: false,
          metadata: {},
          parent: { type: 'subscription_details', subscription_details: { subscription: subscription.id, subscription_item: item.id } },
          period: { start: Math.max(at, start), end },
          pricing: pricingOf(item.price),
          proration: true,
          quantity: draft.quantity,
          tax_rates: [],
          test_clock: null,
        };
        this.store.invoiceItems.set(invoiceItem.id, invoiceItem);
        return invoiceItem;
      });
  }

  private itemLines(subscription: Subscription): LineDraft[] {
    return subscription.items.data.map((item) => ({
      amount: item.price.unit_amount * item.quantity,
      quantity: item.quantity,
      description: `${item.quantity} × ${this.productName(item.price)} (at ${formatMoney(item.price.unit_amount, item.price.currency)} / ${item.price.recurring?.interval ?? 'period'})`,
      price: item.price,
      period: { start: item.current_period_start, end: item.current_period_end },
      subscriptionItem: item.id,
      invoiceItem: null,
    }));
  }

  private pendingItemLines(subscription: Subscription): LineDraft[] {
    return [...this.store.invoiceItems.values()]
      .filter((item) => item.invoice === null && item.parent.subscription_details.subscription === subscription.id)
      .map((item) => ({
        amount: item.amount,
        quantity: item.quantity,
        description: item.description,
        price: this.store.prices.get(item.pricing.price_details.price) as Price,
        period: item.period,
        subscriptionItem: item.parent.subscription_details.subscription_item,
        invoiceItem: item,
      }));
  }

  /**
   * Every invoice the fake issues is paid at once by the card on file. A customer credit balance
   * (negative `balance`) is used first, and a negative total becomes credit, as in Stripe.
   */
  private createPaidInvoice(subscription: Subscription, reason: BillingReason, drafts: LineDraft[], period: Period, at: number, context: ChangeContext): Invoice {
    const customer = this.store.customers.get(subscription.customer) as Customer;
    const id = newId('in_');
    const lines: InvoiceLineItem[] = drafts.map((draft) => ({
      id: newId('il_'),
      object: 'line_item',
      amount: draft.amount,
      currency: subscription.currency,
      description: draft.description,
      discount_amounts: [],
      discountable: !draft.invoiceItem,
      discounts: [],
      invoice: id,
      livemode: false,
      metadata: {},
      parent: draft.invoiceItem
        ? {
            type: 'invoice_item_details',
            invoice_item_details: { invoice_item: draft.invoiceItem.id, proration: draft.invoiceItem.proration, proration_details: null, subscription: subscription.id },
            subscription_item_details: null,
          }
        : {
            type: 'subscription_item_details',
            invoice_item_details: null,
            subscription_item_details: { invoice_item: null, proration: false, proration_details: null, subscription: subscription.id, subscription_item: draft.subscriptionItem },
          },
      period: draft.period,
      pricing: pricingOf(draft.price),
      quantity: draft.quantity,
      subscription: subscription.id,
      subtotal: draft.amount,
      taxes: [],
    }));
    for (const draft of drafts) if (draft.invoiceItem) draft.invoiceItem.invoice = id;

    const total = lines.reduce((sum, line) => sum + line.amount, 0);
    const startingBalance = customer.balance;
    const amountDue = Math.max(total + startingBalance, 0);
    const endingBalance = Math.min(total + startingBalance, 0);
    customer.balance = endingBalance;
    const number = `${customer.invoice_prefix}-${String(customer.next_invoice_sequence).padStart(4, '0')}`;
    customer.next_invoice_sequence++;

    const invoice: Invoice = {
      id,
      object: 'invoice',
      account_country: 'US',
      account_name: this.merchantName,
      amount_due: amountDue,
      amount_overpaid: 0,
      amount_paid: amountDue,
      amount_remaining: 0,
      attempt_count: amountDue > 0 ? 1 : 0,
      attempted: amountDue > 0,
      billing_reason: reason,
      collection_method: 'charge_automatically',
      created: at,
      currency: subscription.currency,
      customer: customer.id,
      customer_email: customer.email,
      customer_name: customer.name,
      description: null,
      ending_balance: endingBalance,
      hosted_invoice_url: `${context.baseUrl}/invoices/${id}`,
      invoice_pdf: null,
      lines: listOf(`/v1/invoices/${id}/lines`, lines),
      livemode: false,
      metadata: {},
      number,
      parent: {
        type: 'subscription_details',
        quote_details: null,
        subscription_details: { metadata: { ...subscription.metadata }, subscription: subscription.id },
      },
      period_end: period.end,
      period_start: period.start,
      starting_balance: startingBalance,
      status: 'paid',
      status_transitions: { finalized_at: at, marked_uncollectible_at: null, paid_at: at, voided_at: null },
      subtotal: total,
      subtotal_excluding_tax: total,
      test_clock: null,
      total,
      total_excluding_tax: total,
    };
    this.store.invoices.set(id, invoice);
    return invoice;
  }

  private emitInvoicePaid(invoice: Invoice, context: EmitOptions): StripeEvent[] {
    return [this.emit('invoice.paid', invoice, context), this.emit('invoice.payment_succeeded', invoice, context)];
  }

  private emit(type: string, object: unknown, options: EmitOptions & { baseUrl?: string } = {}): StripeEvent {
    return this.events.emit(type, object, {
      previousAttributes: options.previousAttributes,
      requestId: options.requestId,
      idempotencyKey: options.idempotencyKey,
    });
  }
}
