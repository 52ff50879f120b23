/**
 * Exam integrity (QUALITY.md, "Exams"): the deadline is kept on the server, late answers are
 * refused, no response carries an expected answer before the attempt closes, an attempt survives
 * a server restart, one active attempt per member and area, and a pass is recorded once.
 * Right answers are worked out here from the seeds the server stored, through the drill
 * templates' own solve(), never hard-coded.
 */
import pino from 'pino';
import type { Response } from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../helpers/app';
import { signedIn, type TestAgent } from '../helpers/agent';
import { createCompany, createUser } from '../helpers/factory';
import { expectedFor, findLeaks } from '../helpers/expected-leaks';
import { createApp } from '../../server/app';
import { loadConfig } from '../../server/config';
import type { AppContext } from '../../server/context';
import { createDb } from '../../server/db';
import { createMailer } from '../../server/mail/mailer';
import { getDrillTemplate } from '../../server/engine/drills';
import { syncContent } from '../../server/services/content-sync';
import { startJobs } from '../../server/jobs';

let t: TestApp;
let companyId: string;
const closers: (() => Promise<void>)[] = [];

beforeAll(async () => {
  t = await createTestApp();
  await syncContent(t.knex);
  companyId = (await createCompany(t.knex, 'Coldharbour Source Testing')).id;
});
afterAll(async () => {
  for (const close of closers.reverse()) await close();
  await t.close();
});

/** A fresh crew member, signed in: every test has its own, so one active attempt per area never clashes. */
async function crewMember(app = t.app) {
  const user = await createUser(t.knex, { companyId, roles: ['crew'], seat: true });
  return { user, agent: await signedIn(app, user.email, user.password) };
}

interface QuestionRef { index: number; drillId: string; seed: number }

/** The questions the server drew (drill ids and seeds from the stored snapshot) with their exact answers. */
async function solvedQuestions(attemptId: string) {
  const row = await t.knex('exam_attempts').where({ id: attemptId }).first();
  return (row.blueprint.questions as QuestionRef[]).map((q) => ({ ...q, expected: expectedFor(q.drillId, q.seed) }));
}

/** Right answers typed to four figures: inside every tolerance, and never a spelling the leak search looks for. */
function rightAnswers(expected: Record<string, number>) {
  return Object.fromEntries(Object.entries(expected).map(([key, value]) => [key, value.toPrecision(4)]));
}

async function startExam(agent: TestAgent, areaId: string) {
  const res = await agent.post(`/api/exams/${areaId}/attempts`);
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  return res;
}

/** Moves an attempt's clock back so that its deadline is `secondsAgo` in the past. */
async function pastDeadline(attemptId: string, secondsAgo = 60) {
  await t.knex('exam_attempts').where({ id: attemptId }).update({
    started_at: t.knex.raw("clock_timestamp() - interval '2 hours'"),
    deadline_at: t.knex.raw('clock_timestamp() - make_interval(secs => ?)', [secondsAgo]),
  });
}

describe('GET /api/exams', () => {
  it('lists each area with its blueprint summary', async () => {
    const { agent } = await crewMember();
    const res = await agent.get('/api/exams').expect(200);
    const blueprints = await t.knex('exam_blueprints').select('*');
    expect(res.body.exams).toHaveLength(blueprints.length);
    for (const exam of res.body.exams) {
      const b = blueprints.find((row) => row.area_id === exam.areaId);
      expect(exam).toMatchObject({ questionCount: b.question_count, timeLimitMinutes: b.time_limit_minutes, passMarkPct: b.pass_mark_pct, active: null, last: null });
    }
    expect(Date.parse(res.body.serverNow)).not.toBeNaN();
  });
});

