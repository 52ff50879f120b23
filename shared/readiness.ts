import { z } from 'zod';

/**
 * Crew readiness: request schemas (the server validates with these, the client builds requests
 * from the same shapes) and the response types of /api/readiness, /api/job-checks,
 * /api/assignments, /api/notices and /api/operator/emails.
 */
export const cellStatuses = ['current', 'expiring', 'expired', 'none'] as const;
export type CellStatus = (typeof cellStatuses)[number];

/** A certificate can be renewed from this many days before its expiry; the same span marks a cell `expiring`. */
export const RENEWAL_WINDOW_DAYS = 90;
export const isoDate = (what = 'a date') =>
  z.iso.date({ error: `must be ${what} written YYYY-MM-DD, e.g. 2027-03-01` });

/** A comma-separated query value (`a,b`) or a repeated one (`?x=a&x=b`), trimmed, empties dropped. */
const listParam = z
  .union([z.string(), z.array(z.string())], { error: 'must be a comma-separated list' })
  .transform((value) => (Array.isArray(value) ? value : [value]).flatMap((v) => v.split(',')).map((v) => v.trim()).filter(Boolean));

const pageParams = {
  page: z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be 1 or more').max(100_000, 'must be at most 100000').default(1),
  pageSize: z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be 1 or more').max(200, 'must be at most 200').default(50),
};

export const readinessFilterShape = {
  crew: z.string().trim().max(80, 'must be at most 80 characters').optional(),
  /** Competency area ids: the columns shown, and the cells the status filter looks at. */
  area: listParam.optional(),
  status: listParam
    .pipe(z.array(z.enum(cellStatuses, { error: `must be one of ${cellStatuses.join(', ')}` })))
    .optional(),
  search: z.string().trim().max(100, 'must be at most 100 characters').optional(),
  /** `name`, `crew`, or a competency area id (sorts by that area's expiry date). */
  sort: z.string().trim().max(40, 'must be at most 40 characters').default('name'),
  order: z.enum(['asc', 'desc'], { error: 'must be asc or desc' }).default('asc'),
};

export const readinessQuerySchema = z.object({ ...pageParams, ...readinessFilterShape });
export const readinessCsvQuerySchema = z.object(readinessFilterShape);
export type ReadinessQuery = z.output<typeof readinessQuerySchema>;
export type ReadinessFilters = z.output<typeof readinessCsvQuerySchema>;

export interface ReadinessArea {
  id: string;
  name: string;
}

export interface ReadinessCell {
  area: string;
  status: CellStatus;
  /** current/expiring: the last valid day of the best certificate; expired: the day it lapsed after; none: null. */
  expiresOn: string | null;
}

export interface ReadinessRow {
  memberId: string;
  name: string;
  crew: string | null;
  cells: ReadinessCell[];
}

export interface ReadinessResponse {
  areas: ReadinessArea[];
  rows: ReadinessRow[];
  total: number;
  page: number;
  pageSize: number;
  /** "Today" in the company's time zone: the day every status is worked out for. */
  today: string;
  timeZone: string;
  /** Every crew name in the company, for the filter. */
  crews: string[];
}

export interface TrendsResponse {
  today: string;
  timeZone: string;
  areas: ReadinessArea[];
  members: number;
  /** Cells per status today, over the whole crew and per area. */
  summary: { totals: Record<CellStatus, number>; byArea: ({ area: string } & Record<CellStatus, number>)[] };
  /** Month ends over the past year (the last point is today): share of members holding a certificate in force. */
  inForceShare: { dates: string[]; series: { area: string; percent: number[] }[] };
  /** The next 12 months: certificates (the best per member and area) whose last valid day falls in each month. */
  expiriesByMonth: { months: string[]; series: { area: string; counts: number[] }[] };
  /** Drill attempts submitted per week over the last 12 weeks; null until drills are recorded on this platform. */
  drillActivity: { weeks: string[]; attempts: number[] } | null;
}

export const jobCheckBodySchema = z.object({
  areas: z
    .array(z.string({ error: 'must be a competency area id' }).trim().min(1, 'must not be empty'), { error: 'must be a list of competency area ids' })
    .min(1, 'pick at least one competency area')
    .max(12, 'must list at most 12 areas'),
  date: isoDate('the job date'),
  crew: z.string().trim().max(80, 'must be at most 80 characters').nullish(),
  /** Given: the check is saved under this job name (the same name again updates it). */
  name: z.string().trim().min(1, 'must not be empty').max(80, 'must be at most 80 characters').nullish(),
});
export type JobCheckBody = z.output<typeof jobCheckBodySchema>;

