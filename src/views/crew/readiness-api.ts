import { api } from '../../api/client';
import type {
  AssignmentKind,
  AssignmentOptions,
  AssignmentState,
  AssignmentView,
  CellStatus,
  EmailLogEntry,
  EmailStatus,
  JobCheckResult,
  NoticeView,
  ReadinessArea,
  ReadinessResponse,
  SavedJobCheck,
  ScanSummary,
  TrendsResponse,
} from '../../../shared/readiness';

export type * from '../../../shared/readiness';

export interface ReadinessFilters {
  crew?: string | null;
  areas?: string[];
  statuses?: CellStatus[];
  search?: string;
  sort?: string;
  order?: 'asc' | 'desc';
}

/** Query string for the matrix and its CSV: only the filters that are set. */
export function readinessQuery(filters: ReadinessFilters, page?: { page: number; pageSize: number }): string {
  const params = new URLSearchParams();
  if (page) {
    params.set('page', String(page.page));
    params.set('pageSize', String(page.pageSize));
  }
  if (filters.crew) params.set('crew', filters.crew);
  if (filters.areas?.length) params.set('area', filters.areas.join(','));
  if (filters.statuses?.length) params.set('status', filters.statuses.join(','));
  if (filters.search?.trim()) params.set('search', filters.search.trim());
  if (filters.sort && filters.sort !== 'name') params.set('sort', filters.sort);
  if (filters.order === 'desc') params.set('order', 'desc');
  return params.toString();
}

export const readinessApi = {
  matrix: (filters: ReadinessFilters, page: { page: number; pageSize: number }) =>
    api.get<ReadinessResponse>(`/api/readiness?${readinessQuery(filters, page)}`),
  csvUrl: (filters: ReadinessFilters) => {
    const query = readinessQuery(filters);
    return `/api/readiness.csv${query ? `?${query}` : ''}`;
  },
  trends: () => api.get<TrendsResponse>('/api/readiness/trends'),
  settings: () => api.get<{ timeZone: string; today: string }>('/api/readiness/settings'),
  setTimeZone: (timeZone: string) => api.put<{ timeZone: string; today: string }>('/api/readiness/settings', { timeZone }),
  areas: () => api.get<{ areas: ReadinessArea[] }>('/api/areas'),

  jobCheck: (body: { areas: string[]; date: string; crew?: string | null; name?: string | null }) => api.post<JobCheckResult>('/api/job-checks', body),
  savedJobChecks: () => api.get<{ checks: SavedJobCheck[]; areas: ReadinessArea[]; today: string; timeZone: string }>('/api/job-checks'),
  rerunJobCheck: (id: string) => api.post<JobCheckResult>(`/api/job-checks/${encodeURIComponent(id)}/run`),
  deleteJobCheck: (id: string) => api.del(`/api/job-checks/${encodeURIComponent(id)}`),

  assignmentOptions: () => api.get<AssignmentOptions>('/api/assignments/options'),
  assign: (body: { memberIds: string[]; kind: AssignmentKind; drillId?: string | null; areaId?: string | null; dueOn: string; note?: string | null }) =>
    api.post<{ created: number; ids: string[] }>('/api/assignments', body),
  assignments: (q: { page: number; pageSize: number; state: 'all' | AssignmentState; search?: string }) => {
    const params = new URLSearchParams({ page: String(q.page), pageSize: String(q.pageSize), state: q.state });
    if (q.search?.trim()) params.set('search', q.search.trim());
    return api.get<{ assignments: AssignmentView[]; total: number; counts: Record<AssignmentState, number>; today: string; timeZone: string }>(`/api/assignments?${params}`);
  },
  withdraw: (id: string) => api.del(`/api/assignments/${encodeURIComponent(id)}`),
  myAssignments: () => api.get<{ assignments: AssignmentView[]; today: string; timeZone: string }>('/api/assignments/mine'),

  myNotices: () => api.get<{ notices: NoticeView[]; today: string; timeZone: string }>('/api/notices/mine'),
  dismissNotice: (id: string) => api.post<void>(`/api/notices/${encodeURIComponent(id)}/dismiss`),

  emailLog: (q: { page: number; pageSize: number; status?: EmailStatus | null; kind?: string | null; search?: string }) => {
    const params = new URLSearchParams({ page: String(q.page), pageSize: String(q.pageSize) });
    if (q.status) params.set('status', q.status);
    if (q.kind) params.set('kind', q.kind);
    if (q.search?.trim()) params.set('search', q.search.trim());
    return api.get<{ emails: EmailLogEntry[]; total: number; kinds: string[] }>(`/api/operator/emails?${params}`);
  },
  runReminders: (asOf?: string | null) => api.post<ScanSummary>('/api/operator/jobs/run-reminders', asOf ? { asOf } : {}),
};

/** A calendar day (YYYY-MM-DD) as words, without any time-zone shift. */
export function dayWords(date: string | null | undefined, style: 'long' | 'short' = 'long'): string {
  if (!date) return '';
  const d = new Date(`${date}T12:00:00Z`);
  return d.toLocaleDateString('en-GB', { day: 'numeric', month: style === 'long' ? 'long' : 'short', year: 'numeric', timeZone: 'UTC' });
}

export function addDays(date: string, days: number): string {
  const [y, m, d] = date.split('-').map(Number);
  return new Date(Date.UTC(y, m - 1, d + days)).toISOString().slice(0, 10);
}

/** A readable message from any failure, for error panels. */
export function problemText(error: unknown, fallback = 'Plumewright is not answering right now. Try again in a moment.'): string {
  const e = error as { message?: string; isServiceProblem?: boolean } | undefined;
  return e?.message && !e.isServiceProblem ? e.message : fallback;
}
