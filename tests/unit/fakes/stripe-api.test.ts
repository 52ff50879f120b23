import Stripe from 'stripe';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startStripeFake, type StartedStripeFake } from '../../../server/fakes/stripe';

const WEBHOOK_SECRET = 'whsec_unit_api_secret';

let fake: StartedStripeFake;
let stripe: Stripe;

const sdkFor = (key: string) => new Stripe(key, { host: '127.0.0.1', port: fake.port, protocol: 'http', maxNetworkRetries: 0 });

async function rawRequest(path: string, init: RequestInit = {}) {
  const response = await fetch(`${fake.url}${path}`, init);
  return { status: response.status, body: (await response.json()) as { error?: Record<string, unknown> } & Record<string, unknown> };
}

async function catchStripeError(promise: Promise<unknown>): Promise<Stripe.errors.StripeError> {
  try {
    await promise;
  } catch (error) {
    if (error instanceof Stripe.errors.StripeError) return error;
    throw error;
  }
  throw new Error('Expected the Stripe call to fail.');
}

beforeAll(async () => {
  fake = await startStripeFake({ webhookSecret: WEBHOOK_SECRET });
  stripe = sdkFor('sk_test_unit_api');
});

afterAll(async () => {
  await fake.close();
});

describe('authentication', () => {
  it('answers 401 in Stripe error shape without an API key', async () => {
    const { status, body } = await rawRequest('/v1/customers');
    expect(status).toBe(401);
    expect(body.error?.type).toBe('invalid_request_error');
    expect(String(body.error?.message)).toMatch(/did not provide an API key/);
  });

  it('refuses live and publishable keys but takes any sk_test_ key', async () => {
    const live = await catchStripeError(sdkFor('sk_live_notallowed123').customers.list());
    expect(live).toBeInstanceOf(Stripe.errors.StripeAuthenticationError);
    expect(live.statusCode).toBe(401);
    const publishable = await catchStripeError(sdkFor('pk_test_notallowed123').customers.list());
    expect(publishable.statusCode).toBe(401);
    const other = await sdkFor('sk_test_another_key').customers.list();
    expect(other.object).toBe('list');
  });

  it('also takes the key as the Basic-auth user name, as curl -u does', async () => {
    const { status } = await rawRequest('/v1/customers', {
      headers: { authorization: `Basic ${Buffer.from('sk_test_basic:').toString('base64')}` },
    });
    expect(status).toBe(200);
  });
});

describe('errors', () => {
  it('answers an unknown id with 404 resource_missing', async () => {
    const error = await catchStripeError(stripe.customers.retrieve('cus_doesnotexist'));
    expect(error).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect(error.statusCode).toBe(404);
    expect(error.code).toBe('resource_missing');
    expect(error.param).toBe('id');
    expect(error.message).toBe("No such customer: 'cus_doesnotexist'");

    const { status, body } = await rawRequest('/v1/subscriptions/sub_missing', { headers: { authorization: 'Bearer sk_test_raw' } });
    expect(status).toBe(404);
    expect(body).toEqual({
      error: { type: 'invalid_request_error', code: 'resource_missing', message: "No such subscription: 'sub_missing'", param: 'id' },
    });
  });

  it('answers an endpoint it does not model with 404 and says so', async () => {
    const { status, body } = await rawRequest('/v1/charges', { headers: { authorization: 'Bearer sk_test_raw' } });
    expect(status).toBe(404);
    expect(body.error?.type).toBe('invalid_request_error');
    expect(String(body.error?.message)).toContain('Unrecognized request URL (GET: /v1/charges)');
  });

  it('rejects unknown and missing parameters with the parameter named', async () => {
    const unknown = await catchStripeError(stripe.customers.create({ email: 'crew@example.test', tax_exempt: 'none' }));
    expect(unknown.statusCode).toBe(400);
    expect(unknown.code).toBe('parameter_unknown');
    expect(unknown.param).toBe('tax_exempt');

    const missing = await catchStripeError(stripe.products.create({} as Stripe.ProductCreateParams));
    expect(missing.code).toBe('parameter_missing');
    expect(missing.param).toBe('name');
  });

  it('rejects a path that cannot be expanded', async () => {
    const customer = await stripe.customers.create({ email: 'expand@example.test' });
    const error = await catchStripeError(stripe.customers.retrieve(customer.id, { expand: ['email'] }));
    expect(error.statusCode).toBe(400);
    expect(error.param).toBe('expand');
  });
});

