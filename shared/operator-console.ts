/**
 * The operator console's company and payment-event lists: query schemas the server validates with
 * and the client builds its requests from, and the shapes both read.
 */
import { z } from 'zod';
import type { SeatCounts, SubscriptionView } from './billing';

export const COMPANY_KINDS = ['customer', 'auditing', 'platform'] as const;
export type CompanyKind = (typeof COMPANY_KINDS)[number];

/** The payment service's subscription statuses, and `none` for a company that never subscribed. */
export const SUBSCRIPTION_STATUSES = ['active', 'trialing', 'past_due', 'unpaid', 'paused', 'incomplete', 'incomplete_expired', 'canceled', 'none'] as const;
export type SubscriptionStatusFilter = (typeof SUBSCRIPTION_STATUSES)[number];

export const COMPANY_SORTS = ['name', 'kind', 'members', 'status', 'interval', 'periodEnd', 'created'] as const;
export type CompanySort = (typeof COMPANY_SORTS)[number];

export const PAYMENT_EVENT_STATES = ['processed', 'failed', 'pending'] as const;
export type PaymentEventState = (typeof PAYMENT_EVENT_STATES)[number];

export const PAYMENT_EVENT_SORTS = ['received', 'created', 'type'] as const;
export type PaymentEventSort = (typeof PAYMENT_EVENT_SORTS)[number];

export const OPERATOR_PAGE_SIZE_MAX = 100;

const oneOf = (values: readonly string[]) => `must be one of ${values.join(', ')}`;

const paging = {
  page: z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be 1 or more').max(100_000, 'must be at most 100000').default(1),
  pageSize: z.coerce
    .number({ error: 'must be a number' })
    .int('must be a whole number')
    .min(1, 'must be 1 or more')
    .max(OPERATOR_PAGE_SIZE_MAX, `must be at most ${OPERATOR_PAGE_SIZE_MAX}`)
    .default(25),
  order: z.enum(['asc', 'desc'], { error: 'must be "asc" or "desc"' }).optional(),
};

const searchText = z.string({ error: 'must be text' }).trim().max(120, 'must be at most 120 characters').optional();

export const operatorCompaniesQuery = z
  .object({
    ...paging,
    sort: z.enum(COMPANY_SORTS, { error: oneOf(COMPANY_SORTS) }).default('name'),
    q: searchText,
    kind: z.enum(COMPANY_KINDS, { error: oneOf(COMPANY_KINDS) }).optional(),
    status: z.enum(SUBSCRIPTION_STATUSES, { error: oneOf(SUBSCRIPTION_STATUSES) }).optional(),
  })
  // Names read best A to Z; counts and dates newest or largest first.
  .transform(({ order, ...rest }) => ({ ...rest, order: order ?? (rest.sort === 'name' || rest.sort === 'kind' ? 'asc' : 'desc') }));
export type OperatorCompaniesQuery = z.output<typeof operatorCompaniesQuery>;

export const paymentEventsQuery = z
  .object({
    ...paging,
    sort: z.enum(PAYMENT_EVENT_SORTS, { error: oneOf(PAYMENT_EVENT_SORTS) }).default('received'),
    type: z.string({ error: 'must be text' }).trim().max(80, 'must be at most 80 characters').regex(/^[a-z0-9_.]*$/, 'must be an event type such as invoice.paid').optional(),
    status: z.enum(PAYMENT_EVENT_STATES, { error: oneOf(PAYMENT_EVENT_STATES) }).optional(),
    companyId: z.uuid({ error: 'must be a company id' }).optional(),
    q: searchText,
  })
  .transform(({ order, ...rest }) => ({ ...rest, type: rest.type || undefined, order: order ?? (rest.sort === 'type' ? 'asc' : 'desc') }));
export type PaymentEventsQuery = z.output<typeof paymentEventsQuery>;

export const operatorCompanyParams = z.object({ id: z.uuid({ error: 'must be a company id' }) });
export const paymentEventParams = z.object({
  eventId: z.string().min(1, 'is required').max(255, 'must be at most 255 characters').regex(/^[A-Za-z0-9_-]+$/, 'must be a payment event id such as evt_…'),
});

/** A subscription as the billing page shows it, without the price (that would cost a call to the payment service per row). */
export type OperatorSubscription = Omit<SubscriptionView, 'plan'>;

export interface OperatorCompanyRow {
  id: string;
  name: string;
  kind: CompanyKind;
  members: number;
  /** The same numbers the company's own billing page shows. */
  seats: SeatCounts;
  subscription: OperatorSubscription | null;
  createdAt: string;
}

export interface OperatorCompaniesPage {
  companies: OperatorCompanyRow[];
  total: number;
  page: number;
  pageSize: number;
}

export interface SubscriptionChange {
  id: number;
  at: string;
  action: string;
  actorName: string | null;
  details: Record<string, unknown>;
}

export interface PaymentEventRow {
  id: string;
  type: string;
  state: PaymentEventState;
  createdAt: string;
  receivedAt: string;
  processedAt: string | null;
  attempts: number;
  lastError: string | null;
  company: { id: string; name: string } | null;
}

export interface OperatorCompanyDetail {
  company: OperatorCompanyRow;
  changes: SubscriptionChange[];
  events: PaymentEventRow[];
}

export interface PaymentEventsPage {
  events: PaymentEventRow[];
  total: number;
  page: number;
  pageSize: number;
  /** Every event type stored, for the filter. */
  types: string[];
  /** Events not applied yet, over the whole log: `failed` kept an error, `pending` has not been tried. */
  unprocessed: { failed: number; pending: number };
}

export interface PaymentEventDetail extends PaymentEventRow {
  payload: unknown;
}
