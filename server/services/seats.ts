import type { Knex } from 'knex';
import type { SeatCounts, SeatStatus } from '../../shared/billing';
import { conflict, notFound } from '../middleware/errors';
import { recordAudit } from './audit';

/**
 * Seats. A member of a company holds a seat (`assigned`), waits for one (`queued`, first come first
 * served by `queued_at`) or has none. The number of seats is the quantity of the company's
 * subscription while it is in good standing, otherwise 0.
 *
 * Locking: every change that reads the seat count and then assigns takes the company's row in
 * `subscriptions` with `select ... for update` first (`lockSeats`). Concurrent acceptances, admin
 * moves, quantity changes and webhook updates of one company therefore run one after another, so
 * `used <= total` holds whatever arrives at once. Other companies are never blocked. Queue and seat
 * times use clock_timestamp() (when the row changed under the lock), not now() (when the transaction
 * began), so the queue's order is the order in which the lock was won.
 */
export const GOOD_STANDING_STATUSES = ['active', 'trialing', 'past_due'];

export interface SubscriptionRow {
  company_id: string;
  stripe_customer_id: string | null;
  stripe_subscription_id: string | null;
  stripe_price_id: string | null;
  status: string | null;
  interval: 'month' | 'year' | null;
  quantity: number;
  current_period_end: Date | null;
  cancel_at_period_end: boolean;
  cancel_at: Date | null;
  subscription_created: Date | null;
  updated_from_event_created: Date | null;
}

type Db = Knex | Knex.Transaction;

export interface Actor {
  userId?: string | null;
  ip?: string;
}

/** Whether the company may use its seats now: paid up, and not past the end of a cancelled period. */
export function inGoodStanding(row: Pick<SubscriptionRow, 'status' | 'cancel_at_period_end' | 'current_period_end'> | undefined, now = new Date()): boolean {
  if (!row?.status || !GOOD_STANDING_STATUSES.includes(row.status)) return false;
  if (row.cancel_at_period_end && row.current_period_end && row.current_period_end.getTime() <= now.getTime()) return false;
  return true;
}

/** Seats paid for right now. */
export function seatTotal(row: SubscriptionRow | undefined, now = new Date()): number {
  return row && inGoodStanding(row, now) ? row.quantity : 0;
}

/**
 * Takes the company's seat lock for the rest of the transaction and returns its subscription row
 * (creating an empty one for a company that never subscribed, so there is always a row to lock).
 */
export async function lockSeats(trx: Knex.Transaction, companyId: string): Promise<SubscriptionRow> {
  let row = await trx<SubscriptionRow>('subscriptions').where({ company_id: companyId }).forUpdate().first();
  if (!row) {
    await trx.raw('insert into subscriptions (company_id) values (?) on conflict (company_id) do nothing', [companyId]);
    row = await trx<SubscriptionRow>('subscriptions').where({ company_id: companyId }).forUpdate().first();
  }
  return row!;
}

export async function seatUsage(db: Db, companyId: string): Promise<{ used: number; queued: number }> {
  const rows: { seat_status: SeatStatus; n: number }[] = await db('memberships')
    .where({ company_id: companyId })
    .whereIn('seat_status', ['assigned', 'queued'])
    .groupBy('seat_status')
    .select('seat_status', db.raw('count(*)::int as n'));
  return {
    used: rows.find((r) => r.seat_status === 'assigned')?.n ?? 0,
    queued: rows.find((r) => r.seat_status === 'queued')?.n ?? 0,
  };
}

/** Seat counts without taking the lock: for showing, never for deciding. */
export async function seatCounts(db: Db, companyId: string): Promise<SeatCounts> {
  const row = await db<SubscriptionRow>('subscriptions').where({ company_id: companyId }).first();
  const usage = await seatUsage(db, companyId);
  return { total: seatTotal(row), ...usage };
}

/** 1-based place in the company's queue, or null when the member is not queued. */
export async function queuePosition(db: Db, companyId: string, userId: string): Promise<number | null> {
  const me = await db('memberships').where({ company_id: companyId, user_id: userId, seat_status: 'queued' }).first('queued_at', 'id');
  if (!me) return null;
  const ahead = await db('memberships')
    .where({ company_id: companyId, seat_status: 'queued' })
    .where((q) => q.where('queued_at', '<', me.queued_at).orWhere((q2) => q2.where('queued_at', me.queued_at).andWhere('id', '<', me.id)))
    .count<{ count: number }[]>('* as count');
  return Number(ahead[0].count) + 1;
}