describe('products and prices', () => {
  it('creates a product with monthly and yearly seat prices and finds them by lookup key', async () => {
    const product = await stripe.products.create({ name: 'Crew seat', metadata: { catalog: 'seats' } });
    expect(product.id).toMatch(/^prod_/);
    expect(product.object).toBe('product');

    const monthly = await stripe.prices.create({
      product: product.id,
      currency: 'usd',
      unit_amount: 2500,
      recurring: { interval: 'month' },
      lookup_key: 'api_seat_monthly',
    });
    const yearly = await stripe.prices.create({
      product: product.id,
      currency: 'usd',
      unit_amount: 25_000,
      recurring: { interval: 'year' },
      lookup_key: 'api_seat_yearly',
    });
    expect(monthly.id).toMatch(/^price_/);
    expect(monthly.recurring?.interval).toBe('month');
    expect(monthly.type).toBe('recurring');
    expect(String(monthly.unit_amount_decimal)).toBe('2500');

    const found = await stripe.prices.list({ lookup_keys: ['api_seat_monthly', 'api_seat_yearly'], expand: ['data.product'] });
    expect(found.data.map((price) => price.id).sort()).toEqual([monthly.id, yearly.id].sort());
    expect((found.data[0].product as Stripe.Product).name).toBe('Crew seat');

    const retrieved = await stripe.prices.retrieve(yearly.id, { expand: ['product'] });
    expect(retrieved.unit_amount).toBe(25_000);
    expect((retrieved.product as Stripe.Product).id).toBe(product.id);
    expect((await stripe.products.retrieve(product.id)).metadata).toEqual({ catalog: 'seats' });
  });

  it('creates the product inline from product_data', async () => {
    const price = await stripe.prices.create({
      product_data: { name: 'Observer seat' },
      currency: 'usd',
      unit_amount: 900,
      recurring: { interval: 'month' },
    });
    const product = await stripe.products.retrieve(price.product as string);
    expect(product.name).toBe('Observer seat');
  });

  it('keeps lookup keys unique unless transfer_lookup_key moves one', async () => {
    const product = await stripe.products.create({ name: 'Lead seat' });
    const first = await stripe.prices.create({ product: product.id, currency: 'usd', unit_amount: 100, lookup_key: 'api_unique_key', recurring: { interval: 'month' } });
    const clash = await catchStripeError(
      stripe.prices.create({ product: product.id, currency: 'usd', unit_amount: 200, lookup_key: 'api_unique_key', recurring: { interval: 'month' } }),
    );
    expect(clash.statusCode).toBe(400);
    expect(clash.param).toBe('lookup_key');

    const second = await stripe.prices.create({
      product: product.id, currency: 'usd', unit_amount: 200, lookup_key: 'api_unique_key', transfer_lookup_key: true, recurring: { interval: 'month' },
    });
    const listed = await stripe.prices.list({ lookup_keys: ['api_unique_key'] });
    expect(listed.data.map((price) => price.id)).toEqual([second.id]);
    expect((await stripe.prices.retrieve(first.id)).lookup_key).toBeNull();
  });

  it('refuses a price for a product that does not exist', async () => {
    const error = await catchStripeError(stripe.prices.create({ product: 'prod_missing', currency: 'usd', unit_amount: 100 }));
    expect(error.code).toBe('resource_missing');
    expect(error.param).toBe('product');
  });
});

describe('customers', () => {
  it('creates, retrieves and updates a customer, merging metadata as Stripe does', async () => {
    const customer = await stripe.customers.create({
      email: 'dispatch@harrow-stack.example.test',
      name: 'Harrow Stack Testing',
      metadata: { organization_id: 'org-17', region: 'north' },
    });
    expect(customer.id).toMatch(/^cus_/);
    expect(customer.object).toBe('customer');

    const updated = await stripe.customers.update(customer.id, { name: 'Harrow Stack Testing Co.', metadata: { region: '', tier: 'crew' } });
    expect(updated.name).toBe('Harrow Stack Testing Co.');
    expect(updated.metadata).toEqual({ organization_id: 'org-17', tier: 'crew' });

    const retrieved = (await stripe.customers.retrieve(customer.id)) as Stripe.Customer;
    expect(retrieved.email).toBe('dispatch@harrow-stack.example.test');
    expect(retrieved.metadata).toEqual({ organization_id: 'org-17', tier: 'crew' });
  });

  it('lists newest first and pages with starting_after', async () => {
    const email = 'paging@example.test';
    const created = [];
    for (let index = 0; index < 3; index++) created.push(await stripe.customers.create({ email, name: `Crew ${index}` }));
    const firstPage = await stripe.customers.list({ email, limit: 2 });
    expect(firstPage.data.map((customer) => customer.id)).toEqual([created[2].id, created[1].id]);
    expect(firstPage.has_more).toBe(true);
    const secondPage = await stripe.customers.list({ email, limit: 2, starting_after: created[1].id });
    expect(secondPage.data.map((customer) => customer.id)).toEqual([created[0].id]);
    expect(secondPage.has_more).toBe(false);
    const all = await stripe.customers.list({ email, limit: 1 }).autoPagingToArray({ limit: 10 });
    expect(all).toHaveLength(3);
  });

  it('replays a POST with the same idempotency key and refuses the key for other parameters', async () => {
    const first = await stripe.customers.create({ email: 'once@example.test' }, { idempotencyKey: 'unit-api-key-1' });
    const replay = await stripe.customers.create({ email: 'once@example.test' }, { idempotencyKey: 'unit-api-key-1' });
    expect(replay.id).toBe(first.id);
    const misuse = await catchStripeError(stripe.customers.create({ email: 'other@example.test' }, { idempotencyKey: 'unit-api-key-1' }));
    expect(misuse).toBeInstanceOf(Stripe.errors.StripeIdempotencyError);
    expect(misuse.statusCode).toBe(400);
  });
});

