/**
 * Practice drills over HTTP: the list, starting an attempt (no expected value anywhere in what the
 * client gets), grading on the server with carried-forward credit, malformed answers refused
 * without storing anything, and attempts private to their owner. Expected values come from the
 * drill templates themselves on the seed the server stored; nothing here is hard-coded.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/app';
import { signedIn, type TestAgent } from '../helpers/agent';
import { createCompany, createUser } from '../helpers/factory';
import { containsNumber, findLeaks, spellings } from '../helpers/expected-leaks';
import { drillTemplates, getDrillTemplate, type DrillTemplate } from '../../server/engine/drills';
import { syncContent } from '../../server/services/content-sync';

let t: TestApp;
let crew: TestAgent;
let crewId: string;
let otherCrew: TestAgent;
let operator: TestAgent;
let auditor: TestAgent;

beforeAll(async () => {
  t = await createTestApp();
  await syncContent(t.knex);
  const company = await createCompany(t.knex, 'Heronsgate Stack Testing');
  const me = await createUser(t.knex, { companyId: company.id, roles: ['crew'], seat: true });
  crewId = me.id;
  crew = await signedIn(t.app, me.email, me.password);
  const rival = await createCompany(t.knex, 'Dunmoor Emission Services');
  const other = await createUser(t.knex, { companyId: rival.id, roles: ['crew'], seat: true });
  otherCrew = await signedIn(t.app, other.email, other.password);
  const platform = await createCompany(t.knex, 'Platform staff', 'platform');
  const op = await createUser(t.knex, { companyId: platform.id, roles: ['operator'], seat: true });
  operator = await signedIn(t.app, op.email, op.password);
  const firm = await createCompany(t.knex, 'Gorse Lane Assessors', 'auditing');
  const aud = await createUser(t.knex, { companyId: firm.id, roles: ['auditor'], seat: true });
  auditor = await signedIn(t.app, aud.email, aud.password);
});
afterAll(() => t.close());

/** The seed the server stored for an attempt, and the template's exact answers for it. */
async function stored(attemptId: string) {
  const row = await t.knex('drill_attempts').where({ id: attemptId }).first();
  const template = getDrillTemplate(row.drill_id) as DrillTemplate;
  const scenario = template.generate(Number(row.seed));
  return { row, template, scenario, expected: template.solve(scenario).expected };
}

async function start(agent: TestAgent, drillId: string) {
  const res = await agent.post(`/api/drills/${drillId}/attempts`);
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  return res;
}

/** Typed to six figures: well inside every field's tolerance. */
const typed = (value: number) => value.toPrecision(6);

describe('GET /api/drills', () => {
  it('lists every drill with its id, area and title', async () => {
    const res = await crew.get('/api/drills').expect(200);
    expect(res.body.drills.map((d: { id: string }) => d.id)).toEqual(drillTemplates.map((d) => d.id));
    for (const drill of res.body.drills) {
      const template = getDrillTemplate(drill.id)!;
      expect(drill).toMatchObject({ id: template.id, area: template.area, title: template.title });
      expect(drill.areaName).toEqual(expect.any(String));
    }
  });

  it('is refused to an auditor', async () => {
    expect((await auditor.get('/api/drills')).status).toBe(403);
  });
});

describe('POST /api/drills/:id/attempts', () => {
  it('gives the sheet and blank fields on a fresh seed, and no expected value anywhere', async () => {
    const leaks: string[] = [];
    const seeds = new Set<number>();
    for (const template of drillTemplates) {
      for (let round = 0; round < 3; round++) {
        const res = await start(crew, template.id);
        const json = JSON.stringify(res.body);
        const { attempt } = res.body;
        expect(Object.keys(res.body)).toEqual(['attempt']);
        expect(attempt.fields).toEqual(template.fields.map((f) => ({ key: f.key, label: f.label, unit: f.unit })));
        expect(attempt.scenario.templateId).toBe(template.id);
        expect(attempt.scenario.given.length + attempt.scenario.tables.length).toBeGreaterThan(0);
        const { row, expected } = await stored(attempt.id);
        expect(row).toMatchObject({ user_id: crewId, drill_id: template.id, mode: 'practice', submitted_at: null });
        seeds.add(Number(row.seed));
        leaks.push(...findLeaks([json], expected, `${template.id}: `));
        // nothing server-side travels: no seed, no data object, no tolerances or sources
        for (const word of ['"seed"', '"data"', 'expected', 'tolerance', 'dependsOn', 'recompute']) expect(json).not.toContain(word);
        expect(json).not.toMatch(new RegExp(`(^|[^0-9])${row.seed}([^0-9]|$)`));
      }
    }
    expect(leaks.slice(0, 10)).toEqual([]);
    // a fresh random seed each time
    expect(seeds.size).toBe(drillTemplates.length * 3);
  });

  it('answers 404 for a drill that does not exist', async () => {
    const res = await crew.post('/api/drills/no-such-drill/attempts');
    expect(res.status).toBe(404);
    expect(res.body.error.message).toMatch(/no-such-drill/);
  });
});