/**
 * Hands free seats to the front of the queue. Call with the seat lock held after anything that
 * frees seats or adds them. Returns who got one.
 */
export async function fillFromQueue(trx: Knex.Transaction, companyId: string, row: SubscriptionRow, actor: Actor = {}) {
  const { used } = await seatUsage(trx, companyId);
  const free = seatTotal(row) - used;
  if (free <= 0) return [];
  const next: { id: string; user_id: string }[] = await trx('memberships')
    .where({ company_id: companyId, seat_status: 'queued' })
    .orderBy([{ column: 'queued_at' }, { column: 'id' }])
    .limit(free)
    .select('id', 'user_id');
  if (!next.length) return [];
  await trx('memberships')
    .whereIn('id', next.map((m) => m.id))
    .update({ seat_status: 'assigned', seat_assigned_at: trx.raw('clock_timestamp()'), queued_at: null, updated_at: trx.fn.now() });
  await recordAudit(trx, {
    actorUserId: actor.userId ?? null,
    companyId,
    action: 'seats.filled-from-queue',
    details: { userIds: next.map((m) => m.user_id) },
    ip: actor.ip,
  });
  return next.map((m) => m.user_id);
}

/**
 * When the seat count falls below the seats in use (a cancelled subscription ends, or seats were
 * lowered outside the app), the most recently assigned seats go back to the queue, keeping their
 * place by the time they first got a seat.
 */
export async function trimToTotal(trx: Knex.Transaction, companyId: string, row: SubscriptionRow, actor: Actor = {}) {
  const { used } = await seatUsage(trx, companyId);
  const excess = used - seatTotal(row);
  if (excess <= 0) return [];
  const lastIn: { id: string; user_id: string }[] = await trx('memberships')
    .where({ company_id: companyId, seat_status: 'assigned' })
    .orderBy([{ column: 'seat_assigned_at', order: 'desc', nulls: 'last' }, { column: 'id', order: 'desc' }])
    .limit(excess)
    .select('id', 'user_id');
  await trx('memberships')
    .whereIn('id', lastIn.map((m) => m.id))
    .update({ seat_status: 'queued', queued_at: trx.raw('coalesce(seat_assigned_at, now())'), seat_assigned_at: null, updated_at: trx.fn.now() });
  await recordAudit(trx, {
    actorUserId: actor.userId ?? null,
    companyId,
    action: 'seats.returned-to-queue',
    details: { userIds: lastIn.map((m) => m.user_id), seats: seatTotal(row) },
    ip: actor.ip,
  });
  return lastIn.map((m) => m.user_id);
}

/**
 * A new member asks for a seat (at invitation acceptance): a free seat if there is one, otherwise
 * the back of the queue. Takes the seat lock.
 */
export async function requestSeat(trx: Knex.Transaction, companyId: string, userId: string, actor: Actor = {}): Promise<{ seat: SeatStatus; queuePosition: number | null }> {
  const row = await lockSeats(trx, companyId);
  const { used } = await seatUsage(trx, companyId);
  const seat: SeatStatus = used < seatTotal(row) ? 'assigned' : 'queued';
  await trx('memberships')
    .where({ company_id: companyId, user_id: userId })
    .update(
      seat === 'assigned'
        ? { seat_status: 'assigned', seat_assigned_at: trx.raw('clock_timestamp()'), queued_at: null, updated_at: trx.fn.now() }
        : { seat_status: 'queued', queued_at: trx.raw('clock_timestamp()'), seat_assigned_at: null, updated_at: trx.fn.now() },
    );
  await recordAudit(trx, { actorUserId: actor.userId ?? userId, companyId, action: seat === 'assigned' ? 'seat.assigned' : 'seat.queued', targetType: 'user', targetId: userId, ip: actor.ip });
  return { seat, queuePosition: seat === 'queued' ? await queuePosition(trx, companyId, userId) : null };
}

async function membershipOf(trx: Knex.Transaction, companyId: string, userId: string) {
  const member = await trx('memberships as m')
    .join('users as u', 'u.id', 'm.user_id')
    .where({ 'm.company_id': companyId, 'm.user_id': userId })
    .first('m.id', 'm.seat_status', 'm.roles', 'u.name', 'u.email');
  if (!member) throw notFound('Member');
  return member as { id: string; seat_status: SeatStatus; roles: string[]; name: string; email: string };
}

