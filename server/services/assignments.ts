import type { Knex } from 'knex';
import type { AssignmentBody, AssignmentOptions, AssignmentState, AssignmentView } from '../../shared/readiness';
import { drillTemplates, getDrillTemplate } from '../engine/drills';
import { badRequest, notFound } from '../middleware/errors';
import { recordAudit } from './audit';
import { companyClock, tableExists } from './readiness';

/*
 * Refresher assignments. Completion is worked out on every read, never stored, so it cannot drift:
 * - a drill assignment is done by the member's first drill attempt of that drill submitted after the
 *   assignment was made;
 * - an exam assignment is done by the member's first pass of that area's exam after it was made
 *   (exam_passes.passed_at; a certificate re-issued without a new pass does not count).
 * Overdue: not done and the due day is before today in the company's time zone.
 */

function field(name: string, message: string) {
  const text = `${name}: ${message}`;
  return badRequest(text, [{ field: name, message: text }]);
}

export async function assignmentOptions(knex: Knex, companyId: string, now = new Date()): Promise<AssignmentOptions> {
  const { today, timeZone } = await companyClock(knex, companyId, now);
  const areas = await knex('areas').orderBy('sort_order').select('id', 'name');
  return { drills: drillTemplates.map((t) => ({ id: t.id, title: t.title, areaId: t.area })), areas, today, timeZone };
}

export async function createAssignments(knex: Knex, companyId: string, actorId: string, body: AssignmentBody, now = new Date()) {
  const { today, timeZone } = await companyClock(knex, companyId, now);
  if (body.dueOn < today) throw field('dueOn', `${body.dueOn} is in the past; the due date must be today (${today} in ${timeZone}) or later`);

  let areaId: string;
  let drillId: string | null = null;
  if (body.kind === 'drill') {
    const template = getDrillTemplate(body.drillId!);
    if (!template) throw field('drillId', `"${body.drillId}" is not a drill we have`);
    drillId = template.id;
    areaId = template.area;
  } else {
    const area = await knex('areas').where({ id: body.areaId }).first('id');
    if (!area) throw field('areaId', `"${body.areaId}" is not a competency area`);
    areaId = area.id;
  }

  const memberIds = [...new Set(body.memberIds)];
  return knex.transaction(async (trx) => {
    const found: string[] = await trx('memberships')
      .where({ company_id: companyId })
      .whereIn('user_id', memberIds)
      .whereRaw("roles @> array['crew']::text[]")
      .pluck('user_id');
    // Another company's member, or no member at all: the same answer, so ids are never confirmed.
    if (found.length !== memberIds.length) throw notFound('Member');
    const rows = await trx('assignments')
      .insert(memberIds.map((userId) => ({ company_id: companyId, user_id: userId, kind: body.kind, drill_id: drillId, area_id: areaId, due_on: body.dueOn, note: body.note || null, created_by: actorId })))
      .returning('id');
    await recordAudit(trx, {
      actorUserId: actorId,
      companyId,
      action: 'assignment.created',
      targetType: 'assignment',
      targetId: rows.length === 1 ? rows[0].id : undefined,
      details: { kind: body.kind, drillId, areaId, dueOn: body.dueOn, members: memberIds.length },
    });
    return { created: rows.length, ids: rows.map((r: { id: string }) => r.id) };
  });
}

export async function withdrawAssignment(knex: Knex, companyId: string, actorId: string, id: string) {
  await knex.transaction(async (trx) => {
    const updated = await trx('assignments').where({ company_id: companyId, id }).whereNull('withdrawn_at').update({ withdrawn_at: trx.fn.now() }).returning('id');
    if (!updated.length) throw notFound('Assignment');
    await recordAudit(trx, { actorUserId: actorId, companyId, action: 'assignment.withdrawn', targetType: 'assignment', targetId: id });
  });
}