describe('the leak search itself', () => {
  it('finds an expected value pasted into a response', async () => {
    const res = await start(crew, 'whole-run-reduction');
    const { expected } = await stored(res.body.attempt.id);
    const leaky = JSON.stringify({ ...res.body, note: `velocity ${expected.velocity_fps.toPrecision(6)}` });
    expect(findLeaks([leaky], expected).length).toBeGreaterThan(0);
    expect(spellings(expected.velocity_fps).some((form) => containsNumber(leaky, form))).toBe(true);
  });
});

describe('POST /api/drill-attempts/:id/submission', () => {
  it('grades right answers 100 and stores the answers and the result', async () => {
    for (const drillId of ['whole-run-reduction', 'traverse-layout', 'rata-relative-accuracy', 'oxidation-lifetime']) {
      const res = await start(crew, drillId);
      const { template, expected } = await stored(res.body.attempt.id);
      const answers = Object.fromEntries(template.fields.map((f) => [f.key, typed(expected[f.key])]));
      const graded = await crew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, { answers });
      expect(graded.status, JSON.stringify(graded.body)).toBe(200);
      expect(graded.body.score).toBe(100);
      expect(graded.body.fields.map((f: { key: string }) => f.key)).toEqual(template.fields.map((f) => f.key));
      for (const field of graded.body.fields) {
        expect(field.verdict, `${drillId} ${field.key}`).toBe('correct');
        expect(field.expected).toBeCloseTo(expected[field.key], 10);
        expect(field.given).toBe(answers[field.key]);
      }
      expect(graded.body.steps.length).toBeGreaterThan(0);
      for (const step of graded.body.steps) expect(step).toMatchObject({ key: expect.any(String), equation: expect.any(String), source: expect.any(String) });

      const row = await t.knex('drill_attempts').where({ id: res.body.attempt.id }).first();
      expect(row.submitted_at).not.toBeNull();
      expect(row.score).toBe(100);
      expect(row.answers).toEqual(answers);
      expect(row.result.fields).toHaveLength(template.fields.length);
    }
  });

  it('accepts the notations a crew writes: 1.23e6, 1,234.5 and ×10^', async () => {
    const res = await start(crew, 'ppb-to-number-density');
    const { template, expected } = await stored(res.body.attempt.id);
    const [air, species] = template.fields.map((f) => expected[f.key]);
    const [mantissa, exponent] = air.toExponential(5).split('e');
    const answers = { [template.fields[0].key]: `${mantissa}×10^${Number(exponent)}`, [template.fields[1].key]: species.toExponential(5).toUpperCase() };
    const graded = await crew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, { answers }).then((r) => r);
    expect(graded.status, JSON.stringify(graded.body)).toBe(200);
    expect(graded.body.fields.map((f: { verdict: string }) => f.verdict)).toEqual(['correct', 'correct']);

    const flow = await start(crew, 'velocity-flow');
    const flowExpected = (await stored(flow.body.attempt.id)).expected;
    const withCommas = new Intl.NumberFormat('en-US', { maximumFractionDigits: 1 }).format(flowExpected.dryStdFlow_dscfm);
    expect(withCommas).toContain(',');
    const flowGraded = await crew.post(`/api/drill-attempts/${flow.body.attempt.id}/submission`, { answers: { dryStdFlow_dscfm: withCommas } });
    expect(flowGraded.status).toBe(200);
    expect(flowGraded.body.fields.find((f: { key: string }) => f.key === 'dryStdFlow_dscfm').verdict).toBe('correct');
  });

  it('gives carried-forward credit down the chain after one deliberate early mistake', async () => {
    const res = await start(crew, 'whole-run-reduction');
    const { template, scenario, expected } = await stored(res.body.attempt.id);
    const first = template.fields[0];
    // 30 % off: far outside every tolerance
    const own: Record<string, number> = { [first.key]: expected[first.key] * 1.3 };
    const answers: Record<string, string> = { [first.key]: own[first.key].toPrecision(12) };
    for (const field of template.fields.slice(1)) {
      // worked correctly from the trainee's own earlier values
      const value = field.dependsOn?.length ? template.recompute(field.key, own, scenario) : expected[field.key];
      if (value === undefined) continue;
      own[field.key] = value;
      answers[field.key] = value.toPrecision(12);
    }
    const graded = await crew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, { answers });
    expect(graded.status).toBe(200);
    const verdicts = Object.fromEntries(graded.body.fields.map((f: { key: string; verdict: string }) => [f.key, f.verdict]));
    expect(verdicts[first.key]).toBe('incorrect');
    const carried = graded.body.fields.filter((f: { verdict: string }) => f.verdict === 'carried-forward');
    expect(carried.length).toBeGreaterThan(0);
    for (const field of carried) {
      expect(field.recomputedExpected).toEqual(expect.any(Number));
      expect(field.message).toMatch(/method credit/i);
      // right method on the wrong value: the answer is not the exact one
      expect(Math.abs(field.givenValue - field.expected) / Math.abs(field.expected)).toBeGreaterThan(0.01);
    }
    // nothing is graded "incorrect" except the mistake itself
    expect(graded.body.fields.filter((f: { verdict: string }) => f.verdict === 'incorrect').map((f: { key: string }) => f.key)).toEqual([first.key]);
    expect(graded.body.score).toBeLessThan(100);
    expect(graded.body.score).toBeGreaterThan(0);
  });

  it('refuses malformed numbers with a 400 naming each field, and stores nothing', async () => {
    const res = await start(crew, 'moisture-train');
    const { template, expected } = await stored(res.body.attempt.id);
    const [a, b, c] = template.fields.map((f) => f.key);
    const refused = await crew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, { answers: { [a]: 'twelve', [b]: '1..2', [c]: typed(expected[c]) } });
    expect(refused.status).toBe(400);
    expect(refused.body.error.code).toBe('invalid_answer_format');
    const named = refused.body.error.fields.map((f: { field: string }) => f.field).sort();
    expect(named).toEqual([`answers.${a}`, `answers.${b}`].sort());
    for (const f of refused.body.error.fields) expect(f.message).toMatch(new RegExp(f.field.slice('answers.'.length)));
    const row = await t.knex('drill_attempts').where({ id: res.body.attempt.id }).first();
    expect(row).toMatchObject({ submitted_at: null, answers: null, result: null, score: null });

    // the attempt is still open: fixed answers are graded
    const fixed = await crew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, { answers: { [a]: typed(expected[a]), [b]: typed(expected[b]), [c]: typed(expected[c]) } });
    expect(fixed.status).toBe(200);
    expect(fixed.body.score).toBe(100);
  });

  it('treats blanks as blanks, not errors', async () => {
    const res = await start(crew, 'diluent-correction');
    const graded = await crew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, { answers: {} });
    expect(graded.status).toBe(200);
    expect(graded.body.score).toBe(0);
    expect(graded.body.fields.every((f: { verdict: string }) => f.verdict === 'blank')).toBe(true);
  });

  it('refuses a body that is not answers as text, naming the field', async () => {
    const res = await start(crew, 'diluent-correction');
    const bad = await crew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, { answers: { o2CorrectionFactor: { value: 1 } } });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields[0].field).toBe('answers.o2CorrectionFactor');
    const missing = await crew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, {});
    expect(missing.status).toBe(400);
    expect(missing.body.error.fields[0].field).toBe('answers');
    const unknown = await crew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, { answers: { velocity_fps: '12' } });
    expect(unknown.status).toBe(400);
    expect(unknown.body.error.fields[0].field).toBe('answers.velocity_fps');
  });

  it('refuses a second submission with 409 and keeps the first result', async () => {
    const res = await start(crew, 'gas-molecular-weight');
    const first = await crew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, { answers: { n2_pct: '1' } });
    expect(first.status).toBe(200);
    const again = await crew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, { answers: { n2_pct: '2' } });
    expect(again.status).toBe(409);
    expect(again.body.error.message).toMatch(/already submitted/);
    const row = await t.knex('drill_attempts').where({ id: res.body.attempt.id }).first();
    expect(row.answers).toEqual({ n2_pct: '1' });
  });

  it("answers 404 for another user's attempt and leaves it untouched", async () => {
    const res = await start(crew, 'calibration-error');
    const theirs = await otherCrew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, { answers: {} });
    expect(theirs.status).toBe(404);
    expect((await otherCrew.get(`/api/drill-attempts/${res.body.attempt.id}`)).status).toBe(404);
    expect((await t.knex('drill_attempts').where({ id: res.body.attempt.id }).first()).submitted_at).toBeNull();
    expect((await crew.post('/api/drill-attempts/00000000-0000-4000-8000-000000000000/submission', { answers: {} })).status).toBe(404);
  });
});

