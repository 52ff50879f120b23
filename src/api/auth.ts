import { api } from './client';

export const ROLES = ['admin', 'manager', 'crew', 'auditor', 'operator'] as const;
export type Role = (typeof ROLES)[number];

export interface SessionUser {
  id: string;
  email: string;
  name: string;
}

export interface Membership {
  companyId: string;
  companyName: string;
  companyKind: string;
  roles: Role[];
}

/** What `/api/auth/me`, sign-in and company switching all answer with. */
export interface SessionSnapshot {
  user: SessionUser;
  memberships: Membership[];
  activeCompanyId: string | null;
}

export const authApi = {
  me: () => api.get<SessionSnapshot>('/api/auth/me'),
  login: (email: string, password: string) => api.post<SessionSnapshot>('/api/auth/login', { email, password }),
  logout: () => api.post<void>('/api/auth/logout'),
  switchCompany: (companyId: string) => api.post<SessionSnapshot>('/api/auth/active-company', { companyId }),
  requestPasswordReset: (email: string) => api.post<void>('/api/auth/password-reset', { email }),
  confirmPasswordReset: (token: string, password: string) =>
    api.post<void>('/api/auth/password-reset/confirm', { token, password }),
  changePassword: (currentPassword: string, newPassword: string) =>
    api.post<void>('/api/auth/password', { currentPassword, newPassword }),
};
