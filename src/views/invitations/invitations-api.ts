import { api } from '../../api/client';
import type { SessionSnapshot } from '../../api/auth';
import type { InvitationLookup, SeatStatus } from '../../../shared/billing';

/** The public invitation routes (server/routes/invitations.ts). The token travels in the body, never in a logged URL. */
export const invitationsApi = {
  lookup: (token: string) => api.post<InvitationLookup>('/api/invitations/lookup', { token }),
  accept: (token: string, password: string, name?: string) =>
    api.post<{ me: SessionSnapshot; companyId: string; seat: SeatStatus; queuePosition: number | null }>('/api/invitations/accept', { token, password, ...(name ? { name } : {}) }),
};