describe('a whole exam session', () => {
  it('never sends an expected answer before submission; then passes, records one pass and gives per-question feedback', async () => {
    const { user, agent } = await crewMember();
    const responses: Response[] = [];
    const keep = (res: Response) => {
      responses.push(res);
      return res;
    };

    keep(await agent.get('/api/exams').expect(200));
    const started = keep(await startExam(agent, 'flow-moisture'));
    const { attempt } = started.body;
    const questions = await solvedQuestions(attempt.id);
    expect(attempt.questions).toHaveLength(questions.length);
    expect(Date.parse(attempt.deadline) - Date.parse(attempt.startedAt)).toBeCloseTo(attempt.timeLimitMinutes * 60_000, -3);
    for (const q of attempt.questions) {
      expect(q.fields).toEqual(getDrillTemplate(q.drillId)!.fields.map((f) => ({ key: f.key, label: f.label, unit: f.unit })));
    }
    keep(await agent.get('/api/exams').expect(200));

    // a first pass through the questions with something half-typed, then the right answers
    for (const q of questions) {
      const [firstKey] = Object.keys(q.expected);
      keep(await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: q.index, answers: { [firstKey]: '1.2e' } }).then((r) => r));
    }
    keep(await agent.get(`/api/exam-attempts/${attempt.id}`).expect(200));
    for (const q of questions) {
      const res = keep(await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: q.index, answers: rightAnswers(q.expected) }));
      expect(res.status, JSON.stringify(res.body)).toBe(200);
    }
    const resumed = keep(await agent.get(`/api/exam-attempts/${attempt.id}`).expect(200));
    expect(resumed.body.attempt.questions.map((q: { answers: unknown }) => q.answers)).toEqual(questions.map((q) => rightAnswers(q.expected)));
    keep(await agent.get('/api/exam-attempts').expect(200));

    for (const res of responses) expect(res.status, JSON.stringify(res.body)).toBeLessThan(300);
    const texts = responses.map((res) => JSON.stringify(res.body));
    const leaks = questions.flatMap((q) => findLeaks(texts, q.expected, `question ${q.index + 1} (${q.drillId}): `));
    expect(leaks.slice(0, 10)).toEqual([]);
    for (const text of texts) {
      expect(text).not.toContain('"expected"');
      expect(text).not.toContain('"seed"');
    }
    // the search would have found a value had one been there: the submission's feedback has them all
    const submitted = await agent.post(`/api/exam-attempts/${attempt.id}/submission`);
    expect(submitted.status, JSON.stringify(submitted.body)).toBe(200);
    const feedbackText = JSON.stringify(submitted.body);
    for (const q of questions) expect(findLeaks([feedbackText], q.expected).length).toBeGreaterThan(0);

    const result = submitted.body.attempt;
    expect(result).toMatchObject({ status: 'submitted', passed: true, closedBy: 'submission' });
    expect(result.scorePct).toBeGreaterThanOrEqual(result.passMarkPct);
    expect(result.questions).toHaveLength(questions.length);
    for (const q of result.questions) {
      const exact = questions[q.index].expected;
      expect(q.feedback.map((f: { key: string }) => f.key)).toEqual(Object.keys(exact));
      for (const f of q.feedback) {
        expect(f.verdict, `question ${q.index + 1} ${f.key}`).toBe('correct');
        expect(f.expected).toBeCloseTo(exact[f.key], 8);
      }
      expect(q.score).toBe(100);
      expect(q.steps.length).toBeGreaterThan(0);
    }

    const passes = await t.knex('exam_passes').where({ user_id: user.id });
    expect(passes).toHaveLength(1);
    expect(passes[0]).toMatchObject({ area_id: 'flow-moisture', exam_attempt_id: attempt.id, company_id: companyId });
    expect(Number(passes[0].score_pct)).toBeCloseTo(result.scorePct, 1);
    expect(submitted.body.pass).toEqual({ id: passes[0].id });
    // the pass becomes a certificate once the attempt has closed
    const certificates = await t.knex('certificates').where({ exam_pass_id: passes[0].id });
    expect(certificates).toHaveLength(1);
    expect(submitted.body.certificate).toMatchObject({ status: 'issued', outcome: 'issued', number: certificates[0].number });
    expect((await t.knex('exam_passes').where({ id: passes[0].id }).first()).certificate_id).toBe(certificates[0].id);
    const pdf = await agent.get(`/api/certificates/${certificates[0].number}/pdf`);
    expect(pdf.status).toBe(200);
    expect(pdf.headers['content-type']).toBe('application/pdf');

    // a closed attempt takes nothing more, and the pass stays single
    const again = await agent.post(`/api/exam-attempts/${attempt.id}/submission`);
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe('exam_closed');
    const late = await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: 0, answers: {} });
    expect(late.status).toBe(409);
    expect(await t.knex('exam_passes').where({ user_id: user.id })).toHaveLength(1);
    const listed = await agent.get('/api/exams').expect(200);
    const flow = listed.body.exams.find((e: { areaId: string }) => e.areaId === 'flow-moisture');
    expect(flow.active).toBeNull();
    expect(flow.last).toMatchObject({ id: attempt.id, status: 'submitted', passed: true });
    expect(flow.lastPass).not.toBeNull();
  });
});

