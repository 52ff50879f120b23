import Stripe from 'stripe';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { startStripeFake, type StartedStripeFake } from '../../../server/fakes/stripe';
import { addIntervals } from '../../../server/fakes/stripe/billing';
import { startWebhookReceiver, submitPaymentForm, type WebhookReceiver } from '../../../server/fakes/stripe/test-support';

const WEBHOOK_SECRET = 'whsec_unit_subscription_secret';
// Billing starts 1 Mar 2031, 00:00 UTC; March has 31 days, so a month is 2 678 400 s.
const START_MS = Date.UTC(2031, 2, 1);
const START = START_MS / 1000;
const MARCH_END = Date.UTC(2031, 3, 1) / 1000;
const DAY = 86_400;
const UNIT = 2500;

let fake: StartedStripeFake;
let receiver: WebhookReceiver;
let stripe: Stripe;

beforeEach(async () => {
  receiver = await startWebhookReceiver({ secret: WEBHOOK_SECRET });
  fake = await startStripeFake({
    webhookSecret: WEBHOOK_SECRET,
    webhookUrl: receiver.url,
    clock: () => START_MS,
    retry: { initialDelayMs: 10, maxDelayMs: 50, maxAttempts: 3 },
  });
  stripe = new Stripe('sk_test_unit_subscriptions', { host: '127.0.0.1', port: fake.port, protocol: 'http', maxNetworkRetries: 0 });
});

afterEach(async () => {
  await fake.close();
  await receiver.close();
});

async function subscribe(quantity: number): Promise<Stripe.Subscription> {
  const price = await stripe.prices.create({
    product_data: { name: 'Crew seat' },
    currency: 'usd',
    unit_amount: UNIT,
    recurring: { interval: 'month' },
  });
  const session = await stripe.checkout.sessions.create({
    mode: 'subscription',
    line_items: [{ price: price.id, quantity }],
    customer_email: 'billing@tallow-point.example.test',
    success_url: 'http://127.0.0.1:5173/done',
  });
  expect((await submitPaymentForm(session.url as string)).status).toBe(303);
  const paid = await stripe.checkout.sessions.retrieve(session.id);
  return stripe.subscriptions.retrieve(paid.subscription as string);
}

async function advanceClock(seconds: number) {
  const response = await fetch(`${fake.url}/_fake/advance-clock`, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ seconds }),
  });
  expect(response.status).toBe(200);
  return (await response.json()) as { now: number; events: { id: string; type: string }[] };
}

async function settledEvents(type: string): Promise<Stripe.Event[]> {
  expect(await fake.fake.webhooks.whenIdle(5000)).toBe(true);
  return receiver.events.filter((event) => event.type === type);
}

describe('billing periods', () => {
  it('keeps the anchor day and clamps to short months', () => {
    const january31 = Date.UTC(2032, 0, 31, 8) / 1000;
    expect(addIntervals(january31, 'month', 1)).toBe(Date.UTC(2032, 1, 29, 8) / 1000);
    expect(addIntervals(january31, 'month', 2)).toBe(Date.UTC(2032, 2, 31, 8) / 1000);
    expect(addIntervals(january31, 'year', 1)).toBe(Date.UTC(2033, 0, 31, 8) / 1000);
    expect(addIntervals(january31, 'month', 13)).toBe(Date.UTC(2033, 1, 28, 8) / 1000);
  });
});

describe('quantity changes', () => {
  it('invoices the proration at once with always_invoice', async () => {
    const subscription = await subscribe(3);
    await advanceClock(10 * DAY);
    const itemId = subscription.items.data[0].id;

    const updated = await stripe.subscriptions.update(subscription.id, {
      items: [{ id: itemId, quantity: 5 }],
      proration_behavior: 'always_invoice',
    });
    expect(updated.items.data[0].quantity).toBe(5);

    const remaining = (MARCH_END - (START + 10 * DAY)) / (MARCH_END - START); // 21 of 31 days
    const credit = -Math.round(UNIT * 3 * remaining);
    const charge = Math.round(UNIT * 5 * remaining);
    const invoice = await stripe.invoices.retrieve(updated.latest_invoice as string);
    expect(invoice.billing_reason).toBe('subscription_update');
    expect(invoice.status).toBe('paid');
    expect(invoice.lines.data.map((line) => line.amount)).toEqual([credit, charge]);
    expect(invoice.lines.data.every((line) => line.parent?.invoice_item_details?.proration === true)).toBe(true);
    expect(invoice.amount_paid).toBe(credit + charge);
    expect((await stripe.invoices.list({ subscription: subscription.id })).data).toHaveLength(2);
    expect((await stripe.invoiceItems.list({ customer: subscription.customer as string, pending: true })).data).toHaveLength(0);

    const [update] = (await settledEvents('customer.subscription.updated')) as Stripe.CustomerSubscriptionUpdatedEvent[];
    expect(update.data.object.items.data[0].quantity).toBe(5);
    const previousItems = update.data.previous_attributes?.items as Stripe.ApiList<Stripe.SubscriptionItem>;
    expect(previousItems.data[0].quantity).toBe(3);
    const paidIds = (await settledEvents('invoice.paid')).map((event) => (event.data.object as Stripe.Invoice).id);
    expect(paidIds).toContain(invoice.id);
  });

  it('keeps create_prorations pending until the renewal invoice picks them up', async () => {
    const subscription = await subscribe(4);
    await advanceClock(15 * DAY);
    await stripe.subscriptions.update(subscription.id, {
      items: [{ id: subscription.items.data[0].id, quantity: 2 }],
      proration_behavior: 'create_prorations',
    });
    const pending = await stripe.invoiceItems.list({ customer: subscription.customer as string, pending: true });
    expect(pending.data).toHaveLength(2);
    const prorationTotal = pending.data.reduce((sum, item) => sum + item.amount, 0);
    expect(prorationTotal).toBeLessThan(0); // fewer seats: a credit

    await advanceClock(16 * DAY); // reaches 1 Apr
    const renewal = (await stripe.invoices.list({ subscription: subscription.id, limit: 1 })).data[0];
    expect(renewal.billing_reason).toBe('subscription_cycle');
    expect(renewal.total).toBe(UNIT * 2 + prorationTotal);
    expect(renewal.lines.data).toHaveLength(3);
    expect((await stripe.invoiceItems.list({ customer: subscription.customer as string, pending: true })).data).toHaveLength(0);
  });

  it('changes the quantity without billing when proration_behavior is none', async () => {
    const subscription = await subscribe(2);
    await stripe.subscriptions.update(subscription.id, { items: [{ id: subscription.items.data[0].id, quantity: 6 }], proration_behavior: 'none' });
    expect((await stripe.invoiceItems.list({ customer: subscription.customer as string })).data).toHaveLength(0);
    expect((await stripe.invoices.list({ subscription: subscription.id })).data).toHaveLength(1);
  });

  it('names the bad item when the item id is not on the subscription', async () => {
    const subscription = await subscribe(2);
    const error = await stripe.subscriptions
      .update(subscription.id, { items: [{ id: 'si_notonthis', quantity: 3 }] })
      .then(() => null, (caught: Stripe.errors.StripeError) => caught);
    expect(error?.statusCode).toBe(400);
    expect(error?.param).toBe('items[0][id]');
  });
});

