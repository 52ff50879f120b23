import express, { type Request, type RequestHandler, type Router } from 'express';
import type { Billing, ChangeContext, ProrationBehavior } from './billing';
import { StripeFakeError, badRequest, invalidParam, missingParam, noSuch, stripeErrorHandler } from './errors';
import {
  listOf,
  type ApiList,
  type CheckoutLineItem,
  type CheckoutSession,
  type Customer,
  type Interval,
  type PortalSession,
  type Price,
  type Product,
  type Subscription,
} from './objects';
import {
  allowOnly,
  mergeMetadata,
  readArray,
  readBoolean,
  readEnum,
  readExpand,
  readInteger,
  readObject,
  readPage,
  readString,
  readStringArray,
  requireString,
  type Params,
} from './params';
import { newId, type FakeStore } from './store';

export interface ApiDependencies {
  store: FakeStore;
  billing: Billing;
  idempotency: IdempotencyCache;
  baseUrlOf: (req: Request) => string;
}

/** Stripe keeps a POST's response per Idempotency-Key and replays it; the SDK sends a key with every POST. */
export class IdempotencyCache {
  private readonly entries = new Map<string, { fingerprint: string; status: number; body: unknown }>();
  constructor(private readonly capacity = 1000) {}
  get(key: string) {
    return this.entries.get(key);
  }
  set(key: string, entry: { fingerprint: string; status: number; body: unknown }) {
    this.entries.set(key, entry);
    if (this.entries.size > this.capacity) this.entries.delete(this.entries.keys().next().value as string);
  }
  clear() {
    this.entries.clear();
  }
}

const CHECKOUT_SESSION_LIFETIME_SECONDS = 24 * 60 * 60; // Stripe's default expires_at
const MAX_CHECKOUT_LINE_ITEMS = 20;

interface Call {
  req: Request;
  context: ChangeContext;
}
type Handler = (params: Params, call: Call) => unknown;