function noSeatsMessage(total: number, used: number) {
  if (total === 0) return 'The company has no seats right now: its subscription is not active. Start or renew it on the billing page.';
  return `All ${total} seats are in use (${used} assigned). Add seats on the billing page, or move a seat from another member.`;
}

/** Gives a member a seat: a free one, or `fromUserId`'s seat moved over in the same step. */
export async function assignSeat(knex: Knex, companyId: string, userId: string, opts: { fromUserId?: string } & Actor = {}) {
  return knex.transaction(async (trx) => {
    const row = await lockSeats(trx, companyId);
    const member = await membershipOf(trx, companyId, userId);
    if (member.seat_status === 'assigned') throw conflict(`${member.name} already holds a seat.`);
    const { used } = await seatUsage(trx, companyId);
    const total = seatTotal(row);
    let from: Awaited<ReturnType<typeof membershipOf>> | undefined;
    if (opts.fromUserId) {
      if (opts.fromUserId === userId) throw conflict('Choose a different member to take the seat from.');
      from = await membershipOf(trx, companyId, opts.fromUserId);
      if (from.seat_status !== 'assigned') throw conflict(`${from.name} holds no seat to move.`);
      await trx('memberships').where({ id: from.id }).update({ seat_status: 'none', seat_assigned_at: null, queued_at: null, updated_at: trx.fn.now() });
    } else if (used >= total) {
      throw conflict(noSeatsMessage(total, used));
    }
    await trx('memberships').where({ id: member.id }).update({ seat_status: 'assigned', seat_assigned_at: trx.raw('clock_timestamp()'), queued_at: null, updated_at: trx.fn.now() });
    await recordAudit(trx, {
      actorUserId: opts.userId ?? null,
      companyId,
      action: from ? 'seat.moved' : 'seat.assigned',
      targetType: 'user',
      targetId: userId,
      details: from ? { fromUserId: opts.fromUserId, fromName: from.name, toName: member.name } : { name: member.name },
      ip: opts.ip,
    });
    return { seat: 'assigned' as const, movedFrom: from ? { userId: opts.fromUserId!, name: from.name } : null };
  });
}

/** Takes a seat back (or takes a member out of the queue). A freed seat goes to the front of the queue. */
export async function unassignSeat(knex: Knex, companyId: string, userId: string, actor: Actor = {}) {
  return knex.transaction(async (trx) => {
    const row = await lockSeats(trx, companyId);
    const member = await membershipOf(trx, companyId, userId);
    if (member.seat_status === 'none') throw conflict(`${member.name} holds no seat and is not waiting for one.`);
    await trx('memberships').where({ id: member.id }).update({ seat_status: 'none', seat_assigned_at: null, queued_at: null, updated_at: trx.fn.now() });
    await recordAudit(trx, {
      actorUserId: actor.userId ?? null,
      companyId,
      action: member.seat_status === 'assigned' ? 'seat.unassigned' : 'seat.left-queue',
      targetType: 'user',
      targetId: userId,
      details: { name: member.name },
      ip: actor.ip,
    });
    const promoted = member.seat_status === 'assigned' ? await fillFromQueue(trx, companyId, row, actor) : [];
    return { seat: 'none' as const, promoted: await namesOf(trx, promoted) };
  });
}

/**
 * Removes a person from the company: their membership goes, their account and everything they
 * earned (certificates, attempts) stays theirs. A seat they held goes to the queue.
 */
export async function removeMember(knex: Knex, companyId: string, userId: string, actor: Actor = {}) {
  return knex.transaction(async (trx) => {
    const row = await lockSeats(trx, companyId);
    const member = await membershipOf(trx, companyId, userId);
    if (actor.userId === userId) throw conflict('You cannot remove yourself from the company. Ask another admin to do it.');
    if (member.roles.includes('admin')) {
      const admins = await trx('memberships').where({ company_id: companyId }).whereRaw("'admin' = any(roles)").count<{ count: number }[]>('* as count');
      if (Number(admins[0].count) <= 1) throw conflict(`${member.name} is the company's only admin; make someone else an admin first.`);
    }
    await trx('memberships').where({ id: member.id }).del();
    await recordAudit(trx, {
      actorUserId: actor.userId ?? null,
      companyId,
      action: 'member.removed',
      targetType: 'user',
      targetId: userId,
      details: { name: member.name, email: member.email, hadSeat: member.seat_status },
      ip: actor.ip,
    });
    const promoted = member.seat_status === 'assigned' ? await fillFromQueue(trx, companyId, row, actor) : [];
    return { removed: true, promoted: await namesOf(trx, promoted) };
  });
}

