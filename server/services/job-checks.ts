import type { Knex } from 'knex';
import {
  RENEWAL_WINDOW_DAYS,
  type JobCheckBody,
  type JobCheckResult,
  type ReadinessArea,
  type SavedJobCheck,
} from '../../shared/readiness';
import { recordAudit } from './audit';
import { badRequest, notFound } from '../middleware/errors';
import { addDays, companyClock, readinessAll, resolveAreas } from './readiness';

/*
 * Job check: these areas, on this date, optionally one crew. Every member lands in exactly one list,
 * judged on certificates in force today (company time zone; see readiness.ts for "in force"):
 * - qualified: a certificate in force on the job date in every area.
 * - lapsing: in force today in every area, but at least one lapses before the job date and its
 *   renewal window (the 90 days before expiry) has not opened yet; the renewal must be planned for
 *   when it opens (each lapse carries renewalOpensOn, always before the job date).
 * - renewable: in force today in every area, and every certificate that lapses before the job date
 *   is already inside its renewal window: the member can renew now, in time for the job.
 * - notQualified: lapsed or never held in at least one area today; a renewal would be a fresh exam.
 * The job date must be today or later in the company's time zone.
 */

export interface JobCheckInput {
  areas: string[];
  date: string;
  crew?: string | null;
}

function assertNotPast(date: string, today: string, timeZone: string, field = 'date') {
  if (date < today) {
    const message = `${field}: ${date} is in the past; a job date must be today (${today} in ${timeZone}) or later`;
    throw badRequest(message, [{ field, message }]);
  }
}

export async function runJobCheck(knex: Knex, companyId: string, input: JobCheckInput, now = new Date()): Promise<JobCheckResult> {
  const { timeZone, today } = await companyClock(knex, companyId, now);
  const duplicates = input.areas.map((id, i) => ({ id, i })).filter(({ id, i }) => input.areas.indexOf(id) !== i);
  if (duplicates.length) {
    const fields = duplicates.map(({ id, i }) => ({ field: `areas.${i}`, message: `areas.${i}: "${id}" is listed twice` }));
    throw badRequest(fields.map((f) => f.message).join('; '), fields);
  }
  const areas = await resolveAreas(knex, input.areas, 'areas');
  assertNotPast(input.date, today, timeZone);

  const rows = await readinessAll(knex, companyId, { today, areaIds: areas.map((a) => a.id), crew: input.crew ?? null, areas });
  const result: JobCheckResult = { areas, date: input.date, crew: input.crew ?? null, today, timeZone, qualified: [], lapsing: [], renewable: [], notQualified: [] };

  for (const row of rows) {
    const member = { memberId: row.memberId, name: row.name, crew: row.crew };
    const inForce = row.cells.filter((c) => c.status === 'current' || c.status === 'expiring');
    if (inForce.length < row.cells.length) {
      result.notQualified.push({
        ...member,
        missing: row.cells
          .filter((c) => c.status === 'expired' || c.status === 'none')
          .map((c) => ({ area: c.area, status: c.status as 'expired' | 'none', expiresOn: c.expiresOn })),
      });
      continue;
    }
    const lapses = row.cells
      .filter((c) => c.expiresOn! < input.date)
      .map((c) => ({ area: c.area, expiresOn: c.expiresOn!, renewalOpensOn: addDays(c.expiresOn!, -RENEWAL_WINDOW_DAYS) }));
    if (!lapses.length) {
      const validUntil = row.cells.reduce((min, c) => (c.expiresOn! < min ? c.expiresOn! : min), row.cells[0]?.expiresOn ?? input.date);
      result.qualified.push({ ...member, validUntil });
    } else if (lapses.every((l) => l.renewalOpensOn <= today)) {
      result.renewable.push({ ...member, lapses });
    } else {
      result.lapsing.push({ ...member, lapses });
    }
  }
  return result;
}

const counts = (r: JobCheckResult) => ({
  qualified: r.qualified.length,
  lapsing: r.lapsing.length,
  renewable: r.renewable.length,
  notQualified: r.notQualified.length,
});

