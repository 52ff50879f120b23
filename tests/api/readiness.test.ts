import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parse } from 'csv-parse/sync';
import type request from 'supertest';
import { createTestApp, type TestApp } from '../helpers/app';
import { signedIn, type TestAgent } from '../helpers/agent';
import { createCompany, createUser } from '../helpers/factory';
import { insertCertificate, setCrew } from '../helpers/certificates';
import { syncContent } from '../../server/services/content-sync';
import { addDays, isoWeek, readinessPage, todayIn, zonedNow } from '../../server/services/readiness';
import { runJobCheck } from '../../server/services/job-checks';
import type { ReadinessResponse, ReadinessRow } from '../../shared/readiness';

/**
 * Readiness matrix, job check and assignments against a real database. Dates are built relative to
 * "today" in each company's time zone, the same day the server works from.
 */
let t: TestApp;
let manager: TestAgent;
let admin: TestAgent;
let crewAgent: TestAgent;
let otherManager: TestAgent;
const ids = new Map<string, string>();
let companyA: string;
let companyB: string;
let companyC: string;
const ZONE_A = 'America/Chicago';
let todayA: string;
let todayC: string;

const fieldsOf = (res: request.Response) => (res.body.error?.fields ?? []).map((f: { field: string }) => f.field);
const cell = (row: ReadinessRow | undefined, area: string) => row?.cells.find((c) => c.area === area);
const rowOf = (body: ReadinessResponse, name: string) => body.rows.find((r) => r.name === name);

async function member(companyId: string, name: string, crew: string | null, roles: ('crew' | 'manager' | 'admin')[] = ['crew']) {
  const user = await createUser(t.knex, { companyId, roles, name });
  if (crew) await setCrew(t.knex, user.id, companyId, crew);
  ids.set(name, user.id);
  return user;
}

beforeAll(async () => {
  t = await createTestApp();
  await syncContent(t.knex);

  companyA = (await createCompany(t.knex, 'Harrowgate Flue Testing')).id;
  await t.knex('companies').where({ id: companyA }).update({ time_zone: ZONE_A });
  todayA = todayIn(ZONE_A);
  const d = (n: number) => addDays(todayA, n);
  const cert = (name: string, expiresOn: string, status: 'valid' | 'revoked' | 'superseded' = 'valid', area = 'particulate') =>
    insertCertificate(t.knex, { userId: ids.get(name)!, companyId: companyA, area, issuedOn: addDays(expiresOn, -1000), expiresOn, status });

  await member(companyA, 'Ada Lastday', 'West crew');
  await cert('Ada Lastday', d(0));
  await member(companyA, 'Bram Yesterday', 'West crew');
  await cert('Bram Yesterday', d(-1));
  await member(companyA, 'Cleo Ninety', 'East crew');
  await cert('Cleo Ninety', d(90));
  await member(companyA, 'Dov Ninetyone', 'East crew');
  await cert('Dov Ninetyone', d(91));
  await member(companyA, 'Esme Renewed', 'East crew');
  await cert('Esme Renewed', d(10));
  await cert('Esme Renewed', d(1000));
  await member(companyA, 'Fenn Superseded', 'East crew');
  await cert('Fenn Superseded', d(20), 'superseded');
  await cert('Fenn Superseded', d(1100));
  await member(companyA, 'Gale Revoked', 'West crew');
  await cert('Gale Revoked', d(500), 'revoked');
  await member(companyA, 'Hollis Lapsed', 'West crew');
  await cert('Hollis Lapsed', d(-400));
  await cert('Hollis Lapsed', d(300), 'revoked');
  await member(companyA, 'Ines Never', null);
  await member(companyA, '=Rowan Formula', 'West crew');
  await cert('=Rowan Formula', d(400), 'valid', 'flow-moisture');

  const managerUser = await member(companyA, 'Mona Overseer', null, ['manager']);
  manager = await signedIn(t.app, managerUser.email, managerUser.password);
  const adminUser = await member(companyA, 'Aldo Keeper', null, ['admin']);
  admin = await signedIn(t.app, adminUser.email, adminUser.password);
  crewAgent = await signedIn(t.app, (await t.knex('users').where({ id: ids.get('Ada Lastday') }).first()).email, 'correct horse battery');

  companyB = (await createCompany(t.knex, 'Oxbow Emissions Lab')).id;
  await member(companyB, 'Zeno Elsewhere', 'B crew');
  const otherManagerUser = await member(companyB, 'Olga Elsewhere', null, ['manager']);
  otherManager = await signedIn(t.app, otherManagerUser.email, otherManagerUser.password);

  // Company C: the job-check scenario, in UTC.
  companyC = (await createCompany(t.knex, 'Quarrybank Stack Services')).id;
  todayC = todayIn('UTC');
  const c = (n: number) => addDays(todayC, n);
  const certC = async (name: string, area: string, expiresIn: number) =>
    insertCertificate(t.knex, { userId: ids.get(name)!, companyId: companyC, area, issuedOn: c(expiresIn - 1000), expiresOn: c(expiresIn) });
  for (const [name, flow, particulate] of [
    ['Quinn Ready', 400, 450],
    ['Rene Renewnow', 400, 50],
    ['Lars Laterwindow', 400, 150],
    ['Mika Mixed', 50, 150],
    ['Nell Lapsed', 400, -5],
  ] as const) {
    await member(companyC, name, 'South');
    await certC(name, 'flow-moisture', flow);
    await certC(name, 'particulate', particulate);
  }
  await member(companyC, 'Omar Nothing', 'South');
  await member(companyC, 'Pia Northern', 'North');
  await certC('Pia Northern', 'flow-moisture', 400);
  await certC('Pia Northern', 'particulate', 400);
});
afterAll(() => t?.close());

