import { api } from '../../api/client';
import type {
  CompanyKind, CompanySort, OperatorCompaniesPage, OperatorCompanyDetail, OperatorSubscription, SubscriptionStatusFilter,
} from '../../../shared/operator-console';

export type { CompanyKind, CompanySort, OperatorCompanyDetail, OperatorCompanyRow, SubscriptionChange, SubscriptionStatusFilter } from '../../../shared/operator-console';

export interface CompaniesQuery {
  page: number;
  pageSize: number;
  sort: CompanySort;
  order: 'asc' | 'desc';
  q?: string;
  kind?: CompanyKind | null;
  status?: SubscriptionStatusFilter | null;
}

export const operatorCompaniesApi = {
  list(q: CompaniesQuery) {
    const params = new URLSearchParams({ page: String(q.page), pageSize: String(q.pageSize), sort: q.sort, order: q.order });
    if (q.q?.trim()) params.set('q', q.q.trim());
    if (q.kind) params.set('kind', q.kind);
    if (q.status) params.set('status', q.status);
    return api.get<OperatorCompaniesPage>(`/api/operator/company-subscriptions?${params}`);
  },
  detail: (id: string) => api.get<OperatorCompanyDetail>(`/api/operator/company-subscriptions/${encodeURIComponent(id)}`),
};

export const KIND_WORDS: Record<CompanyKind, string> = {
  customer: 'Testing company',
  auditing: 'Auditing firm',
  platform: 'Platform staff',
};

/** Our words for the payment service's subscription statuses. */
export const STATUS_WORDS: Record<SubscriptionStatusFilter, string> = {
  active: 'Active',
  trialing: 'Trial',
  past_due: 'Payment overdue',
  unpaid: 'Unpaid',
  paused: 'Paused',
  incomplete: 'Awaiting first payment',
  incomplete_expired: 'Checkout lapsed',
  canceled: 'Cancelled',
  none: 'No subscription',
};

export type TagSeverity = 'success' | 'warn' | 'secondary' | 'danger' | 'info';

/** The status as a tag: whether seats work now matters more than the payment service's word for it. */
export function subscriptionTag(s: OperatorSubscription | null): { value: string; severity: TagSeverity } {
  if (!s) return { value: STATUS_WORDS.none, severity: 'secondary' };
  const word = STATUS_WORDS[s.status as SubscriptionStatusFilter] ?? s.status;
  if (!s.inGoodStanding) return { value: s.status === 'active' || s.status === 'trialing' ? 'Period over' : word, severity: 'secondary' };
  if (s.status === 'past_due') return { value: word, severity: 'warn' };
  return { value: word, severity: 'success' };
}

export const INTERVAL_SHORT: Record<string, string> = { month: 'Monthly', year: 'Yearly' };

export function shortDay(iso: string | null | undefined): string {
  if (!iso) return '—';
  return new Date(iso).toLocaleDateString('en-GB', { day: 'numeric', month: 'short', year: 'numeric' });
}

export function dayAndTime(iso: string | null | undefined): string {
  if (!iso) return '—';
  return new Date(iso).toLocaleString('en-GB', { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit' });
}

const seatCount = (n: unknown) => (typeof n === 'number' ? `${n} ${n === 1 ? 'seat' : 'seats'}` : 'seats');

/** One audit entry about a subscription, as a sentence. */
export function describeChange(action: string, details: Record<string, unknown>): string {
  switch (action) {
    case 'company.signed-up':
      return `Signed up asking for ${seatCount(details.seats)}, ${INTERVAL_SHORT[String(details.interval)]?.toLowerCase() ?? 'interval not recorded'}`;
    case 'billing.checkout-started':
      return `Opened a payment page for ${seatCount(details.seats)}, ${INTERVAL_SHORT[String(details.interval)]?.toLowerCase() ?? 'interval not recorded'}`;
    case 'billing.seats-changed':
      return `Seats changed from ${details.from} to ${details.to}`;
    case 'billing.subscription-synced': {
      const status = STATUS_WORDS[details.status as SubscriptionStatusFilter] ?? String(details.status);
      const seats = details.seatsBefore === details.seatsAfter ? `usable seats stay at ${details.seatsAfter}` : `usable seats ${details.seatsBefore} → ${details.seatsAfter}`;
      return `Payment service update: ${status.toLowerCase()}, ${seatCount(details.quantity)} paid for; ${seats}${details.cancelAtPeriodEnd ? '; set to end with the period' : ''}`;
    }
    case 'billing.cancel-requested':
      return `Set to cancel when the period ends${typeof details.periodEnd === 'string' ? ` (${shortDay(details.periodEnd)})` : ''}`;
    case 'billing.resumed':
      return 'Cancellation taken back; the subscription carries on';
    default:
      return action;
  }
}