describe("the deadline is the server's", () => {
  it('refuses a submission after the deadline with 409 and closes the attempt', async () => {
    const { user, agent } = await crewMember();
    const { attempt } = (await startExam(agent, 'emission-rates')).body;
    const questions = await solvedQuestions(attempt.id);
    // right answers saved in time for one question only: well under the pass mark
    await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: 0, answers: rightAnswers(questions[0].expected) }).then((r) => expect(r.status).toBe(200));
    await pastDeadline(attempt.id);
    const deadline = (await t.knex('exam_attempts').where({ id: attempt.id }).first()).deadline_at as Date;

    const res = await agent.post(`/api/exam-attempts/${attempt.id}/submission`);
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('exam_time_up');
    expect(res.body.error.message).toMatch(/the time for this exam ran out at/i);
    expect(res.body.error.message).toContain(deadline.toISOString().slice(11, 19));

    const row = await t.knex('exam_attempts').where({ id: attempt.id }).first();
    expect(row.status).toBe('expired');
    expect(row.closed_at).not.toBeNull();
    expect(row.submitted_at).toBeNull();
    expect(row.passed).toBe(false);
    expect(await t.knex('exam_passes').where({ user_id: user.id })).toHaveLength(0);

    // now closed, the review shows what was saved in time and the feedback
    const review = await agent.get(`/api/exam-attempts/${attempt.id}`).expect(200);
    expect(review.body.attempt).toMatchObject({ status: 'expired', closedBy: 'deadline', passed: false });
    expect(review.body.attempt.questions[0].score).toBe(100);
    expect(review.body.attempt.questions[1].feedback.every((f: { verdict: string }) => f.verdict === 'blank')).toBe(true);
  });

  it('refuses late answers and keeps the drafts as they were at the deadline', async () => {
    const { agent } = await crewMember();
    const { attempt } = (await startExam(agent, 'ambient-conversions')).body;
    const [firstField] = attempt.questions[0].fields;
    await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: 0, answers: { [firstField.key]: '2.5e19' } }).then((r) => expect(r.status).toBe(200));
    await pastDeadline(attempt.id, 1);

    const late = await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: 0, answers: { [firstField.key]: '9.9e19' } });
    expect(late.status).toBe(409);
    expect(late.body.error.message).toMatch(/ran out at/);
    const row = await t.knex('exam_attempts').where({ id: attempt.id }).first();
    expect(row.status).toBe('expired');
    expect(row.draft_answers['0']).toEqual({ [firstField.key]: '2.5e19' });
    const stored = await t.knex('drill_attempts').where({ exam_attempt_id: attempt.id, question_index: 0 }).first();
    expect(stored.answers).toEqual({ [firstField.key]: '2.5e19' });
  });

  it('closes an expired attempt when it is next read, marking what was saved in time (a pass counts once)', async () => {
    const { user, agent } = await crewMember();
    const { attempt } = (await startExam(agent, 'monitor-audits')).body;
    const questions = await solvedQuestions(attempt.id);
    for (const q of questions) {
      const answers = rightAnswers(q.expected);
      // one unreadable answer saved in time: marked as blank, not refused
      if (q.index === 0) answers[Object.keys(answers)[0]] = 'twelve';
      await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: q.index, answers }).then((r) => expect(r.status).toBe(200));
    }
    await pastDeadline(attempt.id);

    const [first, second] = await Promise.all([agent.get(`/api/exam-attempts/${attempt.id}`), agent.get('/api/exams')]);
    expect(first.status).toBe(200);
    expect(second.status).toBe(200);
    expect(first.body.attempt).toMatchObject({ status: 'expired', passed: true });
    const unreadable = first.body.attempt.questions[0].feedback[0];
    expect(unreadable).toMatchObject({ verdict: 'blank', given: 'twelve' });
    expect(unreadable.message).toMatch(/could not be read as a number/);
    expect(await t.knex('exam_passes').where({ user_id: user.id, exam_attempt_id: attempt.id })).toHaveLength(1);
    expect((await agent.post(`/api/exam-attempts/${attempt.id}/submission`)).status).toBe(409);
    expect(await t.knex('exam_passes').where({ user_id: user.id })).toHaveLength(1);
    expect(await t.knex('certificates').where({ user_id: user.id, area_id: 'monitor-audits' })).toHaveLength(1);
  });
});