describe('status rules', () => {
  it("counts days in the company's time zone, not the server's", () => {
    // 03:30 UTC on 1 March is still the evening of 28 February in Chicago.
    const instant = new Date('2027-03-01T03:30:00Z');
    expect(zonedNow('America/Chicago', instant)).toEqual({ date: '2027-02-28', hour: 21 });
    expect(todayIn('UTC', instant)).toBe('2027-03-01');
    expect(todayIn('Asia/Tokyo', new Date('2027-02-28T16:00:00Z'))).toBe('2027-03-01');
    expect(isoWeek('2027-01-01')).toBe('2026-W53');
    expect(isoWeek('2027-03-01')).toBe('2027-W09');
  });

  it('keeps a certificate on its last day expiring in Chicago while UTC has moved on', async () => {
    const instant = new Date('2031-03-01T03:30:00Z');
    const holder = await member(companyA, 'Tova Evening', 'Night crew');
    await insertCertificate(t.knex, { userId: holder.id, companyId: companyA, area: 'gas-analysis', issuedOn: '2028-02-28', expiresOn: '2031-02-28' });
    const page = await readinessPage(t.knex, companyA, { page: 1, pageSize: 50, sort: 'name', order: 'asc', crew: 'Night crew', area: ['gas-analysis'] }, instant);
    expect(page.today).toBe('2031-02-28');
    expect(cell(page.rows[0], 'gas-analysis')).toEqual({ area: 'gas-analysis', status: 'expiring', expiresOn: '2031-02-28' });
    await t.knex('companies').where({ id: companyA }).update({ time_zone: 'UTC' });
    const utc = await readinessPage(t.knex, companyA, { page: 1, pageSize: 50, sort: 'name', order: 'asc', crew: 'Night crew', area: ['gas-analysis'] }, instant);
    await t.knex('companies').where({ id: companyA }).update({ time_zone: ZONE_A });
    expect(cell(utc.rows[0], 'gas-analysis')?.status).toBe('expired');
    await t.knex('memberships').where({ user_id: holder.id }).delete();
  });
});

