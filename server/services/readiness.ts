import type { Knex } from 'knex';
import { stringify } from 'csv-stringify/sync';
import {
  RENEWAL_WINDOW_DAYS,
  cellStatuses,
  type CellStatus,
  type ReadinessArea,
  type ReadinessFilters,
  type ReadinessResponse,
  type ReadinessRow,
  type TrendsResponse,
} from '../../shared/readiness';
import { badRequest } from '../middleware/errors';

/*
 * Readiness rules (one place; the job check, reminders and charts use the same ones).
 *
 * - "Today" is the calendar day in the company's time zone (companies.time_zone, an IANA name,
 *   'UTC' unless set). A certificate's expires_on is its last valid day, inclusive.
 * - A member is anyone holding the crew role in the company. Their certificates count wherever they
 *   were issued: competence belongs to the person.
 * - In force on day D: a certificate with status 'valid' (neither revoked nor superseded) with
 *   expires_on >= D. (Its issue date is not compared: certificates are dated in UTC, so one issued
 *   this evening in Chicago can carry tomorrow's date, and it is in force all the same.) The best one is the one that runs longest, so a renewal
 *   that overlaps an older certificate wins.
 * - current: in force, with expires_on more than 90 days after today.
 * - expiring: in force, with expires_on within the next 90 days inclusive (today .. today + 90).
 *   A certificate on its last day is expiring, not expired.
 * - expired: nothing in force, but a certificate that was not revoked has run out (expires_on < today).
 * - none: never certified, or only revoked certificates.
 */

export function isValidTimeZone(timeZone: string): boolean {
  try {
    new Intl.DateTimeFormat('en-US', { timeZone });
    return true;
  } catch {
    return false;
  }
}