describe('one active attempt per member and area', () => {
  it('answers a second start with 409 naming the running attempt, also when both arrive at once', async () => {
    const { agent } = await crewMember();
    const first = (await startExam(agent, 'gas-analysis')).body.attempt;
    const second = await agent.post('/api/exams/gas-analysis/attempts');
    expect(second.status).toBe(409);
    expect(second.body.error).toMatchObject({ code: 'exam_in_progress', activeAttemptId: first.id });
    expect(second.body.error.message).toMatch(/already have this exam in progress/);
    // another area is a different exam
    expect((await agent.post('/api/exams/particulate/attempts')).status).toBe(200);

    const racer = (await crewMember()).agent;
    const raced = await Promise.all(Array.from({ length: 5 }, () => racer.post('/api/exams/gas-analysis/attempts')));
    expect(raced.map((r) => r.status).sort()).toEqual([200, 409, 409, 409, 409]);
    const winner = raced.find((r) => r.status === 200)!.body.attempt.id;
    for (const r of raced.filter((x) => x.status === 409)) expect(r.body.error.activeAttemptId).toBe(winner);
  });

  it('lets a new attempt start once the running one is submitted or its time ran out', async () => {
    const { agent } = await crewMember();
    const first = (await startExam(agent, 'particulate')).body.attempt;
    await agent.post(`/api/exam-attempts/${first.id}/submission`).then((r) => expect(r.status).toBe(200));
    const second = (await startExam(agent, 'particulate')).body.attempt;
    expect(second.id).not.toBe(first.id);
    await pastDeadline(second.id);
    const third = (await startExam(agent, 'particulate')).body.attempt;
    expect((await t.knex('exam_attempts').where({ id: second.id }).first()).status).toBe('expired');
    // new numbers each time
    const seeds = async (id: string) => ((await t.knex('exam_attempts').where({ id }).first()).blueprint.questions as QuestionRef[]).map((q) => q.seed);
    expect(await seeds(third.id)).not.toEqual(await seeds(first.id));
  });

  it('snapshots the blueprint: an operator edit does not change a running exam', async () => {
    const { agent } = await crewMember();
    const before = await t.knex('exam_blueprints').where({ area_id: 'ambient-conversions' }).first();
    const { attempt } = (await startExam(agent, 'ambient-conversions')).body;
    await t.knex('exam_blueprints').where({ area_id: 'ambient-conversions' }).update({ time_limit_minutes: 5, pass_mark_pct: 95 });
    try {
      const resumed = await agent.get(`/api/exam-attempts/${attempt.id}`).expect(200);
      expect(resumed.body.attempt).toMatchObject({ timeLimitMinutes: before.time_limit_minutes, passMarkPct: before.pass_mark_pct, deadline: attempt.deadline });
    } finally {
      await t.knex('exam_blueprints').where({ area_id: 'ambient-conversions' }).update({ time_limit_minutes: before.time_limit_minutes, pass_mark_pct: before.pass_mark_pct });
    }
  });
});