describe('GET /api/readiness', () => {
  it('works out each cell from the best certificate, at every edge', async () => {
    const res = await manager.get('/api/readiness?pageSize=50').expect(200);
    const body = res.body as ReadinessResponse;
    expect(body.timeZone).toBe(ZONE_A);
    expect(body.today).toBe(todayA);
    expect(body.areas.map((a) => a.id)).toEqual(['flow-moisture', 'particulate', 'gas-analysis', 'emission-rates', 'monitor-audits', 'ambient-conversions']);
    const d = (n: number) => addDays(todayA, n);
    const expectCell = (name: string, status: string, expiresOn: string | null) =>
      expect(cell(rowOf(body, name), 'particulate'), name).toEqual({ area: 'particulate', status, expiresOn });
    expectCell('Ada Lastday', 'expiring', d(0));
    expectCell('Bram Yesterday', 'expired', d(-1));
    expectCell('Cleo Ninety', 'expiring', d(90));
    expectCell('Dov Ninetyone', 'current', d(91));
    expectCell('Esme Renewed', 'current', d(1000));
    expectCell('Fenn Superseded', 'current', d(1100));
    expectCell('Gale Revoked', 'none', null);
    expectCell('Hollis Lapsed', 'expired', d(-400));
    expectCell('Ines Never', 'none', null);
    // Only crew members are rows: the manager-only and admin-only members are not.
    expect(body.rows.map((r) => r.name)).not.toContain('Mona Overseer');
    expect(body.rows.map((r) => r.name)).not.toContain('Aldo Keeper');
    expect(body.rows.map((r) => r.name)).not.toContain('Zeno Elsewhere');
    expect(body.total).toBe(10);
    expect(body.crews).toEqual(['East crew', 'West crew']);
  });

  it('pages on the server with a stable order', async () => {
    const first = (await manager.get('/api/readiness?page=1&pageSize=4').expect(200)).body as ReadinessResponse;
    const third = (await manager.get('/api/readiness?page=3&pageSize=4').expect(200)).body as ReadinessResponse;
    expect(first.total).toBe(10);
    expect(first.rows).toHaveLength(4);
    expect(third.rows).toHaveLength(2);
    const names = (await manager.get('/api/readiness?pageSize=50').expect(200)).body.rows.map((r: ReadinessRow) => r.name);
    expect(first.rows.map((r) => r.name)).toEqual(names.slice(0, 4));
    expect(third.rows.map((r) => r.name)).toEqual(names.slice(8, 10));
    const second = (await manager.get('/api/readiness?page=2&pageSize=4').expect(200)).body as ReadinessResponse;
    expect(new Set([...first.rows, ...second.rows, ...third.rows].map((r) => r.memberId)).size).toBe(10);
    const beyond = (await manager.get('/api/readiness?page=9&pageSize=4').expect(200)).body as ReadinessResponse;
    expect(beyond.rows).toEqual([]);
    expect(beyond.total).toBe(10);
  });

  it("sorts by an area's expiry, soonest first, with nothing-held last either way", async () => {
    const asc = (await manager.get('/api/readiness?sort=particulate&order=asc&pageSize=50').expect(200)).body as ReadinessResponse;
    const dates = asc.rows.map((r) => cell(r, 'particulate')!.expiresOn);
    expect(asc.rows[0].name).toBe('Hollis Lapsed');
    expect(asc.rows[1].name).toBe('Bram Yesterday');
    expect(asc.rows[2].name).toBe('Ada Lastday');
    const dated = dates.filter(Boolean) as string[];
    expect(dated).toEqual([...dated].sort());
    expect(dates.slice(dated.length).every((x) => x === null)).toBe(true);
    const desc = (await manager.get('/api/readiness?sort=particulate&order=desc&pageSize=50').expect(200)).body as ReadinessResponse;
    expect(desc.rows[0].name).toBe('Fenn Superseded');
    expect(cell(desc.rows.at(-1), 'particulate')!.expiresOn).toBeNull();
    // Paging a filtered, area-sorted list: the filter and the sort both run before the page is cut.
    const secondLapsed = (await manager.get('/api/readiness?status=expired&area=particulate&sort=particulate&pageSize=1&page=2').expect(200)).body as ReadinessResponse;
    expect(secondLapsed.total).toBe(2);
    expect(secondLapsed.rows.map((r) => r.name)).toEqual(['Bram Yesterday']);
    const byCrew = (await manager.get('/api/readiness?sort=crew&order=desc&pageSize=50').expect(200)).body as ReadinessResponse;
    expect(byCrew.rows[0].crew).toBe('West crew');
    expect(byCrew.rows.at(-1)!.crew).toBeNull();
  });

  it('filters by crew, area, status and name', async () => {
    const west = (await manager.get('/api/readiness?crew=West%20crew&pageSize=50').expect(200)).body as ReadinessResponse;
    expect(west.rows.map((r) => r.name).sort()).toEqual(['=Rowan Formula', 'Ada Lastday', 'Bram Yesterday', 'Gale Revoked', 'Hollis Lapsed'].sort());
    const expiring = (await manager.get('/api/readiness?area=particulate&status=expiring&pageSize=50').expect(200)).body as ReadinessResponse;
    expect(expiring.areas.map((a) => a.id)).toEqual(['particulate']);
    expect(expiring.rows.map((r) => r.name).sort()).toEqual(['Ada Lastday', 'Cleo Ninety']);
    expect(expiring.total).toBe(2);
    const lapsedOrNone = (await manager.get('/api/readiness?area=particulate,flow-moisture&status=expired&status=none&pageSize=50').expect(200)).body as ReadinessResponse;
    expect(lapsedOrNone.areas.map((a) => a.id)).toEqual(['flow-moisture', 'particulate']);
    expect(lapsedOrNone.rows.map((r) => r.name)).toContain('Gale Revoked');
    const search = (await manager.get('/api/readiness?search=renew').expect(200)).body as ReadinessResponse;
    expect(search.rows.map((r) => r.name)).toEqual(['Esme Renewed']);
    const wildcard = (await manager.get('/api/readiness?search=%25').expect(200)).body as ReadinessResponse;
    expect(wildcard.total).toBe(0);
  });

  it('refuses unknown sorts, areas and statuses, naming the field', async () => {
    const sort = await manager.get('/api/readiness?sort=shoe-size').expect(400);
    expect(fieldsOf(sort)).toEqual(['sort']);
    const area = await manager.get('/api/readiness?area=particulate,underwater-welding').expect(400);
    expect(fieldsOf(area)).toEqual(['area']);
    expect(area.body.error.message).toMatch(/underwater-welding/);
    const status = await manager.get('/api/readiness?status=brilliant').expect(400);
    expect(fieldsOf(status)[0]).toMatch(/^status/);
    const size = await manager.get('/api/readiness?pageSize=5000').expect(400);
    expect(fieldsOf(size)).toEqual(['pageSize']);
  });

  it('shows an admin the same matrix, and another company only its own people', async () => {
    const asAdmin = (await admin.get('/api/readiness?pageSize=50').expect(200)).body as ReadinessResponse;
    expect(asAdmin.total).toBe(10);
    const other = (await otherManager.get('/api/readiness?pageSize=50').expect(200)).body as ReadinessResponse;
    expect(other.rows.map((r) => r.name)).toEqual(['Zeno Elsewhere']);
  });

  it('answers 403 to a crew member on every manager route', async () => {
    for (const path of ['/api/readiness', '/api/readiness.csv', '/api/readiness/trends', '/api/job-checks', '/api/assignments']) {
      const res = await crewAgent.get(path);
      expect(res.status, path).toBe(403);
    }
    expect((await crewAgent.post('/api/job-checks', { areas: ['particulate'], date: todayA })).status).toBe(403);
    expect((await crewAgent.post('/api/assignments', { memberIds: [ids.get('Ada Lastday')], kind: 'exam', areaId: 'particulate', dueOn: todayA })).status).toBe(403);
  });
});

