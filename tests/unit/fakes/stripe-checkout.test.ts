import Stripe from 'stripe';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { startStripeFake, type StartedStripeFake } from '../../../server/fakes/stripe';
import {
  TEST_CARD_DECLINED,
  startWebhookReceiver,
  submitPaymentForm,
  type WebhookReceiver,
} from '../../../server/fakes/stripe/test-support';

const WEBHOOK_SECRET = 'whsec_unit_checkout_secret';
const APP = 'http://127.0.0.1:5173';
// A fixed billing clock keeps period arithmetic exact: 15 Jan 2031, 09:30 UTC.
const START_MS = Date.UTC(2031, 0, 15, 9, 30);

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
  stripe = new Stripe('sk_test_unit_checkout', { host: '127.0.0.1', port: fake.port, protocol: 'http', maxNetworkRetries: 0 });
});

afterEach(async () => {
  await fake.close();
  await receiver.close();
});

async function seatPrice(interval: 'month' | 'year' = 'month', unitAmount = 2500) {
  const product = await stripe.products.create({ name: 'Crew seat' });
  return stripe.prices.create({ product: product.id, currency: 'usd', unit_amount: unitAmount, recurring: { interval } });
}

async function openSession(overrides: Partial<Stripe.Checkout.SessionCreateParams> = {}, interval: 'month' | 'year' = 'month') {
  const price = await seatPrice(interval);
  return stripe.checkout.sessions.create({
    mode: 'subscription',
    line_items: [{ price: price.id, quantity: 3 }],
    customer_email: 'lead@cinder-ridge.example.test',
    success_url: `${APP}/billing/done?session_id={CHECKOUT_SESSION_ID}`,
    cancel_url: `${APP}/billing?canceled=1`,
    metadata: { organization_id: 'org-cinder' },
    subscription_data: { metadata: { organization_id: 'org-cinder' } },
    ...overrides,
  });
}

const typesOf = (events: Stripe.Event[]) => events.map((event) => event.type);