describe('an attempt survives a server restart', () => {
  it('resumes on a second app instance over the same database with the same questions, drafts and deadline', async () => {
    const { user, agent } = await crewMember();
    const { attempt } = (await startExam(agent, 'flow-moisture')).body;
    const drafts = [
      { questionIndex: 0, answers: Object.fromEntries(attempt.questions[0].fields.map((f: { key: string }, i: number) => [f.key, i === 0 ? '14.2' : 'half-typed 3.'])) },
      { questionIndex: 2, answers: { [attempt.questions[2].fields[0].key]: '0.8123' } },
    ];
    for (const d of drafts) await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, d).then((r) => expect(r.status).toBe(200));

    // the "restarted" server: the same wiring as the app factory's callers, on the same database
    const config = loadConfig({ ...process.env, NODE_ENV: 'test', DATABASE_URL: t.databaseUrl, LOGIN_RATE_MAX: '1000' });
    const logger = pino({ level: 'silent' });
    const knex = createDb(t.databaseUrl, { min: 0, max: 4 });
    const mailer = createMailer(config, logger);
    const ctx: AppContext = { config, knex, logger, mailer };
    const restarted = createApp(ctx);
    closers.push(async () => {
      mailer.close();
      await restarted.close();
      await knex.destroy();
    });

    const again = await signedIn(restarted.app, user.email, user.password);
    const resumed = await again.get(`/api/exam-attempts/${attempt.id}`).expect(200);
    expect(resumed.body.attempt.status).toBe('active');
    expect(resumed.body.attempt.deadline).toBe(attempt.deadline);
    expect(resumed.body.attempt.questions.map((q: { scenario: unknown; fields: unknown }) => [q.scenario, q.fields])).toEqual(
      attempt.questions.map((q: { scenario: unknown; fields: unknown }) => [q.scenario, q.fields]),
    );
    expect(resumed.body.attempt.questions[0].answers).toEqual(drafts[0].answers);
    expect(resumed.body.attempt.questions[2].answers).toEqual(drafts[1].answers);
    expect(resumed.body.attempt.questions[1].answers).toEqual({});
    expect(Date.parse(resumed.body.attempt.serverNow)).toBeLessThan(Date.parse(attempt.deadline));
    // and carries on there
    const saved = await again.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: 1, answers: { [attempt.questions[1].fields[0].key]: '7' } });
    expect(saved.status).toBe(200);
  });
});