describe('GET /api/readiness.csv', () => {
  it('exports the filtered rows with a header, and keeps formula-like names as text', async () => {
    const res = await manager.get('/api/readiness.csv?crew=West%20crew&area=particulate,flow-moisture').expect(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    expect(res.headers['content-disposition']).toMatch(new RegExp(`crew-readiness-${todayA}\\.csv`));
    const records = parse(res.text) as string[][];
    expect(records[0]).toEqual(['Member', 'Crew', 'Flow and moisture: status', 'Flow and moisture: valid until / lapsed after', 'Particulate sampling: status', 'Particulate sampling: valid until / lapsed after']);
    expect(records).toHaveLength(1 + 5);
    const bram = records.find((r) => r[0] === 'Bram Yesterday')!;
    expect(bram.slice(4)).toEqual(['Lapsed', addDays(todayA, -1)]);
    const rowan = records.find((r) => r[0].includes('Rowan'))!;
    expect(rowan[0]).toBe("'=Rowan Formula");
    expect(rowan.slice(2, 4)).toEqual(['Current', addDays(todayA, 400)]);
    const filtered = parse((await manager.get('/api/readiness.csv?area=particulate&status=expiring').expect(200)).text) as string[][];
    expect(filtered.slice(1).map((r) => r[0]).sort()).toEqual(['Ada Lastday', 'Cleo Ninety']);
  });
});

describe('job check', () => {
  let managerC: TestAgent;
  beforeAll(async () => {
    const user = await member(companyC, 'Vera Planner', null, ['manager']);
    managerC = await signedIn(t.app, user.email, user.password);
  });
  const names = (list: { name: string }[]) => list.map((m) => m.name).sort();

  it('sorts members into qualified, lapsing, renewable and not qualified', async () => {
    const date = addDays(todayC, 200);
    const res = await managerC.post('/api/job-checks', { areas: ['flow-moisture', 'particulate'], date, crew: 'South' });
    expect(res.status).toBe(200);
    expect(names(res.body.qualified)).toEqual(['Quinn Ready']);
    expect(res.body.qualified[0].validUntil).toBe(addDays(todayC, 400));
    expect(names(res.body.renewable)).toEqual(['Rene Renewnow']);
    expect(res.body.renewable[0].lapses).toEqual([{ area: 'particulate', expiresOn: addDays(todayC, 50), renewalOpensOn: addDays(todayC, -40) }]);
    expect(names(res.body.lapsing)).toEqual(['Lars Laterwindow', 'Mika Mixed']);
    const lars = res.body.lapsing.find((m: { name: string }) => m.name === 'Lars Laterwindow');
    expect(lars.lapses).toEqual([{ area: 'particulate', expiresOn: addDays(todayC, 150), renewalOpensOn: addDays(todayC, 60) }]);
    expect(res.body.lapsing.find((m: { name: string }) => m.name === 'Mika Mixed').lapses).toHaveLength(2);
    expect(names(res.body.notQualified)).toEqual(['Nell Lapsed', 'Omar Nothing']);
    expect(res.body.notQualified.find((m: { name: string }) => m.name === 'Nell Lapsed').missing).toEqual([{ area: 'particulate', status: 'expired', expiresOn: addDays(todayC, -5) }]);
    expect(res.body.saved).toBeUndefined();
  });

  it('treats the last valid day as covering the job, and a nearer date as qualifying more people', async () => {
    const onExpiry = await runJobCheck(t.knex, companyC, { areas: ['particulate'], date: addDays(todayC, 50), crew: 'South' });
    expect(onExpiry.qualified.map((m) => m.name)).toContain('Rene Renewnow');
    const dayAfter = await runJobCheck(t.knex, companyC, { areas: ['particulate'], date: addDays(todayC, 51), crew: 'South' });
    expect(dayAfter.renewable.map((m) => m.name)).toEqual(['Rene Renewnow']);
    const today = await runJobCheck(t.knex, companyC, { areas: ['flow-moisture'], date: todayC, crew: null });
    expect(today.qualified.map((m) => m.name).sort()).toEqual(['Lars Laterwindow', 'Mika Mixed', 'Nell Lapsed', 'Pia Northern', 'Quinn Ready', 'Rene Renewnow']);
  });

  it('refuses a past date and an unknown area, naming each', async () => {
    const past = await managerC.post('/api/job-checks', { areas: ['particulate'], date: addDays(todayC, -1) });
    expect(past.status).toBe(400);
    expect(fieldsOf(past)).toEqual(['date']);
    expect(past.body.error.fields[0].message).toMatch(/in the past/);
    const unknown = await managerC.post('/api/job-checks', { areas: ['particulate', 'rope-access'], date: addDays(todayC, 3) });
    expect(unknown.status).toBe(400);
    expect(fieldsOf(unknown)).toEqual(['areas.1']);
    expect(unknown.body.error.message).toMatch(/rope-access/);
    const malformed = await managerC.post('/api/job-checks', { areas: [], date: 'next tuesday' });
    expect(malformed.status).toBe(400);
    expect(fieldsOf(malformed).sort()).toEqual(['areas', 'date']);
  });

  it('saves under a job name, updates on the same name, lists, re-runs and deletes', async () => {
    const date = addDays(todayC, 30);
    const saved = await managerC.post('/api/job-checks', { areas: ['particulate'], date, crew: 'South', name: 'Kiln 4 outage' });
    expect(saved.status).toBe(200);
    expect(saved.body.saved).toMatchObject({ name: 'Kiln 4 outage', date, crew: 'South', areas: ['particulate'], past: false });
    expect(saved.body.saved.lastCounts).toEqual({ qualified: 4, lapsing: 0, renewable: 0, notQualified: 2 });
    const again = await managerC.post('/api/job-checks', { areas: ['particulate', 'flow-moisture'], date, name: 'kiln 4 OUTAGE' });
    expect(again.body.saved.id).toBe(saved.body.saved.id);
    expect(again.body.saved.areas).toEqual(['flow-moisture', 'particulate']);
    const list = (await managerC.get('/api/job-checks').expect(200)).body;
    expect(list.checks).toHaveLength(1);
    expect(list.checks[0]).toMatchObject({ id: saved.body.saved.id, name: 'kiln 4 OUTAGE', crew: null });
    const rerun = await managerC.post(`/api/job-checks/${saved.body.saved.id}/run`);
    expect(rerun.status).toBe(200);
    expect(rerun.body.qualified.length).toBe(again.body.qualified.length);
    // Another company cannot see, run or delete it.
    expect((await manager.post(`/api/job-checks/${saved.body.saved.id}/run`)).status).toBe(404);
    expect((await manager.get('/api/job-checks').expect(200)).body.checks).toEqual([]);
    expect((await manager.send('delete', `/api/job-checks/${saved.body.saved.id}`)).status).toBe(404);
    expect((await managerC.send('delete', `/api/job-checks/${saved.body.saved.id}`)).status).toBe(204);
    expect((await managerC.post(`/api/job-checks/${saved.body.saved.id}/run`)).status).toBe(404);
  });

  it('refuses to re-run a saved check whose date has passed', async () => {
    const saved = await managerC.post('/api/job-checks', { areas: ['particulate'], date: todayC, name: 'Stack 2 retest' });
    await t.knex('job_checks').where({ id: saved.body.saved.id }).update({ job_date: addDays(todayC, -2) });
    const list = (await managerC.get('/api/job-checks').expect(200)).body;
    expect(list.checks.find((c: { id: string }) => c.id === saved.body.saved.id).past).toBe(true);
    const rerun = await managerC.post(`/api/job-checks/${saved.body.saved.id}/run`);
    expect(rerun.status).toBe(400);
    expect(fieldsOf(rerun)).toEqual(['date']);
  });
});

describe('assignments', () => {
  it("refuses another company's member ids with 404 and assigns nothing", async () => {
    const before = await t.knex('assignments').count('* as n').first();
    const res = await manager.post('/api/assignments', { memberIds: [ids.get('Ada Lastday'), ids.get('Zeno Elsewhere')], kind: 'exam', areaId: 'particulate', dueOn: addDays(todayA, 14) });
    expect(res.status).toBe(404);
    const after = await t.knex('assignments').count('* as n').first();
    expect(after?.n).toBe(before?.n);
    const manage = await otherManager.post('/api/assignments', { memberIds: [ids.get('Ada Lastday')], kind: 'exam', areaId: 'particulate', dueOn: addDays(todayA, 14) });
    expect(manage.status).toBe(404);
  });

  it('refuses a past due date, an unknown drill and a missing target, naming the field', async () => {
    const base = { memberIds: [ids.get('Ada Lastday')], dueOn: addDays(todayA, 7) };
    const past = await manager.post('/api/assignments', { ...base, kind: 'exam', areaId: 'particulate', dueOn: addDays(todayA, -1) });
    expect(fieldsOf(past)).toEqual(['dueOn']);
    const drill = await manager.post('/api/assignments', { ...base, kind: 'drill', drillId: 'juggling' });
    expect(fieldsOf(drill)).toEqual(['drillId']);
    const missing = await manager.post('/api/assignments', { ...base, kind: 'drill' });
    expect(fieldsOf(missing)).toEqual(['drillId']);
    const area = await manager.post('/api/assignments', { ...base, kind: 'exam', areaId: 'underwater-welding' });
    expect(fieldsOf(area)).toEqual(['areaId']);
  });

  it('flags overdue work and marks it done when the member completes it afterwards', async () => {
    const ada = ids.get('Ada Lastday')!;
    const cleo = ids.get('Cleo Ninety')!;
    const exam = await manager.post('/api/assignments', { memberIds: [ada, cleo], kind: 'exam', areaId: 'particulate', dueOn: addDays(todayA, 10), note: 'Before the kiln job' });
    expect(exam.status).toBe(201);
    expect(exam.body.created).toBe(2);
    const drill = await manager.post('/api/assignments', { memberIds: [ada], kind: 'drill', drillId: 'isokinetic-check', dueOn: todayA });
    expect(drill.status).toBe(201);
    // Time passes: the drill was due two days ago and was made last week.
    await t.knex('assignments').where({ id: drill.body.ids[0] }).update({ due_on: addDays(todayA, -2), created_at: new Date(Date.now() - 7 * 86_400_000) });

    let list = (await manager.get('/api/assignments?pageSize=50').expect(200)).body;
    const state = (id: string) => list.assignments.find((a: { id: string }) => a.id === id)?.state;
    expect(state(drill.body.ids[0])).toBe('overdue');
    expect(state(exam.body.ids[0])).toBe('open');
    expect(list.counts).toEqual({ open: 2, overdue: 1, done: 0 });
    expect(list.assignments[0].state).toBe('overdue');
    expect(list.assignments[0].drillTitle).toMatch(/isokinetic/i);

    // An attempt from before the assignment does not count; one after it does.
    await t.knex('drill_attempts').insert({ user_id: ada, company_id: companyA, drill_id: 'isokinetic-check', seed: 7, submitted_at: new Date(Date.now() - 8 * 86_400_000), score: 1 });
    list = (await manager.get('/api/assignments?pageSize=50').expect(200)).body;
    expect(state(drill.body.ids[0])).toBe('overdue');
    await t.knex('drill_attempts').insert({ user_id: ada, company_id: companyA, drill_id: 'isokinetic-check', seed: 8, submitted_at: new Date(), score: 0.5 });
    await t.knex('exam_passes').insert({ user_id: cleo, company_id: companyA, area_id: 'particulate', score_pct: 88 });
    list = (await manager.get('/api/assignments?pageSize=50').expect(200)).body;
    expect(state(drill.body.ids[0])).toBe('done');
    expect(state(exam.body.ids[1])).toBe('done');
    expect(state(exam.body.ids[0])).toBe('open');

    const overdueOnly = (await manager.get('/api/assignments?state=overdue').expect(200)).body;
    expect(overdueOnly.total).toBe(0);

    const mine = (await crewAgent.get('/api/assignments/mine').expect(200)).body;
    expect(mine.assignments.map((a: { memberId: string }) => a.memberId).every((id: string) => id === ada)).toBe(true);
    expect(mine.assignments.map((a: { state: string }) => a.state)).toEqual(['open', 'done']);
    expect(mine.assignments[0].note).toBe('Before the kiln job');

    // Withdrawn work disappears for both; another company's manager cannot withdraw it.
    expect((await otherManager.send('delete', `/api/assignments/${exam.body.ids[0]}`)).status).toBe(404);
    expect((await manager.send('delete', `/api/assignments/${exam.body.ids[0]}`)).status).toBe(204);
    const afterWithdraw = (await crewAgent.get('/api/assignments/mine').expect(200)).body;
    expect(afterWithdraw.assignments.map((a: { id: string }) => a.id)).not.toContain(exam.body.ids[0]);
  });

  it('offers every drill with its area', async () => {
    const options = (await manager.get('/api/assignments/options').expect(200)).body;
    expect(options.drills.find((d: { id: string }) => d.id === 'isokinetic-check')).toMatchObject({ areaId: 'particulate' });
    expect(options.areas).toHaveLength(6);
  });
});

describe('trends and time zone setting', () => {
  it('charts the share in force by month, expiries ahead and drill activity', async () => {
    const res = await manager.get('/api/readiness/trends').expect(200);
    const body = res.body;
    expect(body.members).toBe(10);
    // Today's cells over the whole crew: 10 members × 6 areas.
    expect(body.summary.totals).toEqual({ current: 4, expiring: 2, expired: 2, none: 60 - 8 });
    expect(body.summary.byArea.find((a: { area: string }) => a.area === 'particulate')).toEqual({ area: 'particulate', current: 3, expiring: 2, expired: 2, none: 3 });
    expect(body.inForceShare.dates).toHaveLength(12);
    expect(body.inForceShare.dates.at(-1)).toBe(todayA);
    const particulate = body.inForceShare.series.find((s: { area: string }) => s.area === 'particulate');
    // Today: Ada, Cleo, Dov, Esme, Fenn hold one in force (Esme and Fenn once each) → 5 of 10.
    expect(particulate.percent.at(-1)).toBe(50);
    const months: string[] = body.expiriesByMonth.months;
    expect(months[0]).toBe(todayA.slice(0, 7));
    const ahead = body.expiriesByMonth.series.find((s: { area: string }) => s.area === 'particulate');
    const total = ahead.counts.reduce((a: number, b: number) => a + b, 0);
    // Ada (today), Cleo (+90), Dov (+91) run out within 12 months; renewed ones run later.
    expect(total).toBe(3);
    expect(ahead.counts[months.indexOf(todayA.slice(0, 7))]).toBeGreaterThanOrEqual(1);
    expect(body.drillActivity.attempts.reduce((a: number, b: number) => a + b, 0)).toBeGreaterThanOrEqual(1);
    expect(body.drillActivity.weeks).toHaveLength(12);
  });

  it('lets an admin set a known time zone, canonically spelt, and refuses an unknown one', async () => {
    const bad = await admin.send('put', '/api/readiness/settings', { timeZone: 'Mars/Olympus_Mons' });
    expect(bad.status).toBe(400);
    expect(fieldsOf(bad)).toEqual(['timeZone']);
    expect((await manager.send('put', '/api/readiness/settings', { timeZone: 'UTC' })).status).toBe(403);
    const ok = await admin.send('put', '/api/readiness/settings', { timeZone: 'america/chicago' });
    expect(ok.status).toBe(200);
    expect(ok.body.timeZone).toBe('America/Chicago');
    expect((await manager.get('/api/readiness/settings').expect(200)).body.today).toBe(todayIn('America/Chicago'));
  });
});