/** The `/v1` API the app reaches through the official SDK. */
export function createApiRouter(deps: ApiDependencies): Router {
  const { store, billing } = deps;
  const router = express.Router();
  router.use(requestId, authenticate, express.urlencoded({ extended: true, limit: '1mb' }), idempotency(deps.idempotency));

  const route =
    (handler: Handler): RequestHandler =>
    (req, res) => {
      const params = (req.method === 'POST' ? req.body : req.query) ?? {};
      const context: ChangeContext = {
        baseUrl: deps.baseUrlOf(req),
        requestId: res.getHeader('Request-Id') as string,
        idempotencyKey: req.get('Idempotency-Key') ?? null,
      };
      res.json(handler(params as Params, { req, context }));
    };
  const expanded = (value: unknown, params: Params) => expand(store, value, readExpand(params));

  // --- Products -------------------------------------------------------------------------------
  router.post('/products', route((p) => {
    allowOnly(p, ['id', 'name', 'description', 'active', 'metadata', 'unit_label', 'statement_descriptor', 'url']);
    const id = readString(p, 'id') || newId('prod_', 14);
    if (store.products.has(id)) throw badRequest(`Product already exists.`, 'id');
    const now = store.now();
    const product: Product = {
      id,
      object: 'product',
      active: readBoolean(p, 'active') ?? true,
      created: now,
      updated: now,
      default_price: null,
      description: readString(p, 'description') || null,
      images: [],
      livemode: false,
      marketing_features: [],
      metadata: mergeMetadata({}, p),
      name: requireString(p, 'name'),
      package_dimensions: null,
      shippable: null,
      statement_descriptor: readString(p, 'statement_descriptor') || null,
      tax_code: null,
      type: 'service',
      unit_label: readString(p, 'unit_label') || null,
      url: readString(p, 'url') || null,
    };
    store.products.set(product.id, product);
    store.save();
    return expanded(product, p);
  }));
  router.get('/products/:id', route((p, { req }) => expanded(found(store.products, req.params.id as string, 'product'), p)));
  router.post('/products/:id', route((p, { req }) => {
    allowOnly(p, ['name', 'description', 'active', 'metadata', 'unit_label', 'statement_descriptor', 'url']);
    const product = found(store.products, req.params.id as string, 'product');
    if (p.name !== undefined) product.name = requireString(p, 'name');
    if (p.description !== undefined) product.description = readString(p, 'description') || null;
    product.active = readBoolean(p, 'active') ?? product.active;
    product.metadata = mergeMetadata(product.metadata, p);
    product.updated = store.now();
    store.save();
    return expanded(product, p);
  }));
  router.get('/products', route((p, { req }) => {
    allowOnly(p, ['active', 'ids', 'limit', 'starting_after', 'ending_before']);
    const active = readBoolean(p, 'active');
    const ids = readStringArray(p, 'ids');
    const items = newestFirst(store.products).filter(
      (product) => (active === undefined || product.active === active) && (!ids || ids.includes(product.id)),
    );
    return expanded(paginate(items, p, req), p);
  }));

  // --- Prices ---------------------------------------------------------------------------------
  router.post('/prices', route((p) => {
    allowOnly(p, ['currency', 'unit_amount', 'product', 'product_data', 'recurring', 'lookup_key', 'transfer_lookup_key', 'nickname', 'metadata', 'active']);
    const currency = requireString(p, 'currency').toLowerCase();
    if (!/^[a-z]{3}$/.test(currency)) throw invalidParam('currency', `Invalid currency: ${currency}`);
    const unitAmount = readInteger(p, 'unit_amount', { min: 0 });
    if (unitAmount === undefined) throw missingParam('unit_amount');
    const productData = readObject(p, 'product_data');
    let productId = readString(p, 'product');
    if (productId && productData) throw badRequest('You may only specify one of these parameters: product, product_data.', 'product');
    if (productData) {
      allowOnly(productData, ['name', 'metadata', 'unit_label', 'statement_descriptor'], 'product_data');
      const now = store.now();
      const product: Product = {
        id: newId('prod_', 14), object: 'product', active: true, created: now, updated: now, default_price: null,
        description: null, images: [], livemode: false, marketing_features: [],
        metadata: mergeMetadata({}, productData, 'metadata', 'product_data[metadata]'),
        name: requireString(productData, 'name', 'product_data[name]'), package_dimensions: null, shippable: null,
        statement_descriptor: null, tax_code: null, type: 'service',
        unit_label: readString(productData, 'unit_label') || null, url: null,
      };
      store.products.set(product.id, product);
      productId = product.id;
    }
    if (!productId) throw missingParam('product');
    if (!store.products.has(productId)) throw invalidParam('product', `No such product: '${productId}'`, 'resource_missing');

    const recurringParams = readObject(p, 'recurring');
    let recurring: Price['recurring'] = null;
    if (recurringParams) {
      allowOnly(recurringParams, ['interval', 'interval_count', 'usage_type'], 'recurring');
      const interval = readEnum<Interval>(recurringParams, 'interval', ['day', 'week', 'month', 'year'], 'recurring[interval]');
      if (!interval) throw missingParam('recurring[interval]');
      readEnum(recurringParams, 'usage_type', ['licensed'], 'recurring[usage_type]');
      recurring = {
        interval,
        interval_count: readInteger(recurringParams, 'interval_count', { min: 1, max: interval === 'year' ? 3 : 36 }, 'recurring[interval_count]') ?? 1,
        meter: null,
        trial_period_days: null,
        usage_type: 'licensed',
      };
    }
    const lookupKey = readString(p, 'lookup_key') || null;
    if (lookupKey) claimLookupKey(store, lookupKey, readBoolean(p, 'transfer_lookup_key') ?? false);
    const price: Price = {
      id: newId('price_'),
      object: 'price',
      active: readBoolean(p, 'active') ?? true,
      billing_scheme: 'per_unit',
      created: store.now(),
      currency,
      custom_unit_amount: null,
      livemode: false,
      lookup_key: lookupKey,
      metadata: mergeMetadata({}, p),
      nickname: readString(p, 'nickname') || null,
      product: productId,
      recurring,
      tax_behavior: 'unspecified',
      tiers_mode: null,
      transform_quantity: null,
      type: recurring ? 'recurring' : 'one_time',
      unit_amount: unitAmount,
      unit_amount_decimal: String(unitAmount),
    };
    store.prices.set(price.id, price);
    store.save();
    return expanded(price, p);
  }));
  router.get('/prices/:id', route((p, { req }) => expanded(found(store.prices, req.params.id as string, 'price'), p)));
  router.post('/prices/:id', route((p, { req }) => {
    allowOnly(p, ['active', 'lookup_key', 'transfer_lookup_key', 'nickname', 'metadata']);
    const price = found(store.prices, req.params.id as string, 'price');
    const lookupKey = readString(p, 'lookup_key');
    if (lookupKey !== undefined && lookupKey !== price.lookup_key) {
      if (lookupKey) claimLookupKey(store, lookupKey, readBoolean(p, 'transfer_lookup_key') ?? false);
      price.lookup_key = lookupKey || null;
    }
    price.active = readBoolean(p, 'active') ?? price.active;
    if (p.nickname !== undefined) price.nickname = readString(p, 'nickname') || null;
    price.metadata = mergeMetadata(price.metadata, p);
    store.save();
    return expanded(price, p);
  }));
  router.get('/prices', route((p, { req }) => {
    allowOnly(p, ['active', 'currency', 'lookup_keys', 'product', 'type', 'recurring', 'limit', 'starting_after', 'ending_before']);
    const active = readBoolean(p, 'active');
    const currency = readString(p, 'currency');
    const lookupKeys = readStringArray(p, 'lookup_keys');
    const product = readString(p, 'product');
    const type = readEnum(p, 'type', ['one_time', 'recurring']);
    const recurring = readObject(p, 'recurring');
    if (recurring) allowOnly(recurring, ['interval'], 'recurring');
    const interval = recurring ? readString(recurring, 'interval', 'recurring[interval]') : undefined;
    const items = newestFirst(store.prices).filter(
      (price) =>
        (active === undefined || price.active === active) &&
        (!currency || price.currency === currency.toLowerCase()) &&
        (!lookupKeys || (price.lookup_key !== null && lookupKeys.includes(price.lookup_key))) &&
        (!product || price.product === product) &&
        (!type || price.type === type) &&
        (!interval || price.recurring?.interval === interval),
    );
    return expanded(paginate(items, p, req), p);
  }));

  // --- Customers ------------------------------------------------------------------------------
  const customerFields = ['email', 'name', 'description', 'phone', 'metadata'];
  router.post('/customers', route((p, { context }) => {
    allowOnly(p, customerFields);
    const customer = billing.createCustomer(
      {
        email: readString(p, 'email') || null,
        name: readString(p, 'name') || null,
        description: readString(p, 'description') || null,
        phone: readString(p, 'phone') || null,
        metadata: mergeMetadata({}, p),
      },
      context,
    );
    return expanded(customer, p);
  }));
  router.get('/customers/:id', route((p, { req }) => expanded(found(store.customers, req.params.id as string, 'customer'), p)));
  router.post('/customers/:id', route((p, { req, context }) => {
    allowOnly(p, customerFields);
    const customer = found(store.customers, req.params.id as string, 'customer');
    const before = structuredClone(customer);
    for (const field of ['email', 'name', 'description', 'phone'] as const) {
      if (p[field] !== undefined) customer[field] = readString(p, field) || null;
    }
    customer.metadata = mergeMetadata(customer.metadata, p);
    store.save();
    const previous = Object.fromEntries(
      Object.entries(before).filter(([key, value]) => JSON.stringify(value) !== JSON.stringify(customer[key as keyof Customer])),
    );
    if (Object.keys(previous).length > 0) billing.emitCustomerUpdated(customer, previous, context);
    return expanded(customer, p);
  }));
  router.get('/customers', route((p, { req }) => {
    allowOnly(p, ['email', 'limit', 'starting_after', 'ending_before']);
    const email = readString(p, 'email');
    const items = newestFirst(store.customers).filter((customer) => !email || customer.email === email);
    return expanded(paginate(items, p, req), p);
  }));

  // --- Checkout sessions ----------------------------------------------------------------------
  router.post('/checkout/sessions', route((p, { context }) => {
    allowOnly(p, ['mode', 'line_items', 'customer', 'customer_email', 'success_url', 'cancel_url', 'metadata', 'subscription_data', 'client_reference_id', 'ui_mode', 'payment_method_types']);
    const mode = requireString(p, 'mode');
    if (mode !== 'subscription') throw invalidParam('mode', 'The local Stripe fake supports mode=subscription only.');
    readEnum(p, 'ui_mode', ['hosted']);
    const methods = readStringArray(p, 'payment_method_types');
    if (methods && methods.some((method) => method !== 'card')) throw invalidParam('payment_method_types', 'The local Stripe fake takes cards only.');

    const rawLines = readArray(p, 'line_items');
    if (!rawLines || rawLines.length === 0) throw missingParam('line_items');
    if (rawLines.length > MAX_CHECKOUT_LINE_ITEMS) throw invalidParam('line_items', `At most ${MAX_CHECKOUT_LINE_ITEMS} line items are allowed.`);
    const lineItems = rawLines.map((raw, index) => {
      const label = `line_items[${index}]`;
      if (typeof raw !== 'object' || raw === null || Array.isArray(raw)) throw invalidParam(label, `Invalid object: ${label}`);
      const line = raw as Params;
      allowOnly(line, ['price', 'quantity'], label);
      const priceId = requireString(line, 'price', `${label}[price]`);
      const price = store.prices.get(priceId);
      if (!price) throw invalidParam(`${label}[price]`, `No such price: '${priceId}'`, 'resource_missing');
      if (!price.active) throw invalidParam(`${label}[price]`, `The price '${priceId}' is not active.`);
      if (!price.recurring) {
        throw invalidParam(`${label}[price]`, 'The local Stripe fake needs recurring prices in subscription mode.');
      }
      const quantity = readInteger(line, 'quantity', { min: 1, max: 999_999 }, `${label}[quantity]`);
      if (quantity === undefined) throw missingParam(`${label}[quantity]`);
      return { id: newId('li_'), price, quantity };
    });
    const first = lineItems[0].price;
    for (const { price } of lineItems) {
      if (price.currency !== first.currency) throw invalidParam('line_items', 'All line items must use the same currency.');
      if (price.recurring?.interval !== first.recurring?.interval || price.recurring?.interval_count !== first.recurring?.interval_count) {
        throw invalidParam('line_items', 'All recurring prices in a session must share one billing interval.');
      }
    }

    const customerId = readString(p, 'customer') || null;
    const customerEmail = readString(p, 'customer_email') || null;
    if (customerId && customerEmail) throw badRequest('You may only specify one of these parameters: customer, customer_email.', 'customer_email');
    if (customerId && !store.customers.has(customerId)) throw invalidParam('customer', `No such customer: '${customerId}'`, 'resource_missing');
    const successUrl = requireString(p, 'success_url');
    requireAbsoluteUrl(successUrl, 'success_url');
    const cancelUrl = readString(p, 'cancel_url') || null;
    if (cancelUrl) requireAbsoluteUrl(cancelUrl, 'cancel_url');
    const subscriptionData = readObject(p, 'subscription_data') ?? {};
    allowOnly(subscriptionData, ['metadata', 'description'], 'subscription_data');

    const amount = lineItems.reduce((sum, line) => sum + line.price.unit_amount * line.quantity, 0);
    const now = store.now();
    const id = newId('cs_test_', 40);
    const session: CheckoutSession = {
      id,
      object: 'checkout.session',
      amount_subtotal: amount,
      amount_total: amount,
      cancel_url: cancelUrl,
      client_reference_id: readString(p, 'client_reference_id') || null,
      created: now,
      currency: first.currency,
      customer: customerId,
      customer_creation: customerId ? null : 'always',
      customer_details: null,
      customer_email: customerEmail,
      expires_at: now + CHECKOUT_SESSION_LIFETIME_SECONDS,
      invoice: null,
      livemode: false,
      locale: null,
      metadata: mergeMetadata({}, p),
      mode: 'subscription',
      payment_intent: null,
      payment_method_types: ['card'],
      payment_status: 'unpaid',
      status: 'open',
      subscription: null,
      success_url: successUrl,
      ui_mode: 'hosted',
      url: `${context.baseUrl}/pay/${id}`,
    };
    store.checkoutSessions.set(id, session);
    store.checkoutDetails.set(id, {
      lineItems: lineItems.map((line) => ({ id: line.id, price: line.price.id, quantity: line.quantity })),
      subscriptionMetadata: mergeMetadata({}, subscriptionData, 'metadata', 'subscription_data[metadata]'),
      subscriptionDescription: readString(subscriptionData, 'description') || null,
    });
    store.save();
    return expanded(session, p);
  }));
  router.get('/checkout/sessions/:id', route((p, { req }) => expanded(found(store.checkoutSessions, req.params.id as string, 'checkout.session'), p)));
  router.get('/checkout/sessions/:id/line_items', route((p, { req }) => {
    const session = found(store.checkoutSessions, req.params.id as string, 'checkout.session');
    return expanded(paginate(checkoutLineItems(store, session), p, req), p);
  }));
  router.post('/checkout/sessions/:id/expire', route((p, { context, req }) => {
    allowOnly(p, []);
    const session = found(store.checkoutSessions, req.params.id as string, 'checkout.session');
    if (session.status !== 'open') throw badRequest(`Only open sessions can be expired; this one is ${session.status}.`);
    billing.expireCheckout(session, context);
    return expanded(session, p);
  }));
  router.get('/checkout/sessions', route((p, { req }) => {
    allowOnly(p, ['customer', 'subscription', 'status', 'limit', 'starting_after', 'ending_before']);
    const customer = readString(p, 'customer');
    const subscription = readString(p, 'subscription');
    const status = readEnum(p, 'status', ['open', 'complete', 'expired']);
    const items = newestFirst(store.checkoutSessions).filter(
      (session) =>
        (!customer || session.customer === customer) &&
        (!subscription || session.subscription === subscription) &&
        (!status || session.status === status),
    );
    return expanded(paginate(items, p, req), p);
  }));

  // --- Subscriptions --------------------------------------------------------------------------
  router.get('/subscriptions/:id', route((p, { req }) => expanded(found(store.subscriptions, req.params.id as string, 'subscription'), p)));
  router.get('/subscriptions', route((p, { req }) => {
    allowOnly(p, ['customer', 'status', 'price', 'limit', 'starting_after', 'ending_before']);
    const customer = readString(p, 'customer');
    const status = readEnum(p, 'status', ['active', 'all', 'canceled', 'ended', 'incomplete', 'past_due']);
    const price = readString(p, 'price');
    const items = newestFirst(store.subscriptions).filter(
      (subscription) =>
        (!customer || subscription.customer === customer) &&
        matchesStatus(subscription, status) &&
        (!price || subscription.items.data.some((item) => item.price.id === price)),
    );
    return expanded(paginate(items, p, req), p);
  }));
  router.post('/subscriptions/:id', route((p, { req, context }) => {
    allowOnly(p, ['items', 'cancel_at_period_end', 'proration_behavior', 'proration_date', 'metadata', 'description']);
    const subscription = found(store.subscriptions, req.params.id as string, 'subscription');
    const quantities = (readArray(p, 'items') ?? []).map((raw, index) => {
      const label = `items[${index}]`;
      if (typeof raw !== 'object' || raw === null || Array.isArray(raw)) throw invalidParam(label, `Invalid object: ${label}`);
      const item = raw as Params;
      allowOnly(item, ['id', 'quantity'], label);
      const itemId = readString(item, 'id', `${label}[id]`);
      if (!itemId) throw invalidParam(`${label}[id]`, 'The local Stripe fake only changes quantities of existing items, so items[][id] is required.', 'parameter_missing');
      const quantity = readInteger(item, 'quantity', { min: 0, max: 999_999 }, `${label}[quantity]`);
      if (quantity === undefined) throw missingParam(`${label}[quantity]`);
      return { itemId, quantity, label: `${label}[id]` };
    });
    const prorationDate = readInteger(p, 'proration_date');
    if (prorationDate !== undefined) {
      const item = subscription.items.data[0];
      if (prorationDate < item.current_period_start || prorationDate > item.current_period_end) {
        throw invalidParam('proration_date', 'proration_date must fall within the current billing period.');
      }
    }
    const updated = billing.updateSubscription(
      subscription,
      {
        quantities,
        cancelAtPeriodEnd: readBoolean(p, 'cancel_at_period_end'),
        metadata: p.metadata === undefined ? undefined : mergeMetadata(subscription.metadata, p),
        description: p.description === undefined ? undefined : readString(p, 'description') || null,
        prorationBehavior: readEnum<ProrationBehavior>(p, 'proration_behavior', ['create_prorations', 'always_invoice', 'none']),
        prorationDate,
      },
      context,
    );
    return expanded(updated, p);
  }));
  router.delete('/subscriptions/:id', route((p, { req, context }) => {
    allowOnly(p, ['cancellation_details']);
    const subscription = found(store.subscriptions, req.params.id as string, 'subscription');
    const details = readObject(p, 'cancellation_details');
    if (details) allowOnly(details, ['comment', 'feedback'], 'cancellation_details');
    const canceled = billing.cancelNow(subscription, context, {
      comment: details ? readString(details, 'comment', 'cancellation_details[comment]') || null : null,
      feedback: details ? readString(details, 'feedback', 'cancellation_details[feedback]') || null : null,
    });
    return expanded(canceled, p);
  }));

  // --- Invoices and invoice items -------------------------------------------------------------
  router.get('/invoices/:id', route((p, { req }) => expanded(found(store.invoices, req.params.id as string, 'invoice'), p)));
  router.get('/invoices/:id/lines', route((p, { req }) => {
    const invoice = found(store.invoices, req.params.id as string, 'invoice');
    return expanded(paginate(invoice.lines.data, p, req), p);
  }));
  router.get('/invoices', route((p, { req }) => {
    allowOnly(p, ['customer', 'subscription', 'status', 'limit', 'starting_after', 'ending_before']);
    const customer = readString(p, 'customer');
    const subscription = readString(p, 'subscription');
    const status = readEnum(p, 'status', ['draft', 'open', 'paid', 'uncollectible', 'void']);
    const items = newestFirst(store.invoices).filter(
      (invoice) =>
        (!customer || invoice.customer === customer) &&
        (!subscription || invoice.parent.subscription_details.subscription === subscription) &&
        (!status || invoice.status === status),
    );
    return expanded(paginate(items, p, req), p);
  }));
  router.get('/invoiceitems/:id', route((p, { req }) => expanded(found(store.invoiceItems, req.params.id as string, 'invoiceitem'), p)));
  router.get('/invoiceitems', route((p, { req }) => {
    allowOnly(p, ['customer', 'invoice', 'pending', 'limit', 'starting_after', 'ending_before']);
    const customer = readString(p, 'customer');
    const invoice = readString(p, 'invoice');
    const pending = readBoolean(p, 'pending');
    const items = newestFirst(store.invoiceItems).filter(
      (item) =>
        (!customer || item.customer === customer) &&
        (!invoice || item.invoice === invoice) &&
        (pending === undefined || (item.invoice === null) === pending),
    );
    return expanded(paginate(items, p, req), p);
  }));

  // --- Billing portal -------------------------------------------------------------------------
  router.post('/billing_portal/sessions', route((p, { context }) => {
    allowOnly(p, ['customer', 'return_url', 'locale']);
    const customerId = requireString(p, 'customer');
    if (!store.customers.has(customerId)) throw invalidParam('customer', `No such customer: '${customerId}'`, 'resource_missing');
    const returnUrl = readString(p, 'return_url') || null;
    if (returnUrl) requireAbsoluteUrl(returnUrl, 'return_url');
    const id = newId('bps_');
    const session: PortalSession = {
      id,
      object: 'billing_portal.session',
      configuration: 'bpc_localfakeconfiguration',
      created: store.now(),
      customer: customerId,
      customer_account: null,
      flow: null,
      livemode: false,
      locale: readString(p, 'locale') || null,
      on_behalf_of: null,
      return_url: returnUrl,
      url: `${context.baseUrl}/portal/${id}`,
    };
    store.portalSessions.set(id, session);
    store.save();
    return expanded(session, p);
  }));

  // --- Events ---------------------------------------------------------------------------------
  router.get('/events/:id', route((p, { req }) => {
    const record = store.events.get(req.params.id as string);
    if (!record) throw noSuch('event', req.params.id as string);
    return record.event;
  }));
  router.get('/events', route((p, { req }) => {
    allowOnly(p, ['type', 'types', 'limit', 'starting_after', 'ending_before']);
    const type = readString(p, 'type');
    const types = readStringArray(p, 'types');
    const matchesType = (candidate: string) =>
      (!type || (type.endsWith('.*') ? candidate.startsWith(type.slice(0, -1)) : candidate === type)) &&
      (!types || types.includes(candidate));
    const events = [...store.events.values()].map((record) => record.event).reverse().filter((event) => matchesType(event.type));
    return paginate(events, p, req);
  }));

  router.use((req) => {
    throw new StripeFakeError(
      404,
      'invalid_request_error',
      `Unrecognized request URL (${req.method}: ${req.baseUrl}${req.path}). The local Stripe fake does not model this endpoint.`,
    );
  });
  router.use(stripeErrorHandler);
  return router;
}