describe('hosted payment page', () => {
  it('shows the line items, total and card fields in a plain form without scripts', async () => {
    const session = await openSession();
    const response = await fetch(session.url as string);
    expect(response.status).toBe(200);
    expect(response.headers.get('content-security-policy')).toContain("default-src 'none'");
    const html = await response.text();
    expect(html).toContain('Crew seat');
    expect(html).toContain('$75.00');
    expect(html).toContain('No real card is charged');
    for (const name of ['card_number', 'card_expiry', 'card_cvc', 'cardholder_name']) expect(html).toContain(`name="${name}"`);
    expect(html).toContain(`action="/pay/${session.id}"`);
    expect(html).toContain(`href="${APP}/billing?canceled=1"`);
    expect(html).not.toMatch(/<script/i);
  });

  it('takes 4242 4242 4242 4242, creates the subscription and invoice, and redirects to success_url', async () => {
    const session = await openSession();
    const response = await submitPaymentForm(session.url as string);
    expect(response.status).toBe(303);
    expect(response.headers.get('location')).toBe(`${APP}/billing/done?session_id=${session.id}`);

    const paid = await stripe.checkout.sessions.retrieve(session.id, { expand: ['subscription', 'customer'] });
    expect(paid.status).toBe('complete');
    expect(paid.payment_status).toBe('paid');
    const customer = paid.customer as Stripe.Customer;
    expect(customer.id).toMatch(/^cus_/);
    expect(customer.email).toBe('lead@cinder-ridge.example.test');
    expect(customer.name).toBe('Avery Quill');

    const subscription = paid.subscription as Stripe.Subscription;
    expect(subscription.id).toMatch(/^sub_/);
    expect(subscription.status).toBe('active');
    expect(subscription.customer).toBe(customer.id);
    expect(subscription.metadata).toEqual({ organization_id: 'org-cinder' });
    const item = subscription.items.data[0];
    expect(item.id).toMatch(/^si_/);
    expect(item.quantity).toBe(3);
    expect(item.current_period_start).toBe(START_MS / 1000);
    expect(item.current_period_end).toBe(Date.UTC(2031, 1, 15, 9, 30) / 1000);

    const invoices = await stripe.invoices.list({ subscription: subscription.id });
    expect(invoices.data).toHaveLength(1);
    const invoice = invoices.data[0];
    expect(invoice.id).toMatch(/^in_/);
    expect(invoice.id).toBe(subscription.latest_invoice);
    expect(invoice.status).toBe('paid');
    expect(invoice.amount_paid).toBe(7500);
    expect(invoice.billing_reason).toBe('subscription_create');
    expect(invoice.parent?.subscription_details?.subscription).toBe(subscription.id);
    expect(invoice.lines.data[0].quantity).toBe(3);
    expect((await stripe.invoices.list({ customer: customer.id })).data.map((listed) => listed.id)).toEqual([invoice.id]);

    const receipt = await fetch(invoice.hosted_invoice_url as string);
    expect(receipt.status).toBe(200);
    expect(await receipt.text()).toContain(invoice.number as string);
  });

  it('sends signed checkout, subscription and invoice webhooks that constructEvent accepts', async () => {
    const session = await openSession();
    await submitPaymentForm(session.url as string);
    const events = await receiver.waitFor((received) => received.some((event) => event.type === 'checkout.session.completed'));
    expect(typesOf(events)).toEqual([
      'customer.created',
      'customer.subscription.created',
      'invoice.paid',
      'invoice.payment_succeeded',
      'checkout.session.completed',
    ]);
    expect(receiver.deliveries.every((delivery) => delivery.status === 200)).toBe(true);

    const completed = events.at(-1) as Stripe.CheckoutSessionCompletedEvent;
    expect(completed.id).toMatch(/^evt_/);
    expect(completed.object).toBe('event');
    expect(completed.livemode).toBe(false);
    expect(completed.api_version).toBe(Stripe.API_VERSION);
    expect(completed.data.object.id).toBe(session.id);
    expect(completed.data.object.subscription).toMatch(/^sub_/);
    expect(completed.data.object.metadata).toEqual({ organization_id: 'org-cinder' });

    const delivery = receiver.deliveries[0];
    expect(delivery.signature).toMatch(/^t=\d+,v1=[0-9a-f]{64}$/);
    expect(() => Stripe.webhooks.constructEvent(delivery.rawBody, delivery.signature, 'whsec_some_other_secret')).toThrow(
      Stripe.errors.StripeSignatureVerificationError,
    );
  });

  it('bills a yearly price for exactly one year', async () => {
    const session = await openSession({}, 'year');
    await submitPaymentForm(session.url as string);
    const paid = await stripe.checkout.sessions.retrieve(session.id);
    const subscription = await stripe.subscriptions.retrieve(paid.subscription as string);
    expect(subscription.items.data[0].current_period_end).toBe(Date.UTC(2032, 0, 15, 9, 30) / 1000);
  });

  it('uses an existing customer instead of creating one', async () => {
    const customer = await stripe.customers.create({ email: 'office@slate-flue.example.test', name: 'Slate Flue Services' });
    const session = await openSession({ customer: customer.id, customer_email: undefined });
    const page = await (await fetch(session.url as string)).text();
    expect(page).toContain('office@slate-flue.example.test');
    expect(page).not.toContain('name="email"');
    const response = await submitPaymentForm(session.url as string, { email: undefined });
    expect(response.status).toBe(303);
    const paid = await stripe.checkout.sessions.retrieve(session.id);
    expect(paid.customer).toBe(customer.id);
    expect((await stripe.customers.list({ email: 'office@slate-flue.example.test' })).data).toHaveLength(1);
  });

  it('declines 4000 0000 0000 0002 on the page and leaves the session open', async () => {
    const session = await openSession();
    const response = await submitPaymentForm(session.url as string, { card_number: TEST_CARD_DECLINED });
    expect(response.status).toBe(402);
    const html = await response.text();
    expect(html).toContain('Your card was declined');
    expect(html).toContain(`href="${APP}/billing?canceled=1"`);

    const after = await stripe.checkout.sessions.retrieve(session.id);
    expect(after.status).toBe('open');
    expect(after.subscription).toBeNull();
    expect((await stripe.subscriptions.list()).data).toHaveLength(0);
    expect(await fake.fake.webhooks.whenIdle(2000)).toBe(true);
    expect(receiver.deliveries).toHaveLength(0);

    const retry = await submitPaymentForm(session.url as string);
    expect(retry.status).toBe(303);
  });

  it('explains form problems and refuses numbers that are not test cards', async () => {
    const session = await openSession({ customer_email: undefined });
    const response = await submitPaymentForm(session.url as string, {
      email: 'not-an-email',
      card_number: '4242 4242 4242 4241',
      card_expiry: '01 / 20',
      card_cvc: '1',
      cardholder_name: '',
    });
    expect(response.status).toBe(400);
    const html = await response.text();
    expect(html).toContain('Enter a valid email address.');
    expect(html).toContain('Your card number is incorrect.');
    expect(html).toContain('expiration date is in the past');
    expect(html).toContain('security code is incomplete');
    expect(html).toContain('Enter the name on the card.');

    const realLooking = await submitPaymentForm(session.url as string, { card_number: '4111 1111 1111 1111' });
    expect(realLooking.status).toBe(400);
    expect(await realLooking.text()).toContain('Use a test card number');
    expect((await stripe.checkout.sessions.retrieve(session.id)).status).toBe('open');
  });

  it('treats a second submission of a paid session as done, without a second subscription', async () => {
    const session = await openSession();
    await submitPaymentForm(session.url as string);
    const again = await submitPaymentForm(session.url as string);
    expect(again.status).toBe(303);
    expect((await stripe.subscriptions.list()).data).toHaveLength(1);
    const page = await fetch(`${fake.url}/pay/${session.id}`);
    expect(await page.text()).toContain('already paid');
  });

  it('shows expired and unknown sessions as such', async () => {
    const session = await openSession();
    await stripe.checkout.sessions.expire(session.id);
    expect((await fetch(`${fake.url}/pay/${session.id}`)).status).toBe(410);
    expect((await submitPaymentForm(`${fake.url}/pay/${session.id}`)).status).toBe(410);
    expect((await fetch(`${fake.url}/pay/cs_test_unknown`)).status).toBe(404);
    await receiver.waitFor((events) => typesOf(events).includes('checkout.session.expired'));
  });

  it('expires an unpaid session 24 hours after creation when the clock moves', async () => {
    const session = await openSession();
    const advance = (seconds: number) =>
      fetch(`${fake.url}/_fake/advance-clock`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ seconds }) });
    await advance(24 * 3600 - 1);
    expect((await stripe.checkout.sessions.retrieve(session.id)).status).toBe('open');
    const response = await advance(1);
    const body = (await response.json()) as { events: { type: string }[] };
    expect(body.events.map((event) => event.type)).toEqual(['checkout.session.expired']);
    const expired = await stripe.checkout.sessions.retrieve(session.id);
    expect(expired.status).toBe('expired');
    expect(expired.url).toBeNull();
  });
});

