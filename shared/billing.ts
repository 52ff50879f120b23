/**
 * Schemas and shapes for seats, billing, invitations and the roster: the server validates with
 * these, the client builds its forms and reads its answers from the same definitions.
 */
import { z } from 'zod';
import { emailField, newPasswordField } from './auth';

export const SEAT_INTERVALS = ['month', 'year'] as const;
export type SeatInterval = (typeof SEAT_INTERVALS)[number];

export const MIN_SEATS = 1;
export const MAX_SEATS = 1000;

/** Roles an admin can hand out inside a testing company; auditors and operators live in other kinds of company. */
export const INVITABLE_ROLES = ['admin', 'manager', 'crew'] as const;
export type InvitableRole = (typeof INVITABLE_ROLES)[number];

export const SEAT_STATUSES = ['assigned', 'queued', 'none'] as const;
export type SeatStatus = (typeof SEAT_STATUSES)[number];

/** How long an invitation link works after it is sent. */
export const INVITATION_VALID_DAYS = 14;

export const ROSTER_MAX_BYTES = 1024 * 1024;
export const ROSTER_MAX_ROWS = 5000;
export const ROSTER_COLUMNS = ['name', 'email', 'roles', 'crew'] as const;
export const LOGO_MAX_BYTES = 1024 * 1024;

export const seatsField = z.coerce
  .number({ error: 'must be a whole number of seats' })
  .int('must be a whole number of seats')
  .min(MIN_SEATS, `must be at least ${MIN_SEATS}`)
  .max(MAX_SEATS, `must be at most ${MAX_SEATS}; for more, contact us`);

export const intervalField = z.enum(SEAT_INTERVALS, { error: 'must be "month" or "year"' });

const personName = z
  .string({ error: 'must be text' })
  .trim()
  .min(1, 'is required')
  .max(120, 'must be at most 120 characters');

export const crewField = z
  .string({ error: 'must be text' })
  .trim()
  .max(80, 'must be at most 80 characters')
  .transform((value) => (value === '' ? null : value))
  .nullable()
  .optional();

export const signupBody = z.object({
  companyName: z.string({ error: 'must be text' }).trim().min(2, 'must be at least 2 characters').max(120, 'must be at most 120 characters'),
  adminName: personName,
  email: emailField,
  password: newPasswordField,
  seats: seatsField,
  interval: intervalField,
});
export type SignupInput = z.input<typeof signupBody>;

export const checkoutBody = z.object({ seats: seatsField, interval: intervalField });
export const seatQuantityBody = z.object({ seats: seatsField });

export const rolesField = z
  .array(z.enum(INVITABLE_ROLES, { error: `each role must be one of ${INVITABLE_ROLES.join(', ')}` }), { error: 'must be a list of roles' })
  .min(1, 'must name at least one role')
  .max(3, 'lists too many roles')
  .transform((roles) => INVITABLE_ROLES.filter((role) => roles.includes(role)));

export const inviteBody = z.object({
  name: personName,
  email: emailField,
  roles: rolesField,
  crew: crewField,
});
export type InviteInput = z.input<typeof inviteBody>;

export const invitationTokenField = z
  .string({ error: 'is required' })
  .min(20, 'is not a valid invitation link')
  .max(200, 'is not a valid invitation link')
  .regex(/^[A-Za-z0-9_-]+$/, 'is not a valid invitation link');

export const invitationLookupBody = z.object({ token: invitationTokenField });

export const acceptInvitationBody = z.object({
  token: invitationTokenField,
  /** Ignored when the e-mail address already has an account: that account keeps its name. */
  name: personName.optional(),
  password: z.string({ error: 'is required' }).min(1, 'is required').max(200, 'must be at most 200 characters'),
});

export const moveSeatBody = z.object({
  /** Take the seat from this member in the same step, so it never passes through the queue. */
  fromUserId: z.uuid({ error: 'must be a member id' }).optional(),
});

export const listQuery = {
  page: z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be at least 1').max(100_000, 'is too large').default(1),
  pageSize: z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(5, 'must be at least 5').max(100, 'must be at most 100').default(20),
  q: z.string({ error: 'must be text' }).trim().max(120, 'must be at most 120 characters').optional(),
};

export const MEMBER_SORTS = ['name', 'email', 'seat', 'crew', 'joined'] as const;
export const membersQuery = z.object({
  ...listQuery,
  seat: z.enum(SEAT_STATUSES, { error: `must be one of ${SEAT_STATUSES.join(', ')}` }).optional(),
  sort: z.enum(MEMBER_SORTS, { error: `must be one of ${MEMBER_SORTS.join(', ')}` }).default('name'),
  order: z.enum(['asc', 'desc'], { error: 'must be "asc" or "desc"' }).default('asc'),
});

