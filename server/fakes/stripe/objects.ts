import type { Metadata } from './params';

/**
 * The Stripe objects the fake stores and returns, trimmed to the fields the app can rely on.
 * Shapes follow the API version the installed SDK pins (periods live on subscription items;
 * an invoice names its subscription under `parent.subscription_details`).
 */
export type Interval = 'day' | 'week' | 'month' | 'year';

export interface ApiList<T> {
  object: 'list';
  data: T[];
  has_more: boolean;
  url: string;
}

export interface Product {
  id: string;
  object: 'product';
  active: boolean;
  created: number;
  updated: number;
  default_price: string | null;
  description: string | null;
  images: string[];
  livemode: false;
  marketing_features: never[];
  metadata: Metadata;
  name: string;
  package_dimensions: null;
  shippable: null;
  statement_descriptor: string | null;
  tax_code: null;
  type: 'service';
  unit_label: string | null;
  url: string | null;
}

export interface Recurring {
  interval: Interval;
  interval_count: number;
  meter: null;
  trial_period_days: null;
  usage_type: 'licensed';
}

export interface Price {
  id: string;
  object: 'price';
  active: boolean;
  billing_scheme: 'per_unit';
  created: number;
  currency: string;
  custom_unit_amount: null;
  livemode: false;
  lookup_key: string | null;
  metadata: Metadata;
  nickname: string | null;
  product: string;
  recurring: Recurring | null;
  tax_behavior: 'unspecified';
  tiers_mode: null;
  transform_quantity: null;
  type: 'recurring' | 'one_time';
  unit_amount: number;
  unit_amount_decimal: string;
}

export interface Customer {
  id: string;
  object: 'customer';
  address: null;
  balance: number;
  created: number;
  currency: string | null;
  default_source: null;
  delinquent: boolean;
  description: string | null;
  email: string | null;
  invoice_prefix: string;
  invoice_settings: { custom_fields: null; default_payment_method: null; footer: null; rendering_options: null };
  livemode: false;
  metadata: Metadata;
  name: string | null;
  next_invoice_sequence: number;
  phone: string | null;
  preferred_locales: string[];
  shipping: null;
  tax_exempt: 'none';
  test_clock: null;
}

/** The legacy `plan` view of a recurring price that subscription items still carry. */
export interface Plan {
  id: string;
  object: 'plan';
  active: boolean;
  amount: number;
  amount_decimal: string;
  billing_scheme: 'per_unit';
  created: number;
  currency: string;
  interval: Interval;
  interval_count: number;
  livemode: false;
  metadata: Metadata;
  meter: null;
  nickname: string | null;
  product: string;
  tiers_mode: null;
  transform_usage: null;
  trial_period_days: null;
  usage_type: 'licensed';
}

export interface SubscriptionItem {
  id: string;
  object: 'subscription_item';
  billing_thresholds: null;
  created: number;
  current_period_end: number;
  current_period_start: number;
  discounts: string[];
  metadata: Metadata;
  plan: Plan;
  price: Price;
  quantity: number;
  subscription: string;
  tax_rates: never[];
}

export type SubscriptionStatus = 'active' | 'canceled' | 'incomplete' | 'past_due';

export interface CancellationDetails {
  comment: string | null;
  feedback: string | null;
  reason: 'cancellation_requested' | null;
}

export interface Subscription {
  id: string;
  object: 'subscription';
  billing_cycle_anchor: number;
  cancel_at: number | null;
  cancel_at_period_end: boolean;
  canceled_at: number | null;
  cancellation_details: CancellationDetails;
  collection_method: 'charge_automatically';
  created: number;
  currency: string;
  customer: string;
  default_payment_method: null;
  description: string | null;
  discounts: string[];
  ended_at: number | null;
  items: ApiList<SubscriptionItem>;
  latest_invoice: string | null;
  livemode: false;
  metadata: Metadata;
  pause_collection: null;
  pending_update: null;
  schedule: null;
  start_date: number;
  status: SubscriptionStatus;
  test_clock: null;
  trial_end: null;
  trial_start: null;
}

export interface Period {
  start: number;
  end: number;
}

export interface PriceDetailsPricing {
  type: 'price_details';
  price_details: { price: string; product: string };
  unit_amount_decimal: string;
}

export interface InvoiceLineItem {
  id: string;
  object: 'line_item';
  amount: number;
  currency: string;
  description: string;
  discount_amounts: never[];
  discountable: boolean;
  discounts: never[];
  invoice: string;
  livemode: false;
  metadata: Metadata;
  parent: {
    type: 'subscription_item_details' | 'invoice_item_details';
    subscription_item_details: {
      invoice_item: string | null;
      proration: boolean;
      proration_details: null;
      subscription: string;
      subscription_item: string;
    } | null;
    invoice_item_details: {
      invoice_item: string;
      proration: boolean;
      proration_details: null;
      subscription: string | null;
    } | null;
  };
  period: Period;
  pricing: PriceDetailsPricing;
  quantity: number;
  subscription: string | null;
  subtotal: number;
  taxes: never[];
}

