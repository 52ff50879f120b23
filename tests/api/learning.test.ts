import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import type { Knex } from 'knex';
import { createTestApp, type TestApp } from '../helpers/app';
import { createTestDatabase } from '../helpers/db';
import { TestAgent, signedIn } from '../helpers/agent';
import { createCompany, createUser } from '../helpers/factory';
import { createDb } from '../../server/db';
import { AREA_IDS, CONTENT_DIR, ContentError, readContent, syncContent } from '../../server/services/content-sync';

let t: TestApp;
let crew: TestAgent;
let auditor: TestAgent;
let operator: TestAgent;
let crewUserId: string;
const tempDirs: string[] = [];

/** A private copy of content/ to edit; removed at the end. */
function contentCopy(edit?: (dir: string) => void) {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'pw-content-'));
  tempDirs.push(dir);
  fs.cpSync(CONTENT_DIR, dir, { recursive: true });
  edit?.(dir);
  return dir;
}
const editFile = (dir: string, file: string, change: (text: string) => string) => {
  const full = path.join(dir, file);
  const before = fs.readFileSync(full, 'utf8');
  const after = change(before);
  expect(after, `the edit to ${file} changes it`).not.toBe(before);
  fs.writeFileSync(full, after);
};

const FIRST_FLOW_LESSON = 'lessons/flow-moisture/01-site-and-traverse-points.md';
const lessonRow = (knex: Knex, areaId: string, slug: string) => knex('lessons').where({ area_id: areaId, slug }).first();
const snapshot = async (knex: Knex) => ({
  areas: await knex('areas').orderBy('id').select('*'),
  lessons: await knex('lessons').orderBy('id').select('*'),
  blueprints: await knex('exam_blueprints').orderBy('area_id').select('*'),
  progress: await knex('lesson_progress').orderBy(['user_id', 'lesson_id']).select('*'),
});
const fieldsOf = (res: request.Response) => (res.body.error?.fields ?? []).map((f: { field: string }) => f.field);

async function syncError(knex: Knex, dir: string): Promise<ContentError> {
  const error = await syncContent(knex, dir).then(() => null, (e: unknown) => e);
  expect(error, 'the sync refuses the content').toBeInstanceOf(ContentError);
  return error as ContentError;
}

beforeAll(async () => {
  t = await createTestApp();
  await syncContent(t.knex);
  const company = await createCompany(t.knex, 'Larkspur Ridge Stack Testing');
  const crewUser = await createUser(t.knex, { companyId: company.id, roles: ['crew'] });
  crewUserId = crewUser.id;
  crew = await signedIn(t.app, crewUser.email, crewUser.password);
  const firm = await createCompany(t.knex, 'Fernhollow Assessors', 'auditing');
  const auditorUser = await createUser(t.knex, { companyId: firm.id, roles: ['auditor'] });
  auditor = await signedIn(t.app, auditorUser.email, auditorUser.password);
  const platform = await createCompany(t.knex, 'Platform staff', 'platform');
  const operatorUser = await createUser(t.knex, { companyId: platform.id, roles: ['operator'] });
  operator = await signedIn(t.app, operatorUser.email, operatorUser.password);
});
afterAll(async () => {
  for (const dir of tempDirs) fs.rmSync(dir, { recursive: true, force: true });
  await t.close();
});