export interface JobCheckMember {
  memberId: string;
  name: string;
  crew: string | null;
}
export interface LapsingArea {
  area: string;
  expiresOn: string;
  /** The first day a renewal may be taken: RENEWAL_WINDOW_DAYS before the expiry. */
  renewalOpensOn: string;
}
export interface JobCheckResult {
  areas: ReadinessArea[];
  date: string;
  crew: string | null;
  today: string;
  timeZone: string;
  /** Hold a certificate in force on the job date in every area. */
  qualified: (JobCheckMember & { validUntil: string })[];
  /** In force today in every area, but at least one lapses before the job date and its renewal window opens later. */
  lapsing: (JobCheckMember & { lapses: LapsingArea[] })[];
  /** In force today in every area; every certificate that lapses before the job date is in its renewal window now. */
  renewable: (JobCheckMember & { lapses: LapsingArea[] })[];
  /** Not in force today in at least one area (lapsed or never held). */
  notQualified: (JobCheckMember & { missing: { area: string; status: 'expired' | 'none'; expiresOn: string | null }[] })[];
  saved?: SavedJobCheck;
}

export interface SavedJobCheck {
  id: string;
  name: string;
  areas: string[];
  date: string;
  crew: string | null;
  createdAt: string;
  lastRunAt: string | null;
  lastCounts: { qualified: number; lapsing: number; renewable: number; notQualified: number } | null;
  /** The job date is before today: the check can no longer be re-run. */
  past: boolean;
}

export const assignmentKinds = ['drill', 'exam'] as const;
export type AssignmentKind = (typeof assignmentKinds)[number];

export const assignmentBodySchema = z
  .object({
    memberIds: z
      .array(z.uuid({ error: 'must be a member id' }), { error: 'must be a list of member ids' })
      .min(1, 'pick at least one member')
      .max(500, 'must list at most 500 members'),
    kind: z.enum(assignmentKinds, { error: 'must be drill or exam' }),
    drillId: z.string().trim().min(1, 'must not be empty').max(60).nullish(),
    areaId: z.string().trim().min(1, 'must not be empty').max(60).nullish(),
    dueOn: isoDate('the due date'),
    note: z.string().trim().max(500, 'must be at most 500 characters').nullish(),
  })
  .superRefine((value, ctx) => {
    if (value.kind === 'drill' && !value.drillId) ctx.addIssue({ code: 'custom', path: ['drillId'], message: 'is required for a drill assignment' });
    if (value.kind === 'exam' && !value.areaId) ctx.addIssue({ code: 'custom', path: ['areaId'], message: 'is required for an exam assignment' });
  });
export type AssignmentBody = z.output<typeof assignmentBodySchema>;

export const assignmentStates = ['open', 'overdue', 'done'] as const;
export type AssignmentState = (typeof assignmentStates)[number];

export const assignmentListQuerySchema = z.object({
  ...pageParams,
  state: z.enum(['all', ...assignmentStates], { error: 'must be all, open, overdue or done' }).default('all'),
  search: z.string().trim().max(100, 'must be at most 100 characters').optional(),
});

export interface AssignmentView {
  id: string;
  memberId: string;
  memberName: string;
  crew: string | null;
  kind: AssignmentKind;
  drillId: string | null;
  drillTitle: string | null;
  areaId: string | null;
  areaName: string | null;
  dueOn: string;
  note: string | null;
  createdAt: string;
  assignedBy: string | null;
  completedAt: string | null;
  state: AssignmentState;
}

export interface AssignmentOptions {
  drills: { id: string; title: string; areaId: string }[];
  areas: ReadinessArea[];
  today: string;
  timeZone: string;
}

export interface NoticeView {
  id: string;
  kind: string;
  areaId: string | null;
  areaName: string | null;
  expiresOn: string | null;
  daysLeft: number | null;
  message: string;
  createdAt: string;
}

export const emailStatuses = ['queued', 'sending', 'sent', 'failed'] as const;
export type EmailStatus = (typeof emailStatuses)[number];

export const emailLogQuerySchema = z.object({
  ...pageParams,
  status: z.enum(emailStatuses, { error: `must be one of ${emailStatuses.join(', ')}` }).optional(),
  kind: z.string().trim().max(40, 'must be at most 40 characters').optional(),
  search: z.string().trim().max(120, 'must be at most 120 characters').optional(),
});

export interface EmailLogEntry {
  id: number;
  to: string;
  subject: string;
  kind: string;
  status: EmailStatus;
  attempts: number;
  lastError: string | null;
  createdAt: string;
  sentAt: string | null;
}

export const runRemindersBodySchema = z.object({
  /** The day to act as if it were (tests and demos); omitted: each company's own today. */
  asOf: isoDate().nullish(),
});

export interface ScanSummary {
  asOf: string | null;
  companies: number;
  reminders: number;
  digests: number;
  emailsQueued: number;
  delivered: { sent: number; failed: number };
}

export const timeZoneBodySchema = z.object({
  timeZone: z.string({ error: 'must be a time zone name' }).trim().min(1, 'must not be empty').max(64, 'must be at most 64 characters'),
});
