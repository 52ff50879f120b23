import type { Knex } from 'knex';
import { inGoodStanding } from './seats';
import type { MeResponse, MembershipView } from '../../shared/roles';

/** The signed-in user as every request sees it: profile plus memberships, one query. */
export async function loadSessionUser(knex: Knex, userId: string): Promise<Express.User | undefined> {
  const rows = await knex('users as u')
    .leftJoin('memberships as m', 'm.user_id', 'u.id')
    .leftJoin('companies as c', 'c.id', 'm.company_id')
    .leftJoin('subscriptions as s', 's.company_id', 'm.company_id')
    .where('u.id', userId)
    .whereNull('u.disabled_at')
    .select('u.id', 'u.email', 'u.name', 'm.company_id', 'm.roles', 'c.name as company_name', 'c.kind as company_kind',
      'm.seat_status', 's.status', 's.cancel_at_period_end', 's.current_period_end')
    .orderBy('c.name');
  if (!rows.length) return undefined;
  const memberships: MembershipView[] = rows
    .filter((r) => r.company_id)
    .map((r) => ({ companyId: r.company_id, companyName: r.company_name, companyKind: r.company_kind, roles: r.roles, seat: r.seat_status === 'assigned' && inGoodStanding(r) }));
  return { id: rows[0].id, email: rows[0].email, name: rows[0].name, memberships };
}

export function meResponse(user: Express.User, activeCompanyId: string | undefined): MeResponse {
  const active = user.memberships.find((m) => m.companyId === activeCompanyId) ?? user.memberships[0];
  return {
    user: { id: user.id, email: user.email, name: user.name },
    memberships: user.memberships,
    activeCompanyId: active?.companyId ?? null,
  };
}
