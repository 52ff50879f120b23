import { api } from '../../api/client';
import type {
  PaymentEventDetail, PaymentEventSort, PaymentEventsPage, PaymentEventState,
} from '../../../shared/operator-console';

export type { PaymentEventDetail, PaymentEventRow, PaymentEventSort, PaymentEventState } from '../../../shared/operator-console';

export interface PaymentEventsQuery {
  page: number;
  pageSize: number;
  sort: PaymentEventSort;
  order: 'asc' | 'desc';
  q?: string;
  type?: string | null;
  status?: PaymentEventState | null;
  companyId?: string | null;
}

export const paymentEventsApi = {
  list(q: PaymentEventsQuery) {
    const params = new URLSearchParams({ page: String(q.page), pageSize: String(q.pageSize), sort: q.sort, order: q.order });
    if (q.q?.trim()) params.set('q', q.q.trim());
    if (q.type) params.set('type', q.type);
    if (q.status) params.set('status', q.status);
    if (q.companyId) params.set('companyId', q.companyId);
    return api.get<PaymentEventsPage>(`/api/operator/payment-events?${params}`);
  },
  detail: (id: string) => api.get<PaymentEventDetail>(`/api/operator/payment-events/${encodeURIComponent(id)}`),
};

export const STATE_LOOK: Record<PaymentEventState, { word: string; icon: string; severity: 'success' | 'danger' | 'warn' }> = {
  processed: { word: 'Applied', icon: 'pi pi-check', severity: 'success' },
  failed: { word: 'Failed', icon: 'pi pi-exclamation-triangle', severity: 'danger' },
  pending: { word: 'Waiting', icon: 'pi pi-clock', severity: 'warn' },
};