export const INVITATION_STATES = ['pending', 'expired', 'failed', 'accepted', 'revoked'] as const;
export type InvitationState = (typeof INVITATION_STATES)[number];
export const invitationsQuery = z.object({
  ...listQuery,
  state: z.enum(['open', ...INVITATION_STATES], { error: `must be one of open, ${INVITATION_STATES.join(', ')}` }).default('open'),
});

/** Turns a roster's roles cell ("crew; manager", "Crew member | Admin") into role names; null when a word is unknown. */
export function parseRolesCell(cell: string): { roles: InvitableRole[]; unknown: string[] } {
  const words = cell
    .split(/[;|/+,]/)
    .map((word) => word.trim().toLowerCase().replace(/\s+/g, ' '))
    .filter(Boolean);
  const synonyms: Record<string, InvitableRole> = {
    admin: 'admin',
    'company admin': 'admin',
    administrator: 'admin',
    manager: 'manager',
    'crew manager': 'manager',
    crew: 'crew',
    'crew member': 'crew',
    member: 'crew',
  };
  const roles = new Set<InvitableRole>();
  const unknown: string[] = [];
  for (const word of words) {
    const role = synonyms[word];
    if (role) roles.add(role);
    else unknown.push(word);
  }
  // A blank cell means a crew member, the common case on a crew roster.
  if (words.length === 0) roles.add('crew');
  return { roles: INVITABLE_ROLES.filter((role) => roles.has(role)), unknown };
}

// ---- Response shapes ------------------------------------------------------------------------------

export interface SeatCounts {
  /** Seats the company is paying for right now (0 without an active subscription). */
  total: number;
  /** Members holding a seat. */
  used: number;
  /** Members waiting for a seat. */
  queued: number;
}

export interface PlanView {
  name: string;
  interval: SeatInterval;
  unitAmount: number;
  currency: string;
}

export interface SubscriptionView {
  status: string;
  interval: SeatInterval | null;
  quantity: number;
  currentPeriodEnd: string | null;
  cancelAtPeriodEnd: boolean;
  /** True while the company may use its seats: paid up and not past the end of a cancelled period. */
  inGoodStanding: boolean;
  plan: PlanView | null;
}

export interface BillingSummary {
  seats: SeatCounts;
  subscription: SubscriptionView | null;
}

export interface PlansResponse {
  plans: PlanView[];
}

export interface InvoiceView {
  id: string;
  number: string | null;
  created: string;
  periodStart: string | null;
  periodEnd: string | null;
  total: number;
  amountPaid: number;
  currency: string;
  status: string | null;
  hostedInvoiceUrl: string | null;
}

export interface MemberView {
  userId: string;
  name: string;
  email: string;
  roles: string[];
  crew: string | null;
  seat: SeatStatus;
  /** 1 for the first in line; null unless queued. */
  queuePosition: number | null;
  joinedAt: string;
}

export interface InvitationView {
  id: string;
  name: string;
  email: string;
  roles: string[];
  crew: string | null;
  state: InvitationState;
  sentAt: string | null;
  expiresAt: string | null;
  acceptedAt: string | null;
  sendError: string | null;
  invitedBy: string | null;
}

export interface CompanySummary {
  company: { id: string; name: string };
  seats: SeatCounts;
  subscription: SubscriptionView | null;
  logo: { mime: string; size: number; updatedAt: string } | null;
  openInvitations: number;
}

export interface MySeat {
  companyId: string;
  companyName: string;
  seat: SeatStatus;
  queuePosition: number | null;
  /** Whether a held seat can be used now (the subscription is in good standing). */
  usable: boolean;
}

export interface RosterRowView {
  row: number;
  name: string;
  email: string;
  roles: string[];
  crew: string | null;
  action: 'invite' | 'skip' | 'fix';
  note: string | null;
  problems: { field: string; message: string }[];
}

export interface RosterPreview {
  fileName: string;
  total: number;
  toInvite: number;
  toSkip: number;
  withProblems: number;
  rows: RosterRowView[];
}

export interface RosterImportResult {
  importId: string;
  invited: number;
  skipped: number;
}

export interface RosterImportProgress {
  importId: string;
  total: number;
  sent: number;
  failed: number;
  done: boolean;
}

export interface InvitationLookup {
  companyName: string;
  email: string;
  name: string;
  roles: string[];
  expiresAt: string;
  hasAccount: boolean;
}

export interface AcceptInvitationResult {
  companyId: string;
  seat: SeatStatus;
  queuePosition: number | null;
}