describe('history and review', () => {
  it('lists my submitted attempts, newest first, paged, and nobody else sees them', async () => {
    const page = await crew.get('/api/drill-attempts?page=1&pageSize=5').expect(200);
    const total = await t.knex('drill_attempts').where({ user_id: crewId, mode: 'practice' }).whereNotNull('submitted_at').count<{ count: number }[]>('* as count');
    expect(page.body.total).toBe(Number(total[0].count));
    expect(page.body.attempts).toHaveLength(5);
    const times = page.body.attempts.map((a: { submittedAt: string }) => Date.parse(a.submittedAt));
    expect([...times].sort((x, y) => y - x)).toEqual(times);
    for (const a of page.body.attempts) expect(a).toMatchObject({ drillId: expect.any(String), drillTitle: expect.any(String), score: expect.any(Number) });
    expect((await otherCrew.get('/api/drill-attempts').expect(200)).body.total).toBe(0);
    expect((await crew.get('/api/drill-attempts?pageSize=500')).status).toBe(400);
  });

  it('shows an open attempt without answers and a submitted one with its result', async () => {
    const res = await start(crew, 'ppm-to-mg-per-m3');
    const { expected } = await stored(res.body.attempt.id);
    const open = await crew.get(`/api/drill-attempts/${res.body.attempt.id}`).expect(200);
    expect(open.body.attempt.result).toBeUndefined();
    expect(findLeaks([JSON.stringify(open.body)], expected)).toEqual([]);
    await crew.post(`/api/drill-attempts/${res.body.attempt.id}/submission`, { answers: { molarVolume_L: '24' } }).then((r) => expect(r.status).toBe(200));
    const done = await crew.get(`/api/drill-attempts/${res.body.attempt.id}`).expect(200);
    expect(done.body.attempt.result.fields[0]).toMatchObject({ key: 'molarVolume_L', given: '24' });
    expect(done.body.attempt.result.steps.length).toBeGreaterThan(0);
  });
});