/** The assignments of a company (optionally one member) with completion and state worked out in SQL. */
async function assignmentsQuery(knex: Knex, companyId: string, today: string) {
  const drillDone = (await tableExists(knex, 'drill_attempts'))
    ? `(select min(d.submitted_at) from drill_attempts d where d.user_id = a.user_id and d.drill_id = a.drill_id and d.submitted_at >= a.created_at)`
    : 'null::timestamptz';
  const sql = `
    with base as (
      select a.*, u.name as member_name, m.crew, ar.name as area_name, by_user.name as assigned_by,
        case when a.kind = 'exam'
          then (select min(p.passed_at) from exam_passes p where p.user_id = a.user_id and p.area_id = a.area_id and p.passed_at >= a.created_at)
          else ${drillDone} end as completed_at
      from assignments a
      join users u on u.id = a.user_id
      left join memberships m on m.user_id = a.user_id and m.company_id = a.company_id
      left join areas ar on ar.id = a.area_id
      left join users by_user on by_user.id = a.created_by
      where a.company_id = ? and a.withdrawn_at is null
    ),
    stated as (
      select base.*, case when completed_at is not null then 'done' when due_on < ?::date then 'overdue' else 'open' end as state
      from base
    )`;
  return { sql, bindings: [companyId, today] as Knex.RawBinding[] };
}

interface AssignmentRow {
  id: string;
  user_id: string;
  member_name: string;
  crew: string | null;
  kind: 'drill' | 'exam';
  drill_id: string | null;
  area_id: string | null;
  area_name: string | null;
  due_on: string;
  note: string | null;
  created_at: Date;
  assigned_by: string | null;
  completed_at: Date | null;
  state: AssignmentState;
}

const toView = (r: AssignmentRow): AssignmentView => ({
  id: r.id,
  memberId: r.user_id,
  memberName: r.member_name,
  crew: r.crew,
  kind: r.kind,
  drillId: r.drill_id,
  drillTitle: r.drill_id ? (getDrillTemplate(r.drill_id)?.title ?? r.drill_id) : null,
  areaId: r.area_id,
  areaName: r.area_name,
  dueOn: r.due_on,
  note: r.note,
  createdAt: r.created_at.toISOString(),
  assignedBy: r.assigned_by,
  completedAt: r.completed_at ? new Date(r.completed_at).toISOString() : null,
  state: r.state,
});

const STATE_ORDER = "case state when 'overdue' then 0 when 'open' then 1 else 2 end";

export async function listAssignments(
  knex: Knex,
  companyId: string,
  q: { page: number; pageSize: number; state: 'all' | AssignmentState; search?: string },
  now = new Date(),
) {
  const { today, timeZone } = await companyClock(knex, companyId, now);
  const { sql, bindings } = await assignmentsQuery(knex, companyId, today);
  const where: string[] = [];
  const extra: Knex.RawBinding[] = [];
  if (q.state !== 'all') {
    where.push('state = ?');
    extra.push(q.state);
  }
  if (q.search) {
    where.push("member_name ilike ? escape '\\'");
    extra.push(`%${q.search.replace(/[\\%_]/g, (c) => `\\${c}`)}%`);
  }
  const result = await knex.raw(
    `${sql}, counted as (select stated.*, count(*) over () as total from stated ${where.length ? `where ${where.join(' and ')}` : ''})
     select * from counted order by ${STATE_ORDER}, due_on, member_name, id limit ? offset ?`,
    [...bindings, ...extra, q.pageSize, (q.page - 1) * q.pageSize],
  );
  const counts = await knex.raw(`${sql} select state, count(*)::int as n from stated group by state`, bindings);
  const byState = Object.fromEntries(counts.rows.map((r: { state: string; n: number }) => [r.state, r.n]));
  return {
    assignments: (result.rows as AssignmentRow[]).map(toView),
    total: Number(result.rows[0]?.total ?? 0),
    counts: { open: byState.open ?? 0, overdue: byState.overdue ?? 0, done: byState.done ?? 0 },
    today,
    timeZone,
  };
}

/** A member's own assignments: everything not done, then what they finished in the last 30 days. */
export async function myAssignments(knex: Knex, companyId: string, userId: string, now = new Date()) {
  const { today, timeZone } = await companyClock(knex, companyId, now);
  const { sql, bindings } = await assignmentsQuery(knex, companyId, today);
  const result = await knex.raw(
    `${sql} select * from stated where user_id = ? and (state <> 'done' or completed_at > now() - interval '30 days')
     order by ${STATE_ORDER}, due_on, id limit 100`,
    [...bindings, userId],
  );
  return { assignments: (result.rows as AssignmentRow[]).map(toView), today, timeZone };
}

/** Overdue assignments per company, for the weekly digest. */
export async function overdueAssignments(knex: Knex, companyId: string, today: string) {
  const { sql, bindings } = await assignmentsQuery(knex, companyId, today);
  const result = await knex.raw(`${sql} select * from stated where state = 'overdue' order by due_on, member_name limit 50`, bindings);
  return (result.rows as AssignmentRow[]).map(toView);
}