const requestId: RequestHandler = (_req, res, next) => {
  res.setHeader('Request-Id', newId('req_', 14));
  next();
};

/** Like Stripe: a secret test key as Bearer token (or as the Basic-auth user name); anything else is 401. */
const authenticate: RequestHandler = (req, _res, next) => {
  const header = req.get('Authorization') ?? '';
  let key = '';
  if (/^Bearer /i.test(header)) key = header.slice(7).trim();
  else if (/^Basic /i.test(header)) key = Buffer.from(header.slice(6).trim(), 'base64').toString('utf8').split(':')[0];
  if (!key) {
    throw new StripeFakeError(
      401,
      'invalid_request_error',
      "You did not provide an API key. Send it in the Authorization header as Bearer auth (e.g. 'Authorization: Bearer sk_test_...').",
    );
  }
  if (!/^sk_test_\w+$/.test(key)) {
    const shown = key.length > 12 ? `${key.slice(0, 8)}****${key.slice(-4)}` : '****';
    throw new StripeFakeError(401, 'invalid_request_error', `Invalid API Key provided: ${shown}. The local Stripe fake accepts sk_test_ keys only.`);
  }
  next();
};

function idempotency(cache: IdempotencyCache): RequestHandler {
  return (req, res, next) => {
    const key = req.get('Idempotency-Key');
    if (req.method !== 'POST' || !key) return next();
    const fingerprint = `${req.path}\n${JSON.stringify(req.body ?? {})}`;
    const saved = cache.get(key);
    if (saved) {
      if (saved.fingerprint !== fingerprint) {
        throw new StripeFakeError(
          400,
          'idempotency_error',
          `Keys for idempotent requests can only be used with the same parameters they were first used with. Try using a key other than '${key}' if you meant to execute a different request.`,
        );
      }
      res.setHeader('Idempotent-Replayed', 'true');
      res.status(saved.status).json(saved.body);
      return;
    }
    const send = res.json.bind(res);
    res.json = (body: unknown) => {
      if (res.statusCode < 500) cache.set(key, { fingerprint, status: res.statusCode, body });
      return send(body);
    };
    next();
  };
}