describe('bad input', () => {
  it('refuses unreadable answers at submission naming questions.<i>.answers.<key>, and keeps the attempt and drafts', async () => {
    const { agent } = await crewMember();
    const { attempt } = (await startExam(agent, 'emission-rates')).body;
    const q0 = attempt.questions[0].fields[0].key;
    const q3 = attempt.questions[3].fields[1].key;
    await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: 0, answers: { [q0]: 'twelve' } }).then((r) => expect(r.status).toBe(200));
    await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: 3, answers: { [q3]: '1..2' } }).then((r) => expect(r.status).toBe(200));

    const res = await agent.post(`/api/exam-attempts/${attempt.id}/submission`);
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('invalid_answer_format');
    expect(res.body.error.fields.map((f: { field: string }) => f.field).sort()).toEqual([`questions.0.answers.${q0}`, `questions.3.answers.${q3}`].sort());
    expect(res.body.error.fields[0].message).toMatch(/^Question \d+: /);
    const row = await t.knex('exam_attempts').where({ id: attempt.id }).first();
    expect(row).toMatchObject({ status: 'active', closed_at: null });
    expect(row.draft_answers['0']).toEqual({ [q0]: 'twelve' });
    expect(await t.knex('drill_attempts').where({ exam_attempt_id: attempt.id }).whereNotNull('submitted_at')).toHaveLength(0);

    // fixed (cleared), the rest blank: blanks are allowed and score zero
    await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: 0, answers: { [q0]: '' } });
    await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: 3, answers: { [q3]: null } });
    const done = await agent.post(`/api/exam-attempts/${attempt.id}/submission`);
    expect(done.status).toBe(200);
    expect(done.body.attempt).toMatchObject({ status: 'submitted', scorePct: 0, passed: false });
    expect(done.body.pass).toBeNull();
  });

  it('refuses drafts that name no field of the question, a question that does not exist, or text too long', async () => {
    const { agent } = await crewMember();
    const { attempt } = (await startExam(agent, 'particulate')).body;
    const put = (body: unknown) => agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, body);
    const unknownKey = await put({ questionIndex: 0, answers: { not_a_field: '1' } });
    expect(unknownKey.status).toBe(400);
    expect(unknownKey.body.error.fields[0].field).toBe('answers.not_a_field');
    const past = await put({ questionIndex: attempt.questions.length, answers: {} });
    expect(past.status).toBe(400);
    expect(past.body.error.fields[0].field).toBe('questionIndex');
    const long = await put({ questionIndex: 0, answers: { [attempt.questions[0].fields[0].key]: '1'.repeat(101) } });
    expect(long.status).toBe(400);
    expect(long.body.error.fields[0].field).toBe(`answers.${attempt.questions[0].fields[0].key}`);
    expect((await put({ answers: {} })).body.error.fields[0].field).toBe('questionIndex');
    expect((await agent.post('/api/exams/not-an-area/attempts')).status).toBe(400);
  });

  it("answers 404 for another member's attempt, whatever the verb", async () => {
    const owner = await crewMember();
    const { attempt } = (await startExam(owner.agent, 'gas-analysis')).body;
    const stranger = (await crewMember()).agent;
    expect((await stranger.get(`/api/exam-attempts/${attempt.id}`)).status).toBe(404);
    expect((await stranger.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: 0, answers: {} })).status).toBe(404);
    expect((await stranger.post(`/api/exam-attempts/${attempt.id}/submission`)).status).toBe(404);
    expect((await t.knex('exam_attempts').where({ id: attempt.id }).first()).status).toBe('active');
    // exam questions are not practice attempts either
    const question = await t.knex('drill_attempts').where({ exam_attempt_id: attempt.id }).first();
    expect((await owner.agent.post(`/api/drill-attempts/${question.id}/submission`, { answers: {} })).status).toBe(404);
  });
});

describe('the scheduled exam sweep', () => {
  it('closes an attempt nobody came back to, records the pass and issues the certificate, once', async () => {
    const { user, agent } = await crewMember();
    const { attempt } = (await startExam(agent, 'ambient-conversions')).body;
    for (const q of await solvedQuestions(attempt.id)) {
      await agent.send('put', `/api/exam-attempts/${attempt.id}/answers`, { questionIndex: q.index, answers: rightAnswers(q.expected) }).then((r) => expect(r.status).toBe(200));
    }
    await pastDeadline(attempt.id);
    // A pass whose certificate was never issued (the process stopped in between) is picked up too.
    await t.knex('exam_passes').insert({ user_id: user.id, company_id: companyId, area_id: 'particulate', score_pct: 91, duration_seconds: 3_100, passed_at: new Date(Date.now() - 3_600_000) });
    const jobs = await startJobs(t.ctx, { schedule: false, pollingIntervalSeconds: 0.5 });
    try {
      await jobs.requestSweep();
      await expect.poll(async () => (await t.knex('exam_attempts').where({ id: attempt.id }).first()).status, { timeout: 15_000, interval: 200 }).toBe('expired');
      await expect.poll(async () => (await t.knex('certificates').where({ user_id: user.id }).pluck('area_id')).sort(), { timeout: 15_000, interval: 200 }).toEqual(['ambient-conversions', 'particulate']);
      await jobs.requestSweep();
      await new Promise((r) => setTimeout(r, 1_500));
      expect(await t.knex('exam_passes').where({ user_id: user.id })).toHaveLength(2);
      expect(await t.knex('certificates').where({ user_id: user.id })).toHaveLength(2);
    } finally {
      await jobs.stop();
    }
  });
});