/** The calendar day (YYYY-MM-DD) and hour at `now` in a time zone. */
export function zonedNow(timeZone: string, now = new Date()): { date: string; hour: number } {
  const parts = Object.fromEntries(
    new Intl.DateTimeFormat('en-US', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', hourCycle: 'h23' })
      .formatToParts(now)
      .map((p) => [p.type, p.value]),
  );
  return { date: `${parts.year}-${parts.month}-${parts.day}`, hour: Number(parts.hour) };
}

export const todayIn = (timeZone: string, now = new Date()) => zonedNow(timeZone, now).date;

/** Calendar arithmetic on YYYY-MM-DD strings, free of any time zone. */
export function addDays(date: string, days: number): string {
  const [y, m, d] = date.split('-').map(Number);
  return new Date(Date.UTC(y, m - 1, d + days)).toISOString().slice(0, 10);
}

export function daysBetween(from: string, to: string): number {
  const ms = (s: string) => {
    const [y, m, d] = s.split('-').map(Number);
    return Date.UTC(y, m - 1, d);
  };
  return Math.round((ms(to) - ms(from)) / 86_400_000);
}

/** The last day of the month `offset` months after the month of `date`. */
export function monthEnd(date: string, offset = 0): string {
  const [y, m] = date.split('-').map(Number);
  return new Date(Date.UTC(y, m + offset, 0)).toISOString().slice(0, 10);
}

/** ISO 8601 week of a calendar day, e.g. 2027-W09. */
export function isoWeek(date: string): string {
  const [y, m, d] = date.split('-').map(Number);
  const day = new Date(Date.UTC(y, m - 1, d));
  const weekday = day.getUTCDay() || 7;
  day.setUTCDate(day.getUTCDate() + 4 - weekday);
  const yearStart = Date.UTC(day.getUTCFullYear(), 0, 1);
  const week = Math.ceil(((day.getTime() - yearStart) / 86_400_000 + 1) / 7);
  return `${day.getUTCFullYear()}-W${String(week).padStart(2, '0')}`;
}

export async function companyTimeZone(knex: Knex, companyId: string): Promise<string> {
  const row = await knex('companies').where({ id: companyId }).first('time_zone');
  return row?.time_zone ?? 'UTC';
}

export async function companyClock(knex: Knex, companyId: string, now = new Date()) {
  const timeZone = await companyTimeZone(knex, companyId);
  return { timeZone, today: todayIn(timeZone, now) };
}

export async function setCompanyTimeZone(knex: Knex, companyId: string, timeZone: string) {
  if (!isValidTimeZone(timeZone)) {
    throw badRequest(`timeZone: "${timeZone}" is not a time zone name we know; use an IANA name such as America/Chicago or UTC.`, [
      { field: 'timeZone', message: `timeZone: "${timeZone}" is not a known IANA time zone name (e.g. America/Chicago, Europe/London, UTC)` },
    ]);
  }
  // Stored in the canonical spelling, so "america/chicago" becomes "America/Chicago".
  const canonical = new Intl.DateTimeFormat('en-US', { timeZone }).resolvedOptions().timeZone;
  await knex('companies').where({ id: companyId }).update({ time_zone: canonical, updated_at: knex.fn.now() });
  return canonical;
}

export async function listAreas(knex: Knex): Promise<ReadinessArea[]> {
  return knex('areas').orderBy('sort_order').select('id', 'name');
}

/** The areas named (in the catalogue's order), or every area; an unknown id is a 400 naming the field. */
export async function resolveAreas(knex: Knex, wanted: string[] | undefined, field: string, catalogue?: ReadinessArea[]): Promise<ReadinessArea[]> {
  const all = catalogue ?? (await listAreas(knex));
  if (!wanted?.length) return all;
  const known = new Set(all.map((a) => a.id));
  const unknown = wanted.map((id, i) => ({ id, i })).filter(({ id }) => !known.has(id));
  if (unknown.length) {
    const fields = unknown.map(({ id, i }) => {
      const name = field === 'area' ? field : `${field}.${i}`;
      return { field: name, message: `${name}: "${id}" is not a competency area (known: ${all.map((a) => a.id).join(', ') || 'none loaded'})` };
    });
    throw badRequest(fields.map((f) => f.message).join('; '), fields);
  }
  const picked = new Set(wanted);
  return all.filter((a) => picked.has(a.id));
}

interface GridOptions {
  companyId: string;
  today: string;
  areaIds: string[];
  crew?: string | null;
  search?: string;
  statuses?: CellStatus[];
  memberIds?: string[];
}

type Sql = { sql: string; bindings: Knex.RawBinding[] };

/** The company's crew members after the crew, name and id filters: CTE `members(user_id, name, crew)`. */
function membersCte(o: GridOptions): Sql {
  const filters: string[] = [];
  const bindings: Knex.RawBinding[] = [o.companyId];
  if (o.crew) {
    filters.push('and m.crew = ?');
    bindings.push(o.crew);
  }
  if (o.search) {
    filters.push("and u.name ilike ? escape '\\'");
    bindings.push(`%${o.search.replace(/[\\%_]/g, (c) => `\\${c}`)}%`);
  }
  if (o.memberIds) {
    filters.push('and m.user_id = any(?::uuid[])');
    bindings.push(`{${o.memberIds.join(',')}}`);
  }
  return {
    sql: `members as (
      select m.user_id, u.name, m.crew
      from memberships m join users u on u.id = m.user_id
      where m.company_id = ? and m.roles @> array['crew']::text[] and u.disabled_at is null
      ${filters.join(' ')}
    )`,
    bindings,
  };
}

/**
 * The certificates of the people in CTE `from`, one row per person: for each listed area (by its
 * index in the shown areas) the latest expiry in force (f<i>) and the latest lapsed one (l<i>).
 * One pass, one conditional aggregate per area: no cross join of people and areas.
 */
function heldCte(name: string, from: string, areas: { id: string; index: number }[], today: string): Sql {
  const columns: string[] = [];
  const bindings: Knex.RawBinding[] = [];
  for (const { id, index } of areas) {
    columns.push(
      `max(c.expires_on) filter (where c.area_id = ? and c.status = 'valid' and c.expires_on >= ?::date) as f${index}`,
      `max(c.expires_on) filter (where c.area_id = ? and c.status <> 'revoked' and c.expires_on < ?::date) as l${index}`,
    );
    bindings.push(id, today, id, today);
  }
  bindings.push(`{${areas.map((a) => a.id).join(',')}}`);
  return {
    sql: `${name} as (
      select c.user_id${columns.map((col) => `, ${col}`).join('')}
      from certificates c
      where c.user_id in (select user_id from ${from}) and c.area_id = any(?::text[])
      group by c.user_id
    )`,
    bindings,
  };
}

/** Status (s<i>) and date (e<i>) columns from a held CTE aliased `h`. */
function cellColumns(indexes: number[], today: string): Sql {
  return {
    sql: indexes
      .map(
        (i) => `, case when h.f${i} is not null then (case when h.f${i} <= ?::date + ${RENEWAL_WINDOW_DAYS} then 'expiring' else 'current' end)
            when h.l${i} is not null then 'expired' else 'none' end as s${i}, coalesce(h.f${i}, h.l${i})::text as e${i}`,
      )
      .join(''),
    bindings: indexes.map(() => today),
  };
}

/** `where` clause keeping rows with any of the given cells in one of the statuses. */
function statusWhere(indexes: number[], statuses: CellStatus[] | undefined): Sql {
  if (!statuses?.length || !indexes.length) return { sql: '', bindings: [] };
  // The statuses were checked against the fixed list, so this array literal holds plain words.
  const literal = `{${statuses.join(',')}}`;
  return { sql: `where ${indexes.map((i) => `g.s${i} = any(?::text[])`).join(' or ')}`, bindings: indexes.map(() => literal) };
}

/** Every matching member with every shown cell, as CTE `g` (for the CSV, the job check, the digest). */
function gridQuery(o: GridOptions): Sql {
  const indexes = o.areaIds.map((_, i) => i);
  const members = membersCte(o);
  const held = heldCte('held', 'members', o.areaIds.map((id, index) => ({ id, index })), o.today);
  const cells = cellColumns(indexes, o.today);
  const where = statusWhere(indexes, o.statuses);
  return {
    sql: `with ${members.sql}, ${held.sql},
    g as (
      select * from (
        select mb.user_id, mb.name, mb.crew${cells.sql}
        from members mb left join held h on h.user_id = mb.user_id
      ) g ${where.sql}
    )`,
    bindings: [...members.bindings, ...held.bindings, ...cells.bindings, ...where.bindings],
  };
}

/**
 * One page of the matrix in one statement, in two steps: rank the members on only what the sort
 * and the status filter need (nothing, for a name or crew sort without a status filter; one area's
 * dates for an area sort), take the page, then read every shown cell for the page's people only.
 */
function pageQuery(o: GridOptions, sortIndex: number | null, order: string, limit: number, offset: number): Sql {
  const members = membersCte(o);
  const keyIndexes = o.statuses?.length ? o.areaIds.map((_, i) => i) : sortIndex === null ? [] : [sortIndex];
  const parts: string[] = [members.sql];
  const bindings: Knex.RawBinding[] = [...members.bindings];
  let ranked = 'select mb.user_id, mb.name, mb.crew from members mb';
  if (keyIndexes.length) {
    const keys = heldCte('keys', 'members', keyIndexes.map((index) => ({ id: o.areaIds[index], index })), o.today);
    const keyCells = cellColumns(keyIndexes, o.today);
    const where = statusWhere(keyIndexes, o.statuses);
    parts.push(keys.sql);
    bindings.push(...keys.bindings);
    ranked = `select * from (
        select mb.user_id, mb.name, mb.crew${keyCells.sql} from members mb left join keys h on h.user_id = mb.user_id
      ) g ${where.sql}`;
    bindings.push(...keyCells.bindings, ...where.bindings);
  }
  parts.push(`paged as (
      select g.user_id, g.name, g.crew, count(*) over () as total from (${ranked}) g ${order} limit ? offset ?
    )`);
  bindings.push(limit, offset);
  const held = heldCte('held', 'paged', o.areaIds.map((id, index) => ({ id, index })), o.today);
  const cells = cellColumns(o.areaIds.map((_, i) => i), o.today);
  parts.push(held.sql);
  bindings.push(...held.bindings);
  return {
    sql: `with ${parts.join(',\n    ')}
    select * from (
      select mb.user_id, mb.name, mb.crew, mb.total${cells.sql} from paged mb left join held h on h.user_id = mb.user_id
    ) g ${order}`,
    bindings: [...bindings, ...cells.bindings],
  };
}

type GridRow = { user_id: string; name: string; crew: string | null } & Record<string, string | null>;

function toRow(r: GridRow, areas: ReadinessArea[]): ReadinessRow {
  return {
    memberId: r.user_id,
    name: r.name,
    crew: r.crew,
    cells: areas.map((a, i) => ({ area: a.id, status: (r[`s${i}`] as CellStatus | null) ?? 'none', expiresOn: r[`e${i}`] ?? null })),
  };
}

/** The sort as SQL over a relation aliased `g`, and the index of the area sorted by (if any). */
function orderClause(sort: string, order: 'asc' | 'desc', areas: ReadinessArea[]): { sql: string; areaIndex: number | null } {
  const dir = order === 'desc' ? 'desc' : 'asc';
  if (sort === 'name') return { sql: `order by g.name ${dir}, g.user_id`, areaIndex: null };
  if (sort === 'crew') return { sql: `order by g.crew ${dir} nulls last, g.name, g.user_id`, areaIndex: null };
  const index = areas.findIndex((a) => a.id === sort);
  if (index < 0) {
    const choices = ['name', 'crew', ...areas.map((a) => a.id)].join(', ');
    throw badRequest(`sort: "${sort}" is not a column to sort by (use ${choices}).`, [{ field: 'sort', message: `sort: must be one of ${choices}` }]);
  }
  // Soonest expiry first when ascending; cells with no certificate at all go last either way.
  return { sql: `order by g.e${index} ${dir} nulls last, g.name, g.user_id`, areaIndex: index };
}

/** The company's clock, the area catalogue and the crew names in one round trip (every matrix request needs them). */
async function clockAndAreas(knex: Knex, companyId: string, now: Date) {
  const row = (
    await knex.raw(
      `select (select time_zone from companies where id = ?) as time_zone,
              coalesce((select json_agg(json_build_object('id', id, 'name', name) order by sort_order) from areas), '[]') as areas,
              coalesce((select json_agg(crew order by crew) from (
                select distinct crew from memberships where company_id = ? and crew is not null and roles @> array['crew']::text[]) c), '[]') as crews`,
      [companyId, companyId],
    )
  ).rows[0] as { time_zone: string | null; areas: ReadinessArea[]; crews: string[] };
  const timeZone = row.time_zone ?? 'UTC';
  return { timeZone, today: todayIn(timeZone, now), areas: row.areas, crews: row.crews };
}

export async function readinessPage(
  knex: Knex,
  companyId: string,
  q: ReadinessFilters & { page: number; pageSize: number },
  now = new Date(),
): Promise<ReadinessResponse> {
  const clock = await clockAndAreas(knex, companyId, now);
  const { timeZone, today } = clock;
  const areas = await resolveAreas(knex, q.area, 'area', clock.areas);
  const order = orderClause(q.sort, q.order, areas);
  const options: GridOptions = { companyId, today, areaIds: areas.map((a) => a.id), crew: q.crew, search: q.search, statuses: q.status };
  const page = pageQuery(options, order.areaIndex, order.sql, q.pageSize, (q.page - 1) * q.pageSize);
  const result = await knex.raw(page.sql, page.bindings);
  const rows = result.rows as GridRow[];
  let total = Number(rows[0]?.total ?? 0);
  if (!rows.length && q.page > 1) {
    // Past the last page: still tell the client how many rows there are.
    const all = gridQuery(options);
    total = Number((await knex.raw(`${all.sql} select count(*) as total from g`, all.bindings)).rows[0].total);
  }
  return { areas, rows: rows.map((r) => toRow(r, areas)), total, page: q.page, pageSize: q.pageSize, today, timeZone, crews: clock.crews };
}

/** Every row matching the filters, for the CSV export and the job check. */
export async function readinessAll(knex: Knex, companyId: string, o: Omit<GridOptions, 'companyId'> & { sort?: string; order?: 'asc' | 'desc'; areas: ReadinessArea[] }) {
  const { sql, bindings } = gridQuery({ ...o, companyId });
  const order = orderClause(o.sort ?? 'name', o.order ?? 'asc', o.areas);
  const result = await knex.raw(`${sql} select g.* from g ${order.sql}`, bindings);
  return (result.rows as GridRow[]).map((r) => toRow(r, o.areas));
}

/** Cells per status for each area, over the whole crew (the figures above the matrix). */
export async function readinessSummary(knex: Knex, companyId: string, today: string, areas: ReadinessArea[]) {
  const { sql, bindings } = gridQuery({ companyId, today, areaIds: areas.map((a) => a.id) });
  const columns = areas.flatMap((_, i) => cellStatuses.map((s) => `count(*) filter (where g.s${i} = '${s}')::int as a${i}_${s}`));
  const row = (await knex.raw(`${sql} select count(*)::int as members${columns.map((c) => `, ${c}`).join('')} from g`, bindings)).rows[0];
  const byArea = areas.map((a, i) => ({ area: a.id, ...Object.fromEntries(cellStatuses.map((s) => [s, row[`a${i}_${s}`] as number])) }) as { area: string } & Record<CellStatus, number>);
  const totals = Object.fromEntries(cellStatuses.map((s) => [s, byArea.reduce((sum, a) => sum + a[s], 0)])) as Record<CellStatus, number>;
  return { members: row.members as number, totals, byArea };
}

const STATUS_WORDS: Record<CellStatus, string> = { current: 'Current', expiring: 'Renew soon', expired: 'Lapsed', none: 'Not held' };

/** Spreadsheet programs run cells that start with these as formulas; a leading apostrophe keeps them text. */
const safeCell = (value: string | null) => (value && /^[=+\-@\t\r]/.test(value) ? `'${value}` : (value ?? ''));

export async function readinessCsv(knex: Knex, companyId: string, q: ReadinessFilters, now = new Date()) {
  const clock = await clockAndAreas(knex, companyId, now);
  const { timeZone, today } = clock;
  const areas = await resolveAreas(knex, q.area, 'area', clock.areas);
  const rows = await readinessAll(knex, companyId, { today, areaIds: areas.map((a) => a.id), crew: q.crew, search: q.search, statuses: q.status, sort: q.sort, order: q.order, areas });
  const header = ['Member', 'Crew', ...areas.flatMap((a) => [`${a.name}: status`, `${a.name}: valid until / lapsed after`])];
  const records = rows.map((r) => [safeCell(r.name), safeCell(r.crew), ...r.cells.flatMap((c) => [STATUS_WORDS[c.status], c.expiresOn ?? ''])]);
  const csv = stringify([header, ...records]);
  return { csv, fileName: `crew-readiness-${today}.csv`, today, timeZone };
}

/** The company's crew members (one binding: the company id); the same set the matrix shows. */
const CREW_MEMBERS_SQL = `select m.user_id from memberships m join users u on u.id = m.user_id
  where m.company_id = ? and m.roles @> array['crew']::text[] and u.disabled_at is null`;

export async function tableExists(knex: Knex, table: string) {
  const row = (await knex.raw('select to_regclass(?) as t', [`public.${table}`])).rows[0];
  return Boolean(row?.t);
}

export async function readinessTrends(knex: Knex, companyId: string, now = new Date()): Promise<TrendsResponse> {
  const { timeZone, today } = await companyClock(knex, companyId, now);
  const areas = await listAreas(knex);
  const areaIds = areas.map((a) => a.id);
  // Month ends of the past 11 months, then today.
  const dates = [...Array.from({ length: 11 }, (_, i) => monthEnd(today, i - 11)), today];
  const months = Array.from({ length: 12 }, (_, i) => monthEnd(today, i).slice(0, 7));

  const membersCount = Number((await knex.raw(`select count(*) as n from (${CREW_MEMBERS_SQL}) x`, [companyId])).rows[0].n);

  // Historical share: any certificate that was not revoked and covered the day (a superseded one did, until replaced).
  const share = await knex.raw(
    `with members as (${CREW_MEMBERS_SQL}), days as (select d::date as d from jsonb_array_elements_text(?::jsonb) as x(d))
     select days.d::text as d, c.area_id, count(distinct c.user_id)::int as n
     from days
     join certificates c on c.issued_on <= days.d and c.expires_on >= days.d and c.status <> 'revoked'
       and (c.superseded_at is null or c.superseded_at::date >= days.d)
     join members mb on mb.user_id = c.user_id
     group by days.d, c.area_id`,
    [companyId, JSON.stringify(dates)],
  );
  const shareMap = new Map<string, number>(share.rows.map((r: { d: string; area_id: string; n: number }) => [`${r.d}|${r.area_id}`, r.n]));

  // Expiries ahead: the best in-force certificate per member and area, by the month it runs out.
  const ahead = await knex.raw(
    `with members as (${CREW_MEMBERS_SQL}), best as (
       select c.user_id, c.area_id, max(c.expires_on) as expires_on
       from certificates c join members mb on mb.user_id = c.user_id
       where c.status = 'valid' and c.expires_on >= ?::date
       group by c.user_id, c.area_id
     )
     select to_char(expires_on, 'YYYY-MM') as month, area_id, count(*)::int as n
     from best where expires_on <= ?::date
     group by 1, 2`,
    [companyId, today, monthEnd(today, 11)],
  );
  const aheadMap = new Map<string, number>(ahead.rows.map((r: { month: string; area_id: string; n: number }) => [`${r.month}|${r.area_id}`, r.n]));

  let drillActivity: TrendsResponse['drillActivity'] = null;
  if (await tableExists(knex, 'drill_attempts')) {
    // Weeks start on Monday, in the company's time zone.
    const firstWeek = addDays(today, -((new Date(`${today}T00:00:00Z`).getUTCDay() + 6) % 7) - 7 * 11);
    const weeks = Array.from({ length: 12 }, (_, i) => addDays(firstWeek, 7 * i));
    const activity = await knex.raw(
      `select to_char(date_trunc('week', (d.submitted_at at time zone ?))::date, 'YYYY-MM-DD') as week, count(*)::int as n
       from drill_attempts d
       join memberships m on m.user_id = d.user_id and m.company_id = ? and m.roles @> array['crew']::text[]
       where d.submitted_at is not null and (d.submitted_at at time zone ?)::date >= ?::date
       group by 1`,
      [timeZone, companyId, timeZone, firstWeek],
    );
    const byWeek = new Map<string, number>(activity.rows.map((r: { week: string; n: number }) => [r.week, r.n]));
    drillActivity = { weeks, attempts: weeks.map((w) => byWeek.get(w) ?? 0) };
  }

  const summary = await readinessSummary(knex, companyId, today, areas);
  return {
    today,
    timeZone,
    areas,
    members: membersCount,
    summary: { totals: summary.totals, byArea: summary.byArea },
    inForceShare: {
      dates,
      series: areaIds.map((area) => ({
        area,
        percent: dates.map((d) => (membersCount ? Math.round((1000 * (shareMap.get(`${d}|${area}`) ?? 0)) / membersCount) / 10 : 0)),
      })),
    },
    expiriesByMonth: { months, series: areaIds.map((area) => ({ area, counts: months.map((m) => aheadMap.get(`${m}|${area}`) ?? 0) })) },
    drillActivity,
  };
}