function found<T>(collection: Map<string, T>, id: string, kind: string): T {
  const item = collection.get(id);
  if (!item) throw noSuch(kind, id);
  return item;
}

/** Stripe lists newest first. */
const newestFirst = <T>(collection: Map<string, T>): T[] => [...collection.values()].reverse();

function paginate<T extends { id: string }>(items: T[], params: Params, req: Request): ApiList<T> {
  const page = readPage(params);
  const url = `${req.baseUrl}${req.path}`;
  const indexOf = (id: string, param: string) => {
    const index = items.findIndex((item) => item.id === id);
    if (index < 0) throw invalidParam(param, `No such object in this list: '${id}'`, 'resource_missing');
    return index;
  };
  if (page.endingBefore) {
    const end = indexOf(page.endingBefore, 'ending_before');
    const start = Math.max(end - page.limit, 0);
    return listOf(url, items.slice(start, end), start > 0);
  }
  const start = page.startingAfter ? indexOf(page.startingAfter, 'starting_after') + 1 : 0;
  return listOf(url, items.slice(start, start + page.limit), start + page.limit < items.length);
}

function matchesStatus(subscription: Subscription, status: string | undefined): boolean {
  if (status === 'all') return true;
  if (status === 'ended') return subscription.status === 'canceled';
  if (status) return subscription.status === status;
  return subscription.status !== 'canceled';
}