async function namesOf(db: Db, userIds: string[]) {
  if (!userIds.length) return [];
  return db('users').whereIn('id', userIds).select('id as userId', 'name');
}

/**
 * Whether this user holds a usable seat in this company: an assigned seat, and the company's
 * subscription in good standing (a cancelled plan keeps working to the end of its paid period).
 * The query form of the rule: requests read the same answer from the signed-in user
 * (`MembershipView.seat`, computed in loadSessionUser with inGoodStanding) and `requireSeat` checks it.
 */
export async function hasSeat(knex: Knex, userId: string, companyId: string): Promise<boolean> {
  const row = await knex('memberships as m')
    .leftJoin('subscriptions as s', 's.company_id', 'm.company_id')
    .where({ 'm.user_id': userId, 'm.company_id': companyId })
    .first('m.seat_status', 's.status', 's.cancel_at_period_end', 's.current_period_end');
  if (!row || row.seat_status !== 'assigned') return false;
  return inGoodStanding(row);
}

const MEMBER_SORT_COLUMNS: Record<string, string> = {
  name: 'u.name',
  email: 'u.email',
  crew: 'm.crew',
  joined: 'm.created_at',
};

/** One page of the company's members with their seat status and queue place; sorted and filtered in the database. */
export async function listMembersWithSeats(
  knex: Knex,
  companyId: string,
  query: { page: number; pageSize: number; q?: string; seat?: SeatStatus; sort: string; order: 'asc' | 'desc' },
) {
  const base = knex('memberships as m').join('users as u', 'u.id', 'm.user_id').where('m.company_id', companyId);
  if (query.q) {
    const like = `%${query.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    base.where((q) => q.whereILike('u.name', like).orWhereILike('u.email', like).orWhereILike('m.crew', like));
  }
  if (query.seat) base.where('m.seat_status', query.seat);
  const [{ count }] = await base.clone().count<{ count: number }[]>('* as count');

  // Queue places are counted over the whole company, not just this page or filter.
  const positions = knex('memberships')
    .where({ company_id: companyId, seat_status: 'queued' })
    .select('id', knex.raw('row_number() over (order by queued_at, id)::int as position'))
    .as('q');
  const rows = base
    .leftJoin(positions, 'q.id', 'm.id')
    .select('u.id as userId', 'u.name', 'u.email', 'm.roles', 'm.crew', 'm.seat_status as seat', 'q.position as queuePosition', 'm.created_at as joinedAt');
  if (query.sort === 'seat') {
    rows.orderByRaw(`case m.seat_status when 'assigned' then 0 when 'queued' then 1 else 2 end ${query.order}, q.position ${query.order} nulls last`);
  } else {
    rows.orderBy(MEMBER_SORT_COLUMNS[query.sort] ?? 'u.name', query.order);
  }
  rows.orderBy('u.id').limit(query.pageSize).offset((query.page - 1) * query.pageSize);
  const members = (await rows).map((r: { joinedAt: Date; queuePosition: number | null }) => ({ ...r, joinedAt: r.joinedAt.toISOString(), queuePosition: r.queuePosition ?? null }));
  return { members, total: Number(count), page: query.page, pageSize: query.pageSize };
}

/** The signed-in member's own seat in the active company. */
export async function mySeat(knex: Knex, companyId: string, userId: string) {
  const row = await knex('memberships as m')
    .join('companies as c', 'c.id', 'm.company_id')
    .leftJoin('subscriptions as s', 's.company_id', 'm.company_id')
    .where({ 'm.company_id': companyId, 'm.user_id': userId })
    .first('c.name', 'm.seat_status', 's.status', 's.cancel_at_period_end', 's.current_period_end');
  if (!row) throw notFound('Membership');
  return {
    companyId,
    companyName: row.name as string,
    seat: row.seat_status as SeatStatus,
    queuePosition: await queuePosition(knex, companyId, userId),
    usable: row.seat_status === 'assigned' && inGoodStanding(row),
  };
}