describe('billing portal page', () => {
  async function paidSubscription() {
    const session = await openSession();
    await submitPaymentForm(session.url as string);
    const paid = await stripe.checkout.sessions.retrieve(session.id);
    return stripe.subscriptions.retrieve(paid.subscription as string);
  }

  const postForm = (url: string, fields: Record<string, string> = {}) =>
    fetch(url, { method: 'POST', body: new URLSearchParams(fields), redirect: 'manual' });

  it('changes seats, cancels at period end and resumes, then links back to the app', async () => {
    const subscription = await paidSubscription();
    const portal = await stripe.billingPortal.sessions.create({ customer: subscription.customer as string, return_url: `${APP}/settings/billing` });
    const page = await (await fetch(portal.url)).text();
    expect(page).toContain('3 seats');
    expect(page).toContain(`href="${APP}/settings/billing"`);
    const base = `${portal.url}/subscriptions/${subscription.id}`;

    const seats = await postForm(`${base}/quantity`, { quantity: '5' });
    expect(seats.status).toBe(303);
    expect(seats.headers.get('location')).toBe(`/portal/${portal.id}?done=quantity`);
    const afterSeats = await stripe.subscriptions.retrieve(subscription.id);
    expect(afterSeats.items.data[0].quantity).toBe(5);
    const pending = await stripe.invoiceItems.list({ customer: subscription.customer as string, pending: true });
    expect(pending.data.map((item) => item.proration)).toEqual([true, true]);

    await postForm(`${base}/cancel`);
    expect((await stripe.subscriptions.retrieve(subscription.id)).cancel_at_period_end).toBe(true);
    expect(await (await fetch(portal.url)).text()).toContain('Cancels on 15 Feb 2031');

    await postForm(`${base}/resume`);
    expect((await stripe.subscriptions.retrieve(subscription.id)).cancel_at_period_end).toBe(false);

    const events = await receiver.waitFor((received) => typesOf(received).filter((type) => type === 'customer.subscription.updated').length === 3);
    const updates = events.filter((event) => event.type === 'customer.subscription.updated') as Stripe.CustomerSubscriptionUpdatedEvent[];
    expect(updates.map((event) => event.data.object.cancel_at_period_end)).toEqual([false, true, false]);
  });

  it('refuses a seat count below one and a subscription of another customer', async () => {
    const subscription = await paidSubscription();
    const portal = await stripe.billingPortal.sessions.create({ customer: subscription.customer as string });
    const zero = await postForm(`${portal.url}/subscriptions/${subscription.id}/quantity`, { quantity: '0' });
    expect(zero.status).toBe(400);
    expect(await zero.text()).toContain('Enter a whole number of seats');

    const stranger = await stripe.customers.create({ email: 'stranger@example.test' });
    const strangerPortal = await stripe.billingPortal.sessions.create({ customer: stranger.id });
    const foreign = await postForm(`${strangerPortal.url}/subscriptions/${subscription.id}/cancel`);
    expect(foreign.status).toBe(404);
    expect((await stripe.subscriptions.retrieve(subscription.id)).cancel_at_period_end).toBe(false);
  });
});