function claimLookupKey(store: FakeStore, lookupKey: string, transfer: boolean): void {
  if (lookupKey.length > 200) throw invalidParam('lookup_key', 'Lookup keys can have up to 200 characters.');
  for (const other of store.prices.values()) {
    if (other.lookup_key !== lookupKey) continue;
    if (!transfer) throw invalidParam('lookup_key', `A price (${other.id}) already uses that lookup key.`);
    other.lookup_key = null;
  }
}

function requireAbsoluteUrl(value: string, param: string): void {
  try {
    const url = new URL(value);
    if (url.protocol === 'http:' || url.protocol === 'https:') return;
  } catch {
    // fall through to the error below
  }
  throw invalidParam(param, 'Not a valid URL', 'url_invalid');
}

export function checkoutLineItems(store: FakeStore, session: CheckoutSession): CheckoutLineItem[] {
  const details = store.checkoutDetails.get(session.id);
  return (details?.lineItems ?? []).map((line) => {
    const price = store.prices.get(line.price) as Price;
    const amount = price.unit_amount * line.quantity;
    return {
      id: line.id,
      object: 'item',
      adjustable_quantity: null,
      amount_discount: 0,
      amount_subtotal: amount,
      amount_tax: 0,
      amount_total: amount,
      currency: price.currency,
      description: store.products.get(price.product)?.name ?? 'Subscription',
      metadata: {},
      price,
      quantity: line.quantity,
    };
  });
}