export type BillingReason = 'subscription_create' | 'subscription_cycle' | 'subscription_update';

export interface Invoice {
  id: string;
  object: 'invoice';
  account_country: string;
  account_name: string;
  amount_due: number;
  amount_overpaid: number;
  amount_paid: number;
  amount_remaining: number;
  attempt_count: number;
  attempted: boolean;
  billing_reason: BillingReason;
  collection_method: 'charge_automatically';
  created: number;
  currency: string;
  customer: string;
  customer_email: string | null;
  customer_name: string | null;
  description: string | null;
  ending_balance: number;
  hosted_invoice_url: string;
  invoice_pdf: null;
  lines: ApiList<InvoiceLineItem>;
  livemode: false;
  metadata: Metadata;
  number: string;
  parent: {
    type: 'subscription_details';
    quote_details: null;
    subscription_details: { metadata: Metadata; subscription: string };
  };
  period_end: number;
  period_start: number;
  starting_balance: number;
  status: 'paid';
  status_transitions: { finalized_at: number; marked_uncollectible_at: null; paid_at: number; voided_at: null };
  subtotal: number;
  subtotal_excluding_tax: number;
  test_clock: null;
  total: number;
  total_excluding_tax: number;
}

export interface InvoiceItem {
  id: string;
  object: 'invoiceitem';
  amount: number;
  currency: string;
  customer: string;
  date: number;
  description: string;
  discountable: boolean;
  discounts: never[];
  invoice: string | null;
  livemode: false;
  metadata: Metadata;
  parent: { type: 'subscription_details'; subscription_details: { subscription: string; subscription_item: string } };
  period: Period;
  pricing: PriceDetailsPricing;
  proration: boolean;
  quantity: number;
  tax_rates: never[];
  test_clock: null;
}

export interface CheckoutSession {
  id: string;
  object: 'checkout.session';
  amount_subtotal: number;
  amount_total: number;
  cancel_url: string | null;
  client_reference_id: string | null;
  created: number;
  currency: string;
  customer: string | null;
  customer_creation: 'always' | null;
  customer_details: { address: null; email: string | null; name: string | null; phone: null; tax_exempt: 'none'; tax_ids: never[] } | null;
  customer_email: string | null;
  expires_at: number;
  invoice: string | null;
  livemode: false;
  locale: null;
  metadata: Metadata;
  mode: 'subscription';
  payment_intent: null;
  payment_method_types: string[];
  payment_status: 'paid' | 'unpaid';
  status: 'open' | 'complete' | 'expired';
  subscription: string | null;
  success_url: string;
  ui_mode: 'hosted';
  url: string | null;
}

/** A Checkout line item (object `item`); returned by `line_items` expansion and its own list. */
export interface CheckoutLineItem {
  id: string;
  object: 'item';
  adjustable_quantity: null;
  amount_discount: number;
  amount_subtotal: number;
  amount_tax: number;
  amount_total: number;
  currency: string;
  description: string;
  metadata: Metadata;
  price: Price;
  quantity: number;
}

export interface PortalSession {
  id: string;
  object: 'billing_portal.session';
  configuration: string;
  created: number;
  customer: string;
  customer_account: null;
  flow: null;
  livemode: false;
  locale: string | null;
  on_behalf_of: null;
  return_url: string | null;
  url: string;
}

export interface StripeEvent {
  id: string;
  object: 'event';
  api_version: string;
  created: number;
  data: { object: unknown; previous_attributes?: Record<string, unknown> };
  livemode: false;
  pending_webhooks: number;
  request: { id: string | null; idempotency_key: string | null };
  type: string;
}

export const planOf = (price: Price): Plan => ({
  id: price.id,
  object: 'plan',
  active: price.active,
  amount: price.unit_amount,
  amount_decimal: price.unit_amount_decimal,
  billing_scheme: 'per_unit',
  created: price.created,
  currency: price.currency,
  interval: price.recurring?.interval ?? 'month',
  interval_count: price.recurring?.interval_count ?? 1,
  livemode: false,
  metadata: price.metadata,
  meter: null,
  nickname: price.nickname,
  product: price.product,
  tiers_mode: null,
  transform_usage: null,
  trial_period_days: null,
  usage_type: 'licensed',
});

export const pricingOf = (price: Price): PriceDetailsPricing => ({
  type: 'price_details',
  price_details: { price: price.id, product: price.product },
  unit_amount_decimal: price.unit_amount_decimal,
});

export function listOf<T>(url: string, data: T[], hasMore = false): ApiList<T> {
  return { object: 'list', data, has_more: hasMore, url };
}