describe('GET /api/drills/:id/preview (operators)', () => {
  it('shows the sheet, the expected answers and the steps for a chosen seed', async () => {
    const template = getDrillTemplate('velocity-flow')!;
    const scenario = template.generate(4242);
    const solution = template.solve(scenario);
    const res = await operator.get('/api/drills/velocity-flow/preview?seed=4242').expect(200);
    expect(res.body.seed).toBe(4242);
    expect(res.body.scenario.title).toBe(scenario.title);
    for (const field of res.body.fields) expect(field.expected).toBe(solution.expected[field.key]);
    expect(res.body.steps).toHaveLength(solution.steps.length);
    // the same seed gives the same sheet
    expect((await operator.get('/api/drills/velocity-flow/preview?seed=4242')).body).toEqual(res.body);
  });

  it('picks a seed when none is given, refuses a bad one, and is for operators only', async () => {
    const res = await operator.get('/api/drills/traverse-layout/preview').expect(200);
    expect(Number.isInteger(res.body.seed)).toBe(true);
    const bad = await operator.get('/api/drills/traverse-layout/preview?seed=-4');
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields[0].field).toBe('seed');
    expect((await operator.get('/api/drills/nope/preview?seed=1')).status).toBe(404);
    expect((await crew.get('/api/drills/traverse-layout/preview?seed=1')).status).toBe(403);
  });
});

describe('seats: drills and exams start only for a member holding one', () => {
  it('refuses a member without a seat with 403 no_seat, lets them in once assigned, and stops when the plan lapses', async () => {
    const company = await createCompany(t.knex, 'Saltmarsh Flue Analysts');
    const member = await createUser(t.knex, { companyId: company.id, roles: ['crew'] });
    const agent = await signedIn(t.app, member.email, member.password);
    for (const path of ['/api/drills/moisture-train/attempts', '/api/exams/flow-moisture/attempts']) {
      const res = await agent.post(path);
      expect(res.status, path).toBe(403);
      expect(res.body.error.code, path).toBe('no_seat');
      expect(res.body.error.message, path).toMatch(/seat/);
    }
    // Lessons and the calculators stay open without a seat.
    expect((await agent.get('/api/drills')).status).toBe(200);
    expect((await agent.post('/api/calculations/diluent-correction', { inputs: { concentration: 42, measuredO2_pct: 9, referenceO2_pct: 3 } })).status).toBe(200);

    await t.knex('subscriptions').insert({ company_id: company.id, status: 'active', interval: 'month', quantity: 3, current_period_end: new Date(Date.now() + 20 * 86_400_000) });
    await t.knex('memberships').where({ user_id: member.id }).update({ seat_status: 'assigned', seat_assigned_at: t.knex.fn.now() });
    await expect.poll(async () => (await agent.post('/api/drills/moisture-train/attempts')).status, { timeout: 2_000, interval: 25 }).toBe(200);

    // A cancelled plan keeps its seats to the end of the paid period, then they stop.
    await t.knex('subscriptions').where({ company_id: company.id }).update({ cancel_at_period_end: true, current_period_end: new Date(Date.now() - 1000) });
    await expect.poll(async () => (await agent.post('/api/drills/moisture-train/attempts')).status, { timeout: 2_000, interval: 25 }).toBe(403);
  });
});