/**
 * Applies `expand[]` paths such as `customer`, `subscription.latest_invoice`, `data.product` or
 * `line_items`: each id string on the path is replaced by the object it names.
 */
export function expand(store: FakeStore, value: unknown, paths: string[]): unknown {
  return paths.reduce((current, path) => expandPath(store, current, path.split('.'), path), value);
}

function expandPath(store: FakeStore, value: unknown, segments: string[], path: string): unknown {
  if (segments.length === 0 || value === null || value === undefined) return value;
  if (Array.isArray(value)) return value.map((element) => expandPath(store, element, segments, path));
  const notExpandable = () => invalidParam('expand', `This property cannot be expanded (${path}).`);
  if (typeof value !== 'object') throw notExpandable();
  const object = value as Record<string, unknown>;
  const [head, ...rest] = segments;
  let child: unknown;
  if (head in object) child = object[head];
  else if (object.object === 'checkout.session' && head === 'line_items') {
    const session = object as unknown as CheckoutSession;
    child = listOf(`/v1/checkout/sessions/${session.id}/line_items`, checkoutLineItems(store, session));
  } else throw notExpandable();
  if (typeof child === 'string') {
    const target = store.findById(child);
    if (!target) throw notExpandable();
    child = structuredClone(target);
  } else if (child !== null && typeof child !== 'object') {
    throw notExpandable();
  }
  return { ...object, [head]: expandPath(store, child, rest, path) };
}