describe('content sync', () => {
  it('loads the six areas, at least four lessons each, and a blueprint per area', async () => {
    const areas = await t.knex('areas').orderBy('sort_order').select('*');
    expect(areas.map((a) => a.id)).toEqual([...AREA_IDS]);
    expect(areas.every((a) => a.validity_months === 36)).toBe(true);
    const lessons = await t.knex('lessons').whereNull('retired_at').select('*');
    expect(lessons.length).toBeGreaterThanOrEqual(24);
    for (const id of AREA_IDS) expect(lessons.filter((l) => l.area_id === id).length, id).toBeGreaterThanOrEqual(4);
    expect(await t.knex('exam_blueprints').pluck('area_id')).toEqual(expect.arrayContaining([...AREA_IDS]));
  });

  it('renders Markdown and maths on the server and points diagrams at the asset route', async () => {
    const lesson = await lessonRow(t.knex, 'flow-moisture', 'site-and-traverse-points');
    expect(lesson.slug).toBe('site-and-traverse-points');
    expect(lesson.file_name).toBe('01-site-and-traverse-points.md');
    expect(lesson.body_html).toContain('class="katex');
    expect(lesson.body_html).not.toContain('$$');
    expect(lesson.body_html).toContain('src="/api/content/assets/traverse-circular.svg"');
    expect(lesson.body_html).not.toMatch(/src="assets\//);
    // The page prints the title itself, so the body's own leading heading is dropped.
    expect(lesson.body_html).not.toMatch(/^<h1>/);
  });

  it('changes nothing when run twice', async () => {
    const before = await snapshot(t.knex);
    const report = await syncContent(t.knex);
    expect(report.lessons).toMatchObject({ inserted: 0, revised: 0, updated: 0, retired: 0 });
    expect(report.areas).toEqual({ inserted: 0, updated: 0 });
    expect(report.blueprints).toMatchObject({ inserted: 0, updated: 0 });
    expect(await snapshot(t.knex)).toEqual(before);
  });

  it('gives an edited lesson a new version under the same id and keeps the progress on it', async () => {
    const before = await lessonRow(t.knex, 'flow-moisture', 'site-and-traverse-points');
    expect((await crew.post(`/api/lessons/${before.id}/complete`)).status).toBe(200);
    const edited = contentCopy((dir) => editFile(dir, FIRST_FLOW_LESSON, (text) => text.replace('Gas does not move through a stack', 'Flue gas does not move through a stack')));
    const report = await syncContent(t.knex, edited);
    expect(report.lessons.revised).toBe(1);

    const after = await lessonRow(t.knex, 'flow-moisture', 'site-and-traverse-points');
    expect(after.id).toBe(before.id);
    expect(after.version).toBe(before.version + 1);
    expect(after.body_html).toContain('Flue gas does not move');
    const progress = await t.knex('lesson_progress').where({ user_id: crewUserId, lesson_id: before.id }).first();
    expect(progress.completed_version).toBe(before.version);

    const opened = await crew.get(`/api/lessons/${before.id}`).expect(200);
    expect(opened.body.progress).toMatchObject({ status: 'completed', revisedSinceCompleted: true });
    expect((await crew.post(`/api/lessons/${before.id}/complete`)).status).toBe(200);
    expect((await t.knex('lesson_progress').where({ user_id: crewUserId, lesson_id: before.id }).first()).completed_version).toBe(after.version);

    await syncContent(t.knex);
    expect((await lessonRow(t.knex, 'flow-moisture', 'site-and-traverse-points')).version).toBe(after.version + 1);
  });

  it('keeps a lesson and its version when only its order prefix and position change', async () => {
    const before = await lessonRow(t.knex, 'flow-moisture', 'moisture-train');
    const moved = contentCopy((dir) => {
      const folder = path.join(dir, 'lessons/flow-moisture');
      fs.renameSync(path.join(folder, '04-moisture-train.md'), path.join(folder, '09-moisture-train.md'));
      editFile(dir, 'lessons/flow-moisture/09-moisture-train.md', (text) => text.replace(/^order: 4$/m, 'order: 9'));
    });
    await syncContent(t.knex, moved);
    const after = await lessonRow(t.knex, 'flow-moisture', 'moisture-train');
    expect(after).toMatchObject({ id: before.id, version: before.version, sort_order: 9, file_name: '09-moisture-train.md' });
    await syncContent(t.knex);
    expect(await lessonRow(t.knex, 'flow-moisture', 'moisture-train')).toMatchObject({ id: before.id, version: before.version, sort_order: 4 });
  });

  it('retires a lesson whose file disappears and brings it back with its id when the file returns', async () => {
    const before = await lessonRow(t.knex, 'ambient-conversions', 'oxidation-lifetimes');
    await syncContent(t.knex, contentCopy((dir) => fs.rmSync(path.join(dir, 'lessons/ambient-conversions/04-oxidation-lifetimes.md'))));
    expect((await lessonRow(t.knex, 'ambient-conversions', 'oxidation-lifetimes')).retired_at).not.toBeNull();
    await crew.get(`/api/lessons/${before.id}`).expect(404);
    const courses = await crew.get('/api/courses').expect(200);
    const ambient = courses.body.areas.find((a: { id: string }) => a.id === 'ambient-conversions');
    expect(ambient.lessons.map((l: { id: string }) => l.id)).not.toContain(before.id);

    await syncContent(t.knex);
    expect(await lessonRow(t.knex, 'ambient-conversions', 'oxidation-lifetimes')).toMatchObject({ id: before.id, version: before.version, retired_at: null });
  });

  it.each([
    ['a front matter field of the wrong type', FIRST_FLOW_LESSON, (s: string) => s.replace('minutes: 14', 'minutes: fourteen'), FIRST_FLOW_LESSON, 'front matter minutes'],
    ['a missing front matter field', FIRST_FLOW_LESSON, (s: string) => s.replace(/^title: .*\n/m, ''), FIRST_FLOW_LESSON, 'front matter title'],
    ['a misspelt front matter field', FIRST_FLOW_LESSON, (s: string) => s.replace('minutes: 14', 'minutes: 14\nminuets: 14'), FIRST_FLOW_LESSON, 'front matter minuets'],
    ['an area that does not match the folder', FIRST_FLOW_LESSON, (s: string) => s.replace('area: flow-moisture', 'area: particulate'), FIRST_FLOW_LESSON, 'front matter area'],
    ['a drill of another area', FIRST_FLOW_LESSON, (s: string) => s.replace('drills: ["traverse-layout"]', 'drills: ["traverse-layout", "isokinetic-check"]'), FIRST_FLOW_LESSON, 'front matter drills.1'],
    ['a diagram that does not exist', FIRST_FLOW_LESSON, (s: string) => s.replace('assets/traverse-circular.svg', 'assets/no-such-diagram.svg'), FIRST_FLOW_LESSON, 'body image'],
    ['broken maths', FIRST_FLOW_LESSON, (s: string) => s.replace('D_e = \\frac{2LW}{L + W}', 'D_e = \\frac{2LW}{L + W'), FIRST_FLOW_LESSON, 'body maths'],
    ['a blueprint whose mix does not add up', 'blueprints/particulate.json', (s: string) => s.replace('"questionCount": 6', '"questionCount": 7'), 'blueprints/particulate.json', 'mix'],
    ['an area with an impossible validity', 'areas.json', (s: string) => s.replace('"validityMonths": 36', '"validityMonths": 0'), 'areas.json', '0.validityMonths'],
  ])('refuses %s, naming the file and field, and loads nothing', async (_label, file, change, expectedFile, expectedField) => {
    const dir = contentCopy((d) => {
      editFile(d, file, change);
      // A second, valid edit that must not be loaded either.
      editFile(d, 'lessons/particulate/02-isokinetic-sampling.md', (s) => s.replace(/^title: .*$/m, 'title: A title that must not load'));
    });
    const before = await snapshot(t.knex);
    const error = await syncError(t.knex, dir);
    expect(error.problems).toContainEqual(expect.objectContaining({ file: expectedFile, field: expectedField }));
    expect(error.message).toContain(`${expectedFile}: ${expectedField}:`);
    expect(await snapshot(t.knex)).toEqual(before);
  });

  it('loads nothing at all into an empty database when any file is broken', async () => {
    const db = await createTestDatabase();
    const knex = createDb(db.url, { min: 0, max: 4 });
    try {
      const broken = contentCopy((dir) => editFile(dir, 'lessons/monitor-audits/03-relative-accuracy.md', (s) => s.replace(/^order: 3$/m, 'order: -3')));
      const error = await syncError(knex, broken);
      expect(error.message).toContain('lessons/monitor-audits/03-relative-accuracy.md: front matter order: must be a whole number from 1 to 99');
      for (const table of ['areas', 'lessons', 'exam_blueprints']) expect((await knex(table).count('* as n'))[0].n, table).toBe(0);

      // Two processes starting at once: the advisory lock makes them take turns, so neither trips on the other's rows.
      const files = (await readContent()).lessons.length;
      const reports = await Promise.all([syncContent(knex), syncContent(knex)]);
      expect(reports.map((r) => r.lessons.inserted).sort((a, b) => a - b)).toEqual([0, files]);
      expect((await knex('lessons').count('* as n'))[0].n).toBe(files);
    } finally {
      await knex.destroy();
      await db.drop();
    }
  });
});

describe('courses and lessons', () => {
  it('lists the areas for any signed-in user, and not for anonymous callers', async () => {
    const res = await auditor.get('/api/areas').expect(200);
    expect(res.body.areas).toHaveLength(6);
    expect(res.body.areas[0]).toEqual({
      id: 'flow-moisture', name: 'Flow and moisture', summary: expect.any(String), methods: ['Method 1', 'Method 2', 'Method 3', 'Method 4'], validityMonths: 36,
    });
    expect((await new TestAgent(t.app).get('/api/areas')).status).toBe(401);
  });

  it('shows courses with my progress, opens a lesson with its neighbours, and marks it finished', async () => {
    const company = await createCompany(t.knex, 'Marram Flats Emissions');
    const learner = await createUser(t.knex, { companyId: company.id, roles: ['crew'] });
    const agent = await signedIn(t.app, learner.email, learner.password);

    const fresh = await agent.get('/api/courses').expect(200);
    const particulate = fresh.body.areas.find((a: { id: string }) => a.id === 'particulate');
    expect(particulate).toMatchObject({ name: 'Particulate sampling', lessonCount: 4, completedCount: 0, percent: 0 });
    const [first, second] = particulate.lessons;
    expect(first).toMatchObject({ slug: 'method-5-train', order: 1, minutes: expect.any(Number), methods: ['Method 5'], progress: { status: 'not-started' } });
    expect(first.drills).toContainEqual({ id: 'isokinetic-check', title: expect.any(String) });

    const opened = await agent.get(`/api/lessons/${first.id}`).expect(200);
    expect(opened.body.lesson).toMatchObject({ id: first.id, areaId: 'particulate', areaName: 'Particulate sampling', title: first.title, version: expect.any(Number) });
    expect(opened.body.lesson.bodyHtml).toContain('/api/content/assets/method5-train.svg');
    expect(opened.body).toMatchObject({ prev: null, next: { id: second.id, title: second.title }, position: { index: 1, total: 4 } });
    expect(opened.body.progress).toMatchObject({ status: 'opened', completedAt: null });
    const firstOpenedAt = (await t.knex('lesson_progress').where({ user_id: learner.id, lesson_id: first.id }).first()).first_opened_at;
    await agent.get(`/api/lessons/${first.id}`).expect(200);
    expect((await t.knex('lesson_progress').where({ user_id: learner.id, lesson_id: first.id }).first()).first_opened_at).toEqual(firstOpenedAt);

    const done = await agent.post(`/api/lessons/${first.id}/complete`);
    expect(done.status).toBe(200);
    expect(done.body.progress).toMatchObject({ status: 'completed', revisedSinceCompleted: false });
    expect(done.body.progress.completedAt).toBeTruthy();

    const last = await agent.get(`/api/lessons/${particulate.lessons[3].id}`).expect(200);
    expect(last.body).toMatchObject({ next: null, prev: { id: particulate.lessons[2].id } });

    const after = (await agent.get('/api/courses').expect(200)).body.areas.find((a: { id: string }) => a.id === 'particulate');
    expect(after).toMatchObject({ completedCount: 1, openedCount: 2, percent: 25 });
    expect(after.lessons[0].progress.status).toBe('completed');
    expect(after.lessons[3].progress.status).toBe('opened');
    // Progress is mine alone.
    const other = (await crew.get('/api/courses').expect(200)).body.areas.find((a: { id: string }) => a.id === 'particulate');
    expect(other.lessons[0].progress.status).toBe('not-started');
  });

  it('answers an unknown lesson with 404 and a malformed id with 400 naming it', async () => {
    await crew.get('/api/lessons/4b0f6f7e-2a55-4d7c-9f63-0e3c2f1d9a10').expect(404);
    expect((await crew.post('/api/lessons/4b0f6f7e-2a55-4d7c-9f63-0e3c2f1d9a10/complete')).status).toBe(404);
    const bad = await crew.get('/api/lessons/not-a-lesson').expect(400);
    expect(fieldsOf(bad)).toEqual(['lessonId']);
  });

  it('refuses auditors (403) and anonymous callers (401)', async () => {
    const lesson = await lessonRow(t.knex, 'gas-analysis', 'calibration-error');
    const anonymous = new TestAgent(t.app);
    for (const [agent, status] of [[auditor, 403], [anonymous, 401]] as const) {
      expect((await agent.get('/api/courses')).status).toBe(status);
      expect((await agent.get(`/api/lessons/${lesson.id}`)).status).toBe(status);
      expect((await agent.post(`/api/lessons/${lesson.id}/complete`)).status).toBe(status);
    }
    expect(await t.knex('lesson_progress').where({ lesson_id: lesson.id }).count('* as n').then((r) => r[0].n)).toBe(0);
  });
});

describe('diagrams', () => {
  it('serves an SVG with its content type and a locked-down policy', async () => {
    const res = await request(t.app).get('/api/content/assets/traverse-circular.svg').expect(200);
    expect(res.headers['content-type']).toMatch(/^image\/svg\+xml/);
    expect(res.headers['content-security-policy']).toBe("default-src 'none'; style-src 'unsafe-inline'");
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.body.toString()).toContain('<svg');
  });

  it.each([
    ['..%2Fpackage.json', 400],
    ['..%2F..%2Fpackage.json', 400],
    ['%2E%2E%2Fpackage.json', 400],
    ['..%5Cpackage.json', 400],
    ['package.json', 400],
    ['.hidden.svg', 400],
    ['no-such-diagram.svg', 404],
  ])('refuses %s', async (name, status) => {
    const res = await request(t.app).get(`/api/content/assets/${name}`);
    expect(res.status).toBe(status);
    expect(res.text).not.toContain('"dependencies"');
    if (status === 400) expect(fieldsOf(res)).toEqual(['name']);
  });

  it('never reaches outside the assets folder through an unencoded path', async () => {
    for (const p of ['/api/content/assets/../../package.json', '/api/content/assets/../README.md']) {
      const res = await request(t.app).get(p);
      expect(res.status, p).toBe(404);
      expect(res.text).not.toContain('"dependencies"');
    }
  });
});

