import type { Knex } from 'knex';
import { checkAndMaybeSave } from '../services/job-checks';
import { addDays, todayIn } from '../services/readiness';
import { DEMO_COMPANY_ID, DEMO_DOMAIN } from './demo-data';

/**
 * The demo company's readiness extras: its time zone, two refresher assignments (one overdue) and a
 * saved job check. Seeded once, after the demo certificates; the saved check marks it as done.
 * Every name is invented.
 */
export const DEMO_TIME_ZONE = 'America/Chicago';
const DEMO_JOB = 'Riverbend kiln 2 stack test';

export async function seedDemoReadiness(knex: Knex): Promise<'seeded' | 'already-seeded' | 'skipped'> {
  if (!(await knex('companies').where({ id: DEMO_COMPANY_ID }).first('id'))) return 'skipped';
  if (!(await knex('areas').first('id'))) return 'skipped';
  if (await knex('job_checks').where({ company_id: DEMO_COMPANY_ID, name: DEMO_JOB }).first('id')) return 'already-seeded';

  const users = new Map(
    (await knex('users').where('email', 'like', `%@${DEMO_DOMAIN}`).select('id', 'email')).map((u) => [u.email as string, u.id as string]),
  );
  const managerId = users.get(`manager@${DEMO_DOMAIN}`);
  const crewId = users.get(`crew@${DEMO_DOMAIN}`);
  const ilyaId = users.get(`ilya.2@${DEMO_DOMAIN}`);
  if (!managerId || !crewId) return 'skipped';

  await knex('companies').where({ id: DEMO_COMPANY_ID }).update({ time_zone: DEMO_TIME_ZONE });
  const today = todayIn(DEMO_TIME_ZONE);
  const daysAgo = (n: number) => new Date(Date.now() - n * 86_400_000);

  await knex.transaction(async (trx) => {
    await trx('assignments').insert([
      // A refresher before the particulate certificate runs out.
      { company_id: DEMO_COMPANY_ID, user_id: crewId, kind: 'drill', drill_id: 'isokinetic-check', area_id: 'particulate', due_on: addDays(today, 10), note: 'Before the Riverbend job, please.', created_by: managerId, created_at: daysAgo(2) },
      // Overdue: set three weeks ago, due five days ago, not done.
      ...(ilyaId
        ? [{ company_id: DEMO_COMPANY_ID, user_id: ilyaId, kind: 'exam', drill_id: null, area_id: 'monitor-audits', due_on: addDays(today, -5), note: 'Renew before the RATA season.', created_by: managerId, created_at: daysAgo(21) }]
        : []),
    ]);
  });
  await checkAndMaybeSave(knex, DEMO_COMPANY_ID, managerId, {
    name: DEMO_JOB,
    areas: ['flow-moisture', 'particulate'],
    date: addDays(today, 30),
    crew: 'West crew',
  });
  return 'seeded';
}
