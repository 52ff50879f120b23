import type { Knex } from 'knex';

export async function listMembers(knex: Knex, companyId: string) {
  const rows = await knex('memberships as m')
    .join('users as u', 'u.id', 'm.user_id')
    .where('m.company_id', companyId)
    .select('u.id', 'u.name', 'u.email', 'm.roles', 'm.created_at')
    .orderBy('u.name');
  return rows.map((r) => ({ userId: r.id, name: r.name, email: r.email, roles: r.roles, memberSince: r.created_at }));
}

export async function listAuditEntries(knex: Knex, companyId: string, limit: number) {
  return knex('audit_log as a')
    .leftJoin('users as u', 'u.id', 'a.actor_user_id')
    .where('a.company_id', companyId)
    .orderBy('a.at', 'desc')
    .limit(limit)
    .select('a.id', 'a.at', 'a.action', 'a.target_type as targetType', 'a.target_id as targetId', 'a.details', 'u.name as actorName');
}

export async function listCompaniesForOperator(knex: Knex) {
  const rows = await knex('companies as c')
    .leftJoin('memberships as m', 'm.company_id', 'c.id')
    .groupBy('c.id')
    .orderBy('c.name')
    .select('c.id', 'c.name', 'c.kind', 'c.created_at', knex.raw('count(m.id)::int as members'));
  return rows.map((r) => ({ id: r.id, name: r.name, kind: r.kind, createdAt: r.created_at, members: r.members }));
}