interface JobCheckRow {
  id: string;
  name: string;
  area_ids: string[];
  job_date: string;
  crew: string | null;
  created_at: Date;
  last_run_at: Date | null;
  last_counts: SavedJobCheck['lastCounts'];
}

const toSaved = (r: JobCheckRow, today: string): SavedJobCheck => ({
  id: r.id,
  name: r.name,
  areas: r.area_ids,
  date: r.job_date,
  crew: r.crew,
  createdAt: r.created_at.toISOString(),
  lastRunAt: r.last_run_at?.toISOString() ?? null,
  lastCounts: r.last_counts,
  past: r.job_date < today,
});

/** Runs the check and, when a name is given, saves it (the same name again replaces that check). */
export async function checkAndMaybeSave(knex: Knex, companyId: string, actorId: string, body: JobCheckBody, now = new Date()) {
  const result = await runJobCheck(knex, companyId, { areas: body.areas, date: body.date, crew: body.crew ?? null }, now);
  if (!body.name) return result;
  const saved = await knex.transaction(async (trx) => {
    const values = {
      company_id: companyId,
      name: body.name!,
      area_ids: result.areas.map((a) => a.id),
      job_date: body.date,
      crew: body.crew ?? null,
      last_counts: JSON.stringify(counts(result)),
      created_by: actorId,
    };
    const [row] = await trx.raw(
      `insert into job_checks (company_id, name, area_ids, job_date, crew, last_counts, last_run_at, created_by)
       values (:company_id, :name, :area_ids, :job_date, :crew, :last_counts, now(), :created_by)
       on conflict (company_id, lower(name)) do update set name = excluded.name, area_ids = excluded.area_ids,
         job_date = excluded.job_date, crew = excluded.crew, last_counts = excluded.last_counts, last_run_at = now(), updated_at = now()
       returning *`,
      { ...values, area_ids: `{${values.area_ids.join(',')}}` },
    ).then((r: { rows: JobCheckRow[] }) => r.rows);
    await recordAudit(trx, { actorUserId: actorId, companyId, action: 'job-check.saved', targetType: 'job_check', targetId: row.id, details: { name: row.name, date: row.job_date, areas: row.area_ids } });
    return row;
  });
  return { ...result, saved: toSaved(saved, result.today) };
}

export async function listJobChecks(knex: Knex, companyId: string, now = new Date()) {
  const { today, timeZone } = await companyClock(knex, companyId, now);
  const rows: JobCheckRow[] = await knex('job_checks').where({ company_id: companyId }).orderBy([{ column: 'job_date', order: 'asc' }, { column: 'name' }]).limit(200);
  const areas: ReadinessArea[] = await knex('areas').orderBy('sort_order').select('id', 'name');
  return { checks: rows.map((r) => toSaved(r, today)), areas, today, timeZone };
}

export async function rerunJobCheck(knex: Knex, companyId: string, id: string, now = new Date()) {
  const row: JobCheckRow | undefined = await knex('job_checks').where({ company_id: companyId, id }).first();
  if (!row) throw notFound('Saved job check');
  const result = await runJobCheck(knex, companyId, { areas: row.area_ids, date: row.job_date, crew: row.crew }, now);
  const [updated] = await knex('job_checks')
    .where({ id })
    .update({ last_counts: JSON.stringify(counts(result)), last_run_at: knex.fn.now(), updated_at: knex.fn.now() })
    .returning('*');
  return { ...result, saved: toSaved(updated, result.today) };
}

export async function deleteJobCheck(knex: Knex, companyId: string, actorId: string, id: string) {
  await knex.transaction(async (trx) => {
    const deleted = await trx('job_checks').where({ company_id: companyId, id }).delete().returning(['id', 'name']);
    if (!deleted.length) throw notFound('Saved job check');
    await recordAudit(trx, { actorUserId: actorId, companyId, action: 'job-check.deleted', targetType: 'job_check', targetId: id, details: { name: deleted[0].name } });
  });
}
