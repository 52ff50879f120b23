import { api } from '../../api/client';
import type {
  CompanySummary,
  InvitationState,
  InvitationView,
  InviteInput,
  MemberView,
  MySeat,
  RosterImportProgress,
  RosterImportResult,
  RosterPreview,
  SeatStatus,
} from '../../../shared/billing';

export interface MembersPage {
  members: MemberView[];
  total: number;
  page: number;
  pageSize: number;
}

export interface MembersQuery {
  page: number;
  pageSize: number;
  q?: string;
  seat?: SeatStatus;
  sort: 'name' | 'email' | 'seat' | 'crew' | 'joined';
  order: 'asc' | 'desc';
}

function queryString(params: Record<string, string | number | undefined>) {
  const search = new URLSearchParams();
  for (const [key, value] of Object.entries(params)) if (value !== undefined && value !== '') search.set(key, String(value));
  const text = search.toString();
  return text ? `?${text}` : '';
}

function fileForm(field: string, file: File) {
  const form = new FormData();
  form.append(field, file, file.name);
  return form;
}

/** Calls of the company admin, invitation and roster routes (server/routes/company-admin.ts, invitations.ts). */
export const companyApi = {
  summary: () => api.get<CompanySummary>('/api/company/summary'),
  mySeat: () => api.get<MySeat>('/api/company/my-seat'),
  members: (query: MembersQuery) => api.get<MembersPage>(`/api/company/members${queryString({ ...query })}`),
  assignSeat: (userId: string, fromUserId?: string) =>
    api.post<{ seat: 'assigned'; movedFrom: { userId: string; name: string } | null }>(`/api/company/members/${userId}/seat`, fromUserId ? { fromUserId } : {}),
  unassignSeat: (userId: string) => api.del<{ seat: 'none'; promoted: { userId: string; name: string }[] }>(`/api/company/members/${userId}/seat`),
  removeMember: (userId: string) => api.del<{ removed: true; promoted: { userId: string; name: string }[] }>(`/api/company/members/${userId}`),
  uploadLogo: (file: File) => api.upload<{ logo: CompanySummary['logo'] }>('/api/company/logo', fileForm('logo', file)),
  deleteLogo: () => api.del('/api/company/logo'),
  logoUrl: (companyId: string, version: string) => `/api/companies/${companyId}/logo?v=${encodeURIComponent(version)}`,
  invitations: (query: { page: number; pageSize: number; q?: string; state: 'open' | InvitationState }) =>
    api.get<{ invitations: InvitationView[]; total: number }>(`/api/company/invitations${queryString({ ...query })}`),
  invite: (input: InviteInput) => api.post<{ invitation: InvitationView }>('/api/company/invitations', input),
  resendInvitation: (id: string) => api.post<{ invitation: InvitationView }>(`/api/company/invitations/${id}/resend`),
  revokeInvitation: (id: string) => api.del(`/api/company/invitations/${id}`),
  rosterTemplateUrl: '/api/company/roster/template',
  previewRoster: (file: File) => api.upload<RosterPreview>('/api/company/roster/preview', fileForm('roster', file)),
  importRoster: (file: File) => api.upload<RosterImportResult>('/api/company/roster/import', fileForm('roster', file)),
  importProgress: (importId: string) => api.get<RosterImportProgress>(`/api/company/roster/imports/${importId}`),
};