describe('renewal and cancellation', () => {
  it('renews each month with a paid invoice and a moved period', async () => {
    const subscription = await subscribe(3);
    const result = await advanceClock(31 * DAY);
    expect(result.events.map((event) => event.type)).toEqual(['customer.subscription.updated', 'invoice.paid', 'invoice.payment_succeeded']);
    const renewed = await stripe.subscriptions.retrieve(subscription.id);
    expect(renewed.status).toBe('active');
    expect(renewed.items.data[0].current_period_start).toBe(MARCH_END);
    expect(renewed.items.data[0].current_period_end).toBe(Date.UTC(2031, 4, 1) / 1000);
    const renewal = await stripe.invoices.retrieve(renewed.latest_invoice as string);
    expect(renewal.amount_paid).toBe(UNIT * 3);
    expect(renewal.billing_reason).toBe('subscription_cycle');
    expect((await settledEvents('invoice.paid')).map((event) => (event.data.object as Stripe.Invoice).id)).toContain(renewal.id);
  });

  it('cancels at period end, resumes, and sends subscription.updated each time', async () => {
    const subscription = await subscribe(3);
    const canceling = await stripe.subscriptions.update(subscription.id, { cancel_at_period_end: true });
    expect(canceling.cancel_at_period_end).toBe(true);
    expect(canceling.cancel_at).toBe(MARCH_END);
    expect(canceling.canceled_at).toBe(START);
    expect(canceling.status).toBe('active');

    const resumed = await stripe.subscriptions.update(subscription.id, { cancel_at_period_end: false });
    expect(resumed.cancel_at_period_end).toBe(false);
    expect(resumed.cancel_at).toBeNull();
    expect(resumed.canceled_at).toBeNull();

    const updates = (await settledEvents('customer.subscription.updated')) as Stripe.CustomerSubscriptionUpdatedEvent[];
    expect(updates.map((event) => event.data.previous_attributes?.cancel_at_period_end)).toEqual([false, true]);
  });

  it('ends a subscription set to cancel when the clock passes the period end', async () => {
    const subscription = await subscribe(3);
    await stripe.subscriptions.update(subscription.id, { cancel_at_period_end: true });
    const before = await advanceClock(30 * DAY);
    expect(before.events).toEqual([]);
    expect((await stripe.subscriptions.retrieve(subscription.id)).status).toBe('active');

    const after = await advanceClock(DAY);
    expect(after.events.map((event) => event.type)).toEqual(['customer.subscription.deleted']);
    const ended = await stripe.subscriptions.retrieve(subscription.id);
    expect(ended.status).toBe('canceled');
    expect(ended.ended_at).toBe(MARCH_END);
    expect((await stripe.invoices.list({ subscription: subscription.id })).data).toHaveLength(1);

    const [deleted] = (await settledEvents('customer.subscription.deleted')) as Stripe.CustomerSubscriptionDeletedEvent[];
    expect(deleted.data.object.id).toBe(subscription.id);
    expect(deleted.data.object.status).toBe('canceled');

    expect((await stripe.subscriptions.list({ customer: subscription.customer as string })).data).toHaveLength(0);
    expect((await stripe.subscriptions.list({ customer: subscription.customer as string, status: 'all' })).data).toHaveLength(1);
  });

  it('cancels immediately on delete and refuses later changes', async () => {
    const subscription = await subscribe(3);
    const canceled = await stripe.subscriptions.cancel(subscription.id);
    expect(canceled.status).toBe('canceled');
    expect(canceled.ended_at).toBe(START);
    const [deleted] = await settledEvents('customer.subscription.deleted');
    expect((deleted.data.object as Stripe.Subscription).id).toBe(subscription.id);

    const error = await stripe.subscriptions
      .update(subscription.id, { cancel_at_period_end: false })
      .then(() => null, (caught: Stripe.errors.StripeError) => caught);
    expect(error?.statusCode).toBe(400);
    const advanced = await advanceClock(40 * DAY);
    expect(advanced.events).toEqual([]);
  });

  it('refuses a negative clock advance', async () => {
    const response = await fetch(`${fake.url}/_fake/advance-clock`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ seconds: -5 }),
    });
    expect(response.status).toBe(400);
  });
});