describe('operator content settings', () => {
  it('lists areas and changes validity and name with an audit entry; a later sync keeps the change', async () => {
    const list = await operator.get('/api/operator/areas').expect(200);
    const particulate = list.body.areas.find((a: { id: string }) => a.id === 'particulate');
    expect(particulate).toMatchObject({ validityMonths: 36, editedByOperator: false, fileValues: { name: 'Particulate sampling', validityMonths: 36 }, lessonCount: 4 });
    expect(particulate.drills.map((d: { id: string }) => d.id)).toEqual(expect.arrayContaining(['isokinetic-check', 'whole-run-reduction']));

    const res = await operator.send('put', '/api/operator/areas/particulate', { name: 'Particulate sampling (Method 5)', validityMonths: 24 });
    expect(res.status).toBe(200);
    expect(res.body.area).toMatchObject({ validityMonths: 24, name: 'Particulate sampling (Method 5)', editedByOperator: true });
    const audit = await t.knex('audit_log').where({ action: 'area.updated', target_id: 'particulate' }).first();
    expect(audit.details).toEqual({ before: { name: 'Particulate sampling', validityMonths: 36 }, after: { name: 'Particulate sampling (Method 5)', validityMonths: 24 } });

    await syncContent(t.knex);
    expect((await crew.get('/api/areas')).body.areas.find((a: { id: string }) => a.id === 'particulate')).toMatchObject({ validityMonths: 24, name: 'Particulate sampling (Method 5)' });

    // A changed file value for a field wins over the earlier edit of that field only.
    await syncContent(t.knex, contentCopy((dir) => editFile(dir, 'areas.json', (s) => s.replace('"name": "Particulate sampling"', '"name": "Particulate sampling and recovery"'))));
    expect(await t.knex('areas').where({ id: 'particulate' }).first()).toMatchObject({ name: 'Particulate sampling and recovery', validity_months: 24 });
    await operator.send('put', '/api/operator/areas/particulate', { name: 'Particulate sampling', validityMonths: 36 }).then((r) => expect(r.status).toBe(200));
    await syncContent(t.knex);
    expect(await t.knex('areas').where({ id: 'particulate' }).first()).toMatchObject({ name: 'Particulate sampling', validity_months: 36 });
  });

  it.each([
    [{ name: 'Flow', validityMonths: 0 }, 'validityMonths'],
    [{ name: 'Flow', validityMonths: 121 }, 'validityMonths'],
    [{ name: 'Flow', validityMonths: 12.5 }, 'validityMonths'],
    [{ name: 'Flow', validityMonths: '24' }, 'validityMonths'],
    [{ name: '  ', validityMonths: 24 }, 'name'],
    [{ validityMonths: 24 }, 'name'],
  ])('refuses area settings %j with a 400 naming %s', async (body, field) => {
    const res = await operator.send('put', '/api/operator/areas/flow-moisture', body);
    expect(res.status).toBe(400);
    expect(fieldsOf(res)).toEqual([field]);
    expect(res.body.error.fields[0].message).toMatch(new RegExp(`^${field}: `));
  });

  it('answers an unknown area with a 400 naming areaId', async () => {
    const res = await operator.send('put', '/api/operator/areas/acoustics', { name: 'Noise', validityMonths: 12 });
    expect(res.status).toBe(400);
    expect(fieldsOf(res)).toEqual(['areaId']);
  });

  const goodBlueprint = {
    title: 'Gas analysis exam, short form',
    timeLimitMinutes: 60,
    passMarkPct: 75,
    questionCount: 5,
    mix: [{ drill: 'calibration-error', count: 2 }, { drill: 'bias-and-drift', count: 2 }, { drill: 'bias-corrected-average', count: 1 }],
  };

  it.each([
    ['a mix that does not add up', { ...goodBlueprint, questionCount: 6 }, 'mix'],
    ['a time limit under 5 minutes', { ...goodBlueprint, timeLimitMinutes: 4 }, 'timeLimitMinutes'],
    ['a time limit over 480 minutes', { ...goodBlueprint, timeLimitMinutes: 481 }, 'timeLimitMinutes'],
    ['a pass mark of 0', { ...goodBlueprint, passMarkPct: 0 }, 'passMarkPct'],
    ['a pass mark over 100', { ...goodBlueprint, passMarkPct: 101 }, 'passMarkPct'],
    ['a drill listed twice', { ...goodBlueprint, mix: [...goodBlueprint.mix.slice(0, 2), { drill: 'calibration-error', count: 1 }] }, 'mix.2.drill'],
    ['a drill of another area', { ...goodBlueprint, mix: [...goodBlueprint.mix.slice(0, 2), { drill: 'isokinetic-check', count: 1 }] }, 'mix.2.drill'],
    ['an unknown drill', { ...goodBlueprint, mix: [...goodBlueprint.mix.slice(0, 2), { drill: 'made-up-drill', count: 1 }] }, 'mix.2.drill'],
    ['a zero count', { ...goodBlueprint, mix: [...goodBlueprint.mix.slice(0, 2), { drill: 'bias-corrected-average', count: 0 }] }, 'mix.2.count'],
  ])('refuses a blueprint with %s (400 naming the field)', async (_label, body, field) => {
    const before = await t.knex('exam_blueprints').where({ area_id: 'gas-analysis' }).first();
    const res = await operator.send('put', '/api/operator/blueprints/gas-analysis', body);
    expect(res.status).toBe(400);
    expect(fieldsOf(res)).toContain(field);
    for (const f of res.body.error.fields) expect(f.message.startsWith(`${f.field}: `)).toBe(true);
    expect(await t.knex('exam_blueprints').where({ area_id: 'gas-analysis' }).first()).toEqual(before);
  });

  it('saves a valid blueprint with an audit entry, and a sync of the unchanged file keeps it', async () => {
    const list = await operator.get('/api/operator/blueprints').expect(200);
    const gas = list.body.blueprints.find((b: { areaId: string }) => b.areaId === 'gas-analysis');
    expect(gas).toMatchObject({ areaName: 'Instrumental gas analysis', editedByOperator: false, timeLimitMinutes: 90, passMarkPct: 70 });
    expect(gas.availableDrills.map((d: { id: string }) => d.id).sort()).toEqual(['bias-and-drift', 'bias-corrected-average', 'calibration-error']);

    const res = await operator.send('put', '/api/operator/blueprints/gas-analysis', goodBlueprint);
    expect(res.status).toBe(200);
    expect(res.body.blueprint).toMatchObject({ ...goodBlueprint, editedByOperator: true, fileValues: { timeLimitMinutes: 90 } });
    expect(await t.knex('audit_log').where({ action: 'blueprint.updated', target_id: 'gas-analysis' }).count('* as n').then((r) => r[0].n)).toBe(1);

    const report = await syncContent(t.knex);
    expect(report.blueprints.keptOperatorEdits).toEqual(['gas-analysis']);
    expect(await t.knex('exam_blueprints').where({ area_id: 'gas-analysis' }).first()).toMatchObject({ time_limit_minutes: 60, pass_mark_pct: 75, question_count: 5 });

    // The file's title changes: that field follows the file, the operator's other settings stay.
    await syncContent(t.knex, contentCopy((dir) => editFile(dir, 'blueprints/gas-analysis.json', (s) => s.replace('certification exam', 'qualification exam'))));
    expect(await t.knex('exam_blueprints').where({ area_id: 'gas-analysis' }).first()).toMatchObject({
      title: 'Instrumental gas analysis qualification exam', time_limit_minutes: 60, pass_mark_pct: 75, question_count: 5, edited_by_operator: true,
    });
  });

  it('keeps operator settings away from other roles', async () => {
    expect((await crew.get('/api/operator/areas')).status).toBe(403);
    expect((await crew.send('put', '/api/operator/blueprints/particulate', goodBlueprint)).status).toBe(403);
    expect((await new TestAgent(t.app).get('/api/operator/blueprints')).status).toBe(401);
  });
});
