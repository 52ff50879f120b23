import { api } from '../../api/client';
import type { SessionSnapshot } from '../../api/auth';
import type { BillingSummary, InvoiceView, PlansResponse, SeatInterval, SignupInput } from '../../../shared/billing';

/** Calls of the billing routes (server/routes/billing.ts). */
export const billingApi = {
  plans: () => api.get<PlansResponse>('/api/billing/plans'),
  signUp: (input: SignupInput) => api.post<{ checkoutUrl: string; me: SessionSnapshot }>('/api/signup', input),
  summary: () => api.get<BillingSummary>('/api/billing'),
  setSeats: (seats: number) => api.put<BillingSummary>('/api/billing/seats', { seats }),
  cancel: () => api.post<BillingSummary>('/api/billing/cancel'),
  resume: () => api.post<BillingSummary>('/api/billing/resume'),
  portal: () => api.post<{ url: string }>('/api/billing/portal'),
  invoices: (startingAfter?: string) =>
    api.get<{ invoices: InvoiceView[]; hasMore: boolean }>(`/api/billing/invoices${startingAfter ? `?startingAfter=${encodeURIComponent(startingAfter)}` : ''}`),
  checkout: (seats: number, interval: SeatInterval) => api.post<{ checkoutUrl: string }>('/api/billing/checkout', { seats, interval }),
  checkoutStatus: (sessionId: string) =>
    api.get<{ status: 'open' | 'complete' | 'expired' | null; paymentStatus: string }>(`/api/billing/checkout/${encodeURIComponent(sessionId)}`),
};
