import type { Knex } from 'knex';
import { hashPassword } from '../../server/services/passwords';
import { median } from './measure';

/**
 * The readiness benchmark: a company of 5,000 crew members × 6 areas with a mix of certificates
 * (none, lapsed, renew-soon, current, renewed over an older one, revoked), seeded in bulk by SQL;
 * then the matrix page timed sequentially from a signed-in manager.
 */
export const READINESS_MEMBERS = 5_000;
export const READINESS_MANAGER = { email: 'bench-manager@bench.plumewright.example', password: 'bench-password-2' };

export async function seedReadinessCompany(knex: Knex) {
  const [company] = await knex('companies').insert({ name: 'Bench Readiness Testing', time_zone: 'America/Chicago' }).returning('id');
  const [manager] = await knex('users').insert({ email: READINESS_MANAGER.email, name: 'Bench Manager', password_hash: await hashPassword(READINESS_MANAGER.password) }).returning('id');
  await knex('memberships').insert({ user_id: manager.id, company_id: company.id, roles: ['manager'] });
  await knex.transaction(async (trx) => {
    await trx.raw('select setseed(0.42)');
    await trx.raw(
      `with people as (
         insert into users (email, name)
         select format('bench-crew-%s@bench.plumewright.example', g), format('Bench Member %s', lpad(g::text, 4, '0'))
         from generate_series(1, ?) g
         returning id
       )
       insert into memberships (user_id, company_id, roles, crew)
       select id, ?, array['crew'], format('Crew %s', 1 + (abs(hashtext(id::text)) % 12)) from people`,
      [READINESS_MEMBERS, company.id],
    );
    // One draw per member and area decides the cell; dates spread around today.
    await trx.raw(
      `with draws as (
         select m.user_id, a.id as area_id, a.name as area_name, random() as r, random() as s
         from memberships m cross join areas a
         where m.company_id = ? and m.roles @> array['crew']
       ), rows as (
         select user_id, area_id, area_name, r,
           case when r < 0.25 then current_date - (1 + (s * 700)::int)
                when r < 0.37 then current_date + (s * 90)::int
                else current_date + 91 + (s * 1000)::int end as expires_on
         from draws where r >= 0.15
       ), renewed as (
         -- About one in ten current certificates renewed an older one, which is kept as superseded.
         select user_id, area_id, area_name, r, expires_on - 1095 + 30 as expires_on, true as old
         from rows where r >= 0.37 and r < 0.45 and expires_on - 1095 + 30 > current_date - 1000
         union all select user_id, area_id, area_name, r, expires_on, false from rows
       )
       insert into certificates (number, user_id, company_id, area_id, status, issued_on, expires_on, holder_name, area_name, pdf, pdf_sha256, revoked_at, revoked_reason, superseded_at, superseded_reason)
       select 'PW-BENCH-' || n, user_id, ?, area_id,
         case when old then 'superseded' when r >= 0.97 then 'revoked' else 'valid' end,
         expires_on - 1095, expires_on, 'Bench Member', area_name,
         convert_to('bench placeholder ' || n, 'UTF8'), encode(sha256(convert_to('bench placeholder ' || n, 'UTF8')), 'hex'),
         case when r >= 0.97 and not old then now() end, case when r >= 0.97 and not old then 'bench' end,
         case when old then now() end, case when old then 'renewal' end
       from (select renewed.*, row_number() over () as n from renewed) numbered`,
      [company.id, company.id],
    );
  });
  await knex.raw('analyze');
  const counts = await knex('certificates').where({ company_id: company.id }).count('* as n').first();
  return { companyId: company.id as string, certificates: Number(counts?.n ?? 0) };
}

/** Median of `runs` sequential GETs (after a few warm-ups), with the answer checked each time. */
export async function timeReadiness(url: string, cookie: string, runs = 50): Promise<{ medianMs: number; total: number }> {
  let total = 0;
  const once = async () => {
    const started = performance.now();
    const res = await fetch(url, { headers: { cookie, accept: 'application/json' } });
    const body = (await res.json()) as { total?: number; rows?: unknown[] };
    const elapsed = performance.now() - started;
    if (res.status !== 200 || !Array.isArray(body.rows)) throw new Error(`readiness answered ${res.status}: ${JSON.stringify(body).slice(0, 200)}`);
    total = body.total ?? 0;
    return elapsed;
  };
  for (let i = 0; i < 5; i++) await once();
  const times: number[] = [];
  for (let i = 0; i < runs; i++) times.push(await once());
  return { medianMs: +median(times).toFixed(1), total };
}
