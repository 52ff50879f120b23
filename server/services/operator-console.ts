import type { Knex } from 'knex';
import type {
  CompanySort, OperatorCompaniesPage, OperatorCompaniesQuery, OperatorCompanyDetail, OperatorCompanyRow, PaymentEventDetail, PaymentEventRow,
  PaymentEventSort, PaymentEventsPage, PaymentEventsQuery, PaymentEventState, SubscriptionChange,
} from '../../shared/operator-console';
import { notFound } from '../middleware/errors';
import { subscriptionView } from './billing';
import { seatCounts, type SubscriptionRow } from './seats';

/*
 * The operator console's views of every company (members, seats, subscription) and of every payment
 * event received. Read-only. Seat numbers come from seatCounts and the subscription from
 * subscriptionView, the same functions behind the company's own billing page, so the two never
 * disagree; that is also why seats are not a sort key (sorting by them would need the seat rules
 * again in SQL).
 */

const likePattern = (text: string) => `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
const iso = (date: Date | null | undefined) => (date ? date.toISOString() : null);

const COMPANY_SORT_COLUMNS: Record<CompanySort, string> = {
  name: 'c.name',
  kind: 'c.kind',
  members: 'members',
  status: 's.status',
  interval: 's.interval',
  periodEnd: 's.current_period_end',
  created: 'c.created_at',
};

interface CompanyListRow {
  id: string;
  name: string;
  kind: OperatorCompanyRow['kind'];
  created_at: Date;
  members: number;
}

function companiesBase(knex: Knex) {
  return knex('companies as c').leftJoin('subscriptions as s', 's.company_id', 'c.id');
}

const companyColumns = (knex: Knex) => ['c.id', 'c.name', 'c.kind', 'c.created_at', knex.raw('(select count(*) from memberships m where m.company_id = c.id)::int as members')];

/** Seats and subscription for each company, through the billing page's own functions. */
async function withSeats(knex: Knex, rows: CompanyListRow[]): Promise<OperatorCompanyRow[]> {
  if (!rows.length) return [];
  const subscriptions = await knex<SubscriptionRow>('subscriptions').whereIn('company_id', rows.map((r) => r.id));
  const byCompany = new Map(subscriptions.map((s) => [s.company_id, s]));
  return Promise.all(
    rows.map(async (r) => {
      const view = subscriptionView(byCompany.get(r.id), null);
      let subscription: OperatorCompanyRow['subscription'] = null;
      if (view) {
        const { plan: _plan, ...rest } = view;
        subscription = rest;
      }
      return { id: r.id, name: r.name, kind: r.kind, members: r.members, seats: await seatCounts(knex, r.id), subscription, createdAt: r.created_at.toISOString() };
    }),
  );
}

export async function listCompanies(knex: Knex, q: OperatorCompaniesQuery): Promise<OperatorCompaniesPage> {
  const base = companiesBase(knex);
  if (q.kind) base.where('c.kind', q.kind);
  if (q.status === 'none') base.whereNull('s.status');
  else if (q.status) base.where('s.status', q.status);
  if (q.q) {
    const search = q.q;
    // A payment-service id pasted from its dashboard finds its company too.
    base.where((w) => w.whereILike('c.name', likePattern(search)).orWhere('s.stripe_customer_id', search).orWhere('s.stripe_subscription_id', search));
  }
  const [rows, total] = await Promise.all([
    base.clone()
      .select(companyColumns(knex))
      .orderBy(COMPANY_SORT_COLUMNS[q.sort], q.order, 'last')
      .orderBy('c.name', 'asc')
      .orderBy('c.id', 'asc')
      .limit(q.pageSize)
      .offset((q.page - 1) * q.pageSize) as Promise<CompanyListRow[]>,
    base.clone().count<{ n: string }[]>('* as n'),
  ]);
  return { companies: await withSeats(knex, rows), total: Number(total[0]?.n ?? 0), page: q.page, pageSize: q.pageSize };
}

/** Audit actions that change what a company pays for or how many seats it has. */
const SUBSCRIPTION_ACTIONS = ['company.signed-up', 'billing.%'];

export async function companyDetail(knex: Knex, companyId: string): Promise<OperatorCompanyDetail> {
  const row: CompanyListRow | undefined = await companiesBase(knex).where('c.id', companyId).first(companyColumns(knex));
  if (!row) throw notFound('Company');
  const [[company], changes, events] = await Promise.all([
    withSeats(knex, [row]),
    knex('audit_log as a')
      .leftJoin('users as u', 'u.id', 'a.actor_user_id')
      .where('a.company_id', companyId)
      .where((w) => { for (const action of SUBSCRIPTION_ACTIONS) w.orWhereLike('a.action', action); })
      .orderBy([{ column: 'a.at', order: 'desc' }, { column: 'a.id', order: 'desc' }])
      .limit(20)
      .select('a.id', 'a.at', 'a.action', 'a.details', 'u.name as actorName'),
    listPaymentEvents(knex, { page: 1, pageSize: 10, sort: 'received', order: 'desc', companyId }),
  ]);
  return {
    company,
    changes: changes.map((c: { id: string | number; at: Date; action: string; details: Record<string, unknown> | null; actorName: string | null }): SubscriptionChange => ({
      id: Number(c.id), at: c.at.toISOString(), action: c.action, actorName: c.actorName ?? null, details: c.details ?? {},
    })),
    events: events.events,
  };
}

// Payment events ----------------------------------------------------------------------------------

/**
 * The customer an event is about, read from its payload: the object's `customer`, or the object
 * itself for customer events. Used to name the company of an event not applied yet (`company_id`
 * is written when an event is processed).
 */
const EVENT_CUSTOMER = "case when e.payload #>> '{data,object,object}' = 'customer' then e.payload #>> '{data,object,id}' else e.payload #>> '{data,object,customer}' end";

const EVENT_SORT_COLUMNS: Record<PaymentEventSort, string> = {
  received: 'e.received_at',
  created: 'e.event_created',
  type: 'e.type',
};

function eventsBase(knex: Knex) {
  const companyRef = knex.raw(`coalesce(e.company_id, (select s.company_id from subscriptions s where s.stripe_customer_id = (${EVENT_CUSTOMER})))`);
  return knex('stripe_events as e').leftJoin('companies as c', function joinCompany() {
    this.on('c.id', '=', companyRef);
  });
}

const EVENT_COLUMNS = ['e.id', 'e.type', 'e.event_created', 'e.received_at', 'e.processed_at', 'e.attempts', 'e.last_error', 'c.id as company_id', 'c.name as company_name'];

interface EventListRow {
  id: string;
  type: string;
  event_created: Date;
  received_at: Date;
  processed_at: Date | null;
  attempts: number;
  last_error: string | null;
  company_id: string | null;
  company_name: string | null;
}

function stateOf(row: Pick<EventListRow, 'processed_at' | 'last_error'>): PaymentEventState {
  if (row.processed_at) return 'processed';
  return row.last_error ? 'failed' : 'pending';
}

function eventRow(r: EventListRow): PaymentEventRow {
  return {
    id: r.id,
    type: r.type,
    state: stateOf(r),
    createdAt: r.event_created.toISOString(),
    receivedAt: r.received_at.toISOString(),
    processedAt: iso(r.processed_at),
    attempts: r.attempts,
    lastError: r.last_error,
    company: r.company_id ? { id: r.company_id, name: r.company_name ?? '' } : null,
  };
}

export async function listPaymentEvents(
  knex: Knex,
  q: Pick<PaymentEventsQuery, 'page' | 'pageSize' | 'sort' | 'order'> & Partial<Pick<PaymentEventsQuery, 'type' | 'status' | 'companyId' | 'q'>>,
): Promise<PaymentEventsPage> {
  const base = eventsBase(knex);
  if (q.type) base.where('e.type', q.type);
  if (q.status === 'processed') base.whereNotNull('e.processed_at');
  else if (q.status === 'failed') base.whereNull('e.processed_at').whereNotNull('e.last_error');
  else if (q.status === 'pending') base.whereNull('e.processed_at').whereNull('e.last_error');
  if (q.companyId) base.where('c.id', q.companyId);
  if (q.q) {
    const like = likePattern(q.q);
    base.where((w) => w.whereILike('e.id', like).orWhereILike('c.name', like));
  }
  const [rows, total, types, unprocessed] = await Promise.all([
    base.clone()
      .select(EVENT_COLUMNS)
      .orderBy(EVENT_SORT_COLUMNS[q.sort], q.order)
      .orderBy('e.id', q.order)
      .limit(q.pageSize)
      .offset((q.page - 1) * q.pageSize) as Promise<EventListRow[]>,
    base.clone().count<{ n: string }[]>('* as n'),
    knex('stripe_events').distinct('type').orderBy('type').pluck('type') as Promise<string[]>,
    // Served by the partial index on unprocessed events, so it stays cheap as the log grows.
    knex('stripe_events')
      .whereNull('processed_at')
      .first(knex.raw('(count(*) filter (where last_error is not null))::int as failed'), knex.raw('(count(*) filter (where last_error is null))::int as pending')),
  ]);
  return {
    events: rows.map(eventRow),
    total: Number(total[0]?.n ?? 0),
    page: q.page,
    pageSize: q.pageSize,
    types,
    unprocessed: { failed: unprocessed?.failed ?? 0, pending: unprocessed?.pending ?? 0 },
  };
}

export async function paymentEvent(knex: Knex, eventId: string): Promise<PaymentEventDetail> {
  const row: (EventListRow & { payload: unknown }) | undefined = await eventsBase(knex).where('e.id', eventId).first([...EVENT_COLUMNS, 'e.payload']);
  if (!row) throw notFound('Payment event');
  return { ...eventRow(row), payload: row.payload };
}