describe('checkout sessions and portal sessions', () => {
  async function seatPrice() {
    const product = await stripe.products.create({ name: 'Field crew seat' });
    return stripe.prices.create({ product: product.id, currency: 'usd', unit_amount: 2500, recurring: { interval: 'month' } });
  }

  it('creates a subscription-mode session whose url is the hosted payment page', async () => {
    const price = await seatPrice();
    const session = await stripe.checkout.sessions.create({
      mode: 'subscription',
      line_items: [{ price: price.id, quantity: 4 }],
      customer_email: 'buyer@example.test',
      success_url: 'http://127.0.0.1:5173/billing/done?session_id={CHECKOUT_SESSION_ID}',
      cancel_url: 'http://127.0.0.1:5173/billing',
      metadata: { organization_id: 'org-42' },
      subscription_data: { metadata: { organization_id: 'org-42' } },
    });
    expect(session.id).toMatch(/^cs_test_/);
    expect(session.object).toBe('checkout.session');
    expect(session.url).toBe(`${fake.url}/pay/${session.id}`);
    expect(session.status).toBe('open');
    expect(session.payment_status).toBe('unpaid');
    expect(session.amount_total).toBe(10_000);
    expect(session.success_url).toContain('{CHECKOUT_SESSION_ID}');
    expect(session.metadata).toEqual({ organization_id: 'org-42' });

    const retrieved = await stripe.checkout.sessions.retrieve(session.id, { expand: ['line_items'] });
    expect(retrieved.line_items?.data).toHaveLength(1);
    expect(retrieved.line_items?.data[0].quantity).toBe(4);
    expect(retrieved.line_items?.data[0].price?.id).toBe(price.id);
    const lines = await stripe.checkout.sessions.listLineItems(session.id);
    expect(lines.data[0].amount_total).toBe(10_000);
  });

  it('refuses customer together with customer_email, a missing price and other modes', async () => {
    const price = await seatPrice();
    const customer = await stripe.customers.create({ email: 'both@example.test' });
    const base = { success_url: 'http://127.0.0.1:5173/ok', line_items: [{ price: price.id, quantity: 1 }] };
    const both = await catchStripeError(
      stripe.checkout.sessions.create({ ...base, mode: 'subscription', customer: customer.id, customer_email: 'both@example.test' }),
    );
    expect(both.statusCode).toBe(400);
    const noPrice = await catchStripeError(
      stripe.checkout.sessions.create({ ...base, mode: 'subscription', line_items: [{ price: 'price_missing', quantity: 1 }] }),
    );
    expect(noPrice.param).toBe('line_items[0][price]');
    const payment = await catchStripeError(stripe.checkout.sessions.create({ ...base, mode: 'payment' }));
    expect(payment.param).toBe('mode');
  });

  it('creates a billing portal session that links to the portal page', async () => {
    const customer = await stripe.customers.create({ email: 'portal@example.test' });
    const portal = await stripe.billingPortal.sessions.create({ customer: customer.id, return_url: 'http://127.0.0.1:5173/settings/billing' });
    expect(portal.id).toMatch(/^bps_/);
    expect(portal.object).toBe('billing_portal.session');
    expect(portal.url).toBe(`${fake.url}/portal/${portal.id}`);
    const page = await fetch(portal.url);
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain('portal@example.test');
    expect(html).toContain('No real card is charged');
    expect(html).toContain('href="http://127.0.0.1:5173/settings/billing"');
  });
});
