/**
 * Timed exams (issue 4; QUALITY.md, "Exams").
 *
 * - Starting an attempt snapshots the area's blueprint (time limit, pass mark, mix) and draws one
 *   fresh seed per question; the deadline is fixed in the database at the start. Only one attempt
 *   per member and area is active at a time (a partial unique index enforces it under races).
 * - The database clock decides every time question (`clock_timestamp()`), never the client's, so
 *   several app processes agree.
 * - Drafts are saved as typed, one question at a time, and only before the deadline.
 * - Nothing expected leaves the server while the attempt is active: questions go out through the
 *   engine's `publicAttemptView`, and feedback is built only for a closed attempt.
 * - Submitting grades every question strictly (unreadable text is a 400 naming
 *   `questions.<i>.answers.<key>`, and nothing changes). An attempt found past its deadline is
 *   closed as expired by whoever notices first (lazily, on any read or write); the drafts saved
 *   before the deadline are marked then, unreadable text counting as blank, so a dropped
 *   connection loses nothing that reached the server in time.
 * - A pass is recorded in `exam_passes` in the same transaction that closes the attempt; the
 *   certificate is issued from it after commit (issueCertificate below, the one call site).
 */
import type { Knex } from 'knex';
import type { AppContext } from '../context';
import { getDrillTemplate, publicAttemptView, type DrillTemplate } from '../engine/drills';
import { AnswerFormatError, gradeSubmission, type GradeResult } from '../engine/grading';
import type { FieldProblem } from '../../shared/errors';
import { HttpError, badRequest, notFound } from '../middleware/errors';
import { issueCertificateForPass, type IssueOutcome } from './certificates';
import { fieldFeedback, freshSeed, stepView, type FieldFeedback } from './drill-attempts';

type Trx = Knex.Transaction;

export interface QuestionRef {
  index: number;
  drillId: string;
  seed: number;
}

export interface BlueprintSnapshot {
  title: string;
  timeLimitMinutes: number;
  passMarkPct: number;
  questionCount: number;
  mix: { drill: string; count: number }[];
  questions: QuestionRef[];
}

type Drafts = Record<string, Record<string, string>>;

interface ExamRow {
  id: string;
  user_id: string;
  company_id: string | null;
  area_id: string;
  blueprint: BlueprintSnapshot;
  started_at: Date;
  deadline_at: Date;
  status: 'active' | 'submitted' | 'expired';
  submitted_at: Date | null;
  closed_at: Date | null;
  score_pct: number | null;
  passed: boolean | null;
  draft_answers: Drafts;
  drafts_saved_at: Date | null;
}

interface LockedRow extends ExamRow {
  server_now: Date;
  past_deadline: boolean;
}

/** A 409 that tells the client which attempt is already running, so it can resume it. */
export class ExamInProgressError extends HttpError {
  constructor(public readonly activeAttemptId: string, deadline: Date) {
    super(
      409,
      'exam_in_progress',
      `You already have this exam in progress (it closes at ${clockTime(deadline)}). Resume that attempt; a new one can start once it is submitted or its time runs out.`,
    );
  }
}

const clockTime = (d: Date) => `${d.toISOString().slice(11, 19)} UTC on ${d.toISOString().slice(0, 10)}`;

const timeUp = (row: Pick<ExamRow, 'deadline_at'>, closing?: ClosedSummary) =>
  new HttpError(
    409,
    'exam_time_up',
    `The time for this exam ran out at ${clockTime(row.deadline_at)}; answers sent after that are not accepted.` +
      (closing ? ` The answers saved before then were marked: ${closing.scorePct.toFixed(1)} % (pass mark ${closing.passMarkPct} %).` : ''),
  );

const alreadyClosed = (row: Pick<ExamRow, 'status' | 'closed_at' | 'deadline_at'>) =>
  row.status === 'submitted'
    ? new HttpError(409, 'exam_closed', `This exam attempt was already submitted${row.closed_at ? ` at ${clockTime(row.closed_at)}` : ''}; its result stands.`)
    : new HttpError(409, 'exam_time_up', `The time for this exam ran out at ${clockTime(row.deadline_at)}; it takes no more answers.`);

function templateOf(drillId: string): DrillTemplate {
  const template = getDrillTemplate(drillId);
  // A snapshot names only drills the registry had; a missing one means the code lost a drill.
  if (!template) throw new Error(`Exam question names drill ${drillId}, which the registry no longer has.`);
  return template;
}

/** The row, locked for this transaction, with the database's own idea of now. */
async function lockAttempt(trx: Trx, userId: string, attemptId: string): Promise<LockedRow> {
  const row = await trx('exam_attempts')
    .where({ id: attemptId, user_id: userId })
    .forUpdate()
    .first<LockedRow>('*', trx.raw('clock_timestamp() as server_now'), trx.raw('deadline_at <= clock_timestamp() as past_deadline'));
  if (!row) throw notFound('Exam attempt');
  return row;
}

// Certificates -------------------------------------------------------------------------------

export interface CertificateOutcome {
  /** issued: a certificate stands for this pass; pending: issuing failed and the pass waits for the retry sweep. */
  status: 'issued' | 'pending';
  /** The issuer's own word: issued, renewed, already-issued or already-current. */
  outcome?: IssueOutcome['outcome'];
  number?: string;
  expiresOn?: string;
}

/**
 * THE call site that turns a recorded pass into a certificate, after the closing transaction has
 * committed. The issuer is idempotent and a sweep retries unconsumed passes, so a failure here
 * leaves the pass waiting and never undoes it.
 */
export async function issueCertificate(ctx: AppContext, passId: string): Promise<CertificateOutcome> {
  try {
    const issued = await issueCertificateForPass(ctx, passId);
    return {
      status: 'issued',
      outcome: issued.outcome,
      ...(issued.certificate ? { number: issued.certificate.number, expiresOn: issued.certificate.expiresOn } : {}),
    };
  } catch (err) {
    ctx.logger.error({ err, passId }, 'certificate issue failed; the pass is kept for the retry sweep');
    return { status: 'pending' };
  }
}

// Closing an attempt -------------------------------------------------------------------------

interface QuestionGrade {
  ref: QuestionRef;
  template: DrillTemplate;
  answers: Record<string, string>;
  result: GradeResult;
}

export interface ClosedSummary {
  scorePct: number;
  passed: boolean;
  passMarkPct: number;
  passId: string | null;
}

const fieldsOfFormatError = (error: AnswerFormatError) => error.fields.map((f) => (f.field.startsWith('answers.') ? f.field.slice('answers.'.length) : f.field));

/** Strict grading for a submission: every unreadable answer of every question is listed (400). */
function gradeStrict(row: ExamRow): QuestionGrade[] {
  const problems: FieldProblem[] = [];
  const graded: QuestionGrade[] = [];
  for (const ref of row.blueprint.questions) {
    const template = templateOf(ref.drillId);
    const answers = row.draft_answers[String(ref.index)] ?? {};
    try {
      graded.push({ ref, template, answers, result: gradeSubmission(template, template.generate(ref.seed), answers) });
    } catch (error) {
      if (!(error instanceof AnswerFormatError)) throw error;
      for (const f of error.fields) {
        const key = f.field.startsWith('answers.') ? f.field.slice('answers.'.length) : f.field;
        problems.push({ field: `questions.${ref.index}.answers.${key}`, message: `Question ${ref.index + 1}: ${f.message}` });
      }
    }
  }
  if (problems.length) {
    throw new HttpError(
      400,
      'invalid_answer_format',
      `${problems.length === 1 ? 'One answer' : `${problems.length} answers`} could not be read as ${problems.length === 1 ? 'a number' : 'numbers'}; nothing was submitted. Fix ${problems.length === 1 ? 'it' : 'them'} (or clear ${problems.length === 1 ? 'it' : 'them'}) and submit again.`,
      problems,
    );
  }
  return graded;
}

/** Grading at the deadline: what was saved in time counts; unreadable text counts as blank, and says so. */
function gradeLenient(row: ExamRow): QuestionGrade[] {
  return row.blueprint.questions.map((ref) => {
    const template = templateOf(ref.drillId);
    const scenario = template.generate(ref.seed);
    const answers = row.draft_answers[String(ref.index)] ?? {};
    let usable: Record<string, string> = { ...answers };
    let unreadable: string[] = [];
    let result: GradeResult;
    try {
      result = gradeSubmission(template, scenario, usable);
    } catch (error) {
      if (!(error instanceof AnswerFormatError)) throw error;
      unreadable = fieldsOfFormatError(error);
      usable = Object.fromEntries(Object.entries(answers).filter(([key]) => !unreadable.includes(key)));
      result = gradeSubmission(template, scenario, usable);
      result = {
        ...result,
        fields: result.fields.map((f) =>
          unreadable.includes(f.key)
            ? { ...f, given: answers[f.key]?.trim() ?? null, message: `"${answers[f.key]?.trim()}" could not be read as a number, so it was marked as blank. ${f.message}` }
            : f,
        ),
      };
    }
    return { ref, template, answers, result };
  });
}

/** Closes a locked active attempt: stores each question's result, the score, and a pass when earned. */
async function closeAttempt(trx: Trx, row: ExamRow, how: 'submitted' | 'expired', graded: QuestionGrade[]): Promise<ClosedSummary> {
  const scores = graded.map((g) => g.result.score);
  const scorePct = scores.length ? scores.reduce((a, b) => a + b, 0) / scores.length : 0;
  const passMarkPct = row.blueprint.passMarkPct;
  const passed = scorePct >= passMarkPct;

  for (const g of graded) {
    await trx('drill_attempts')
      .where({ exam_attempt_id: row.id, question_index: g.ref.index })
      .update({
        submitted_at: trx.fn.now(),
        answers: JSON.stringify(g.answers),
        result: JSON.stringify({ fields: g.result.fields.map(fieldFeedback) }),
        score: g.result.score,
      });
  }
  const [closed] = await trx('exam_attempts')
    .where({ id: row.id, status: 'active' })
    .update({
      status: how,
      submitted_at: how === 'submitted' ? trx.raw('clock_timestamp()') : null,
      closed_at: trx.raw('clock_timestamp()'),
      score_pct: scorePct,
      passed,
    })
    .returning(['closed_at']);
  if (!closed) throw new Error(`Exam attempt ${row.id} was not active when closing it.`);

  let passId: string | null = null;
  if (passed) {
    const limitSeconds = row.blueprint.timeLimitMinutes * 60;
    const taken = Math.round(((closed.closed_at as Date).getTime() - new Date(row.started_at).getTime()) / 1000);
    const [pass] = await trx('exam_passes')
      .insert({
        user_id: row.user_id,
        company_id: row.company_id,
        area_id: row.area_id,
        exam_attempt_id: row.id,
        score_pct: Math.round(scorePct * 100) / 100,
        duration_seconds: Math.max(0, Math.min(taken, limitSeconds)),
        passed_at: closed.closed_at,
      })
      .returning('id');
    passId = pass.id as string;
  }
  return { scorePct, passed, passMarkPct, passId };
}

/** Closes one attempt that may be past its deadline; returns the pass to certify, if any. */
async function expireIfDue(trx: Trx, row: LockedRow): Promise<ClosedSummary | null> {
  if (row.status !== 'active' || !row.past_deadline) return null;
  return closeAttempt(trx, row, 'expired', gradeLenient(row));
}

/** Runs `work` in a transaction, then (after commit) issues certificates for the passes it recorded. */
async function withPasses<T>(ctx: AppContext, work: (trx: Trx, passes: string[]) => Promise<T>): Promise<{ value: T; certificates: CertificateOutcome[] }> {
  const passes: string[] = [];
  const value = await ctx.knex.transaction((trx) => work(trx, passes));
  const certificates: CertificateOutcome[] = [];
  for (const passId of passes) certificates.push(await issueCertificate(ctx, passId));
  return { value, certificates };
}

/**
 * Refuses a request that came too late. The attempt is closed as expired in a transaction that
 * commits first (a refusal thrown inside it would roll the closing back), then the 409 is thrown.
 */
async function refuseLate(ctx: AppContext, userId: string, attemptId: string): Promise<never> {
  const { value } = await withPasses(ctx, async (trx, passes) => {
    const row = await lockAttempt(trx, userId, attemptId);
    const closing = await expireIfDue(trx, row);
    if (closing?.passId) passes.push(closing.passId);
    if (closing) return timeUp(row, closing);
    return row.status === 'active' ? null : alreadyClosed(row);
  });
  if (value) throw value;
  // Neither closed nor late after all: the row changed between two statements. Harmless; try again.
  throw new HttpError(409, 'exam_retry', 'The exam attempt changed while this request was on its way; send it again.');
}

/** Closes every active attempt past its deadline (for one member, or all): the lazy sweep. */
export async function closeExpiredAttempts(ctx: AppContext, opts: { userId?: string } = {}) {
  const query = ctx.knex('exam_attempts').where({ status: 'active' }).andWhere('deadline_at', '<=', ctx.knex.raw('clock_timestamp()'));
  if (opts.userId) query.andWhere({ user_id: opts.userId });
  const due = await query.select<{ id: string; user_id: string }[]>('id', 'user_id');
  for (const { id, user_id: userId } of due) {
    await withPasses(ctx, async (trx, passes) => {
      const closing = await expireIfDue(trx, await lockAttempt(trx, userId, id));
      if (closing?.passId) passes.push(closing.passId);
    });
  }
  return due.length;
}

// Views --------------------------------------------------------------------------------------

const summaryOf = (b: BlueprintSnapshot) => ({
  title: b.title,
  timeLimitMinutes: b.timeLimitMinutes,
  passMarkPct: b.passMarkPct,
  questionCount: b.questionCount,
});

async function areaName(db: Knex | Trx, areaId: string) {
  return ((await db('areas').where({ id: areaId }).first('name')) as { name: string } | undefined)?.name ?? areaId;
}

/** An active attempt as the exam runner sees it: the sheets, blank fields and my drafts. No expected value. */
function activeView(row: ExamRow, name: string, serverNow: Date) {
  return {
    id: row.id,
    areaId: row.area_id,
    areaName: name,
    status: row.status,
    ...summaryOf(row.blueprint),
    startedAt: row.started_at,
    deadline: row.deadline_at,
    serverNow,
    draftsSavedAt: row.drafts_saved_at,
    questions: row.blueprint.questions.map((ref) => {
      const template = templateOf(ref.drillId);
      const view = publicAttemptView(template, template.generate(ref.seed));
      return { index: ref.index, drillId: template.id, drillTitle: template.title, scenario: view.scenario, fields: view.fields, answers: row.draft_answers[String(ref.index)] ?? {} };
    }),
  };
}

interface QuestionRow {
  question_index: number;
  answers: Record<string, string> | null;
  result: { fields: FieldFeedback[] } | null;
  score: number | null;
}

/** A closed attempt with per-question feedback: now the expected values and worked steps may show. */
async function closedView(db: Knex | Trx, row: ExamRow, name: string, serverNow: Date) {
  const questionRows = await db('drill_attempts').where({ exam_attempt_id: row.id }).select<QuestionRow[]>('question_index', 'answers', 'result', 'score');
  const byIndex = new Map(questionRows.map((q) => [q.question_index, q]));
  return {
    id: row.id,
    areaId: row.area_id,
    areaName: name,
    status: row.status,
    ...summaryOf(row.blueprint),
    startedAt: row.started_at,
    deadline: row.deadline_at,
    serverNow,
    submittedAt: row.submitted_at,
    closedAt: row.closed_at,
    closedBy: row.status === 'submitted' ? 'submission' : 'deadline',
    scorePct: row.score_pct,
    passed: row.passed,
    questions: row.blueprint.questions.map((ref) => {
      const template = templateOf(ref.drillId);
      const scenario = template.generate(ref.seed);
      const view = publicAttemptView(template, scenario);
      const stored = byIndex.get(ref.index);
      return {
        index: ref.index,
        drillId: template.id,
        drillTitle: template.title,
        scenario: view.scenario,
        fields: view.fields,
        answers: stored?.answers ?? row.draft_answers[String(ref.index)] ?? {},
        score: stored?.score ?? 0,
        feedback: stored?.result?.fields ?? [],
        steps: template.solve(scenario).steps.map(stepView),
      };
    }),
  };
}

async function attemptView(db: Knex | Trx, row: ExamRow, serverNow: Date) {
  const name = await areaName(db, row.area_id);
  return row.status === 'active' ? activeView(row, name, serverNow) : closedView(db, row, name, serverNow);
}

// Operations ---------------------------------------------------------------------------------

interface BlueprintRow {
  area_id: string;
  area_name: string;
  title: string;
  time_limit_minutes: number;
  pass_mark_pct: number;
  question_count: number;
  mix: { drill: string; count: number }[];
}

/** Every area's exam with its blueprint summary, my attempt in progress and my latest result. */
export async function listExams(ctx: AppContext, userId: string) {
  await closeExpiredAttempts(ctx, { userId });
  const { knex } = ctx;
  const [blueprints, active, last, passes, [{ now }]] = await Promise.all([
    knex('exam_blueprints')
      .join('areas', 'areas.id', 'exam_blueprints.area_id')
      .orderBy('areas.sort_order')
      .select<BlueprintRow[]>('exam_blueprints.*', 'areas.name as area_name'),
    knex('exam_attempts').where({ user_id: userId, status: 'active' }).select<ExamRow[]>('id', 'area_id', 'started_at', 'deadline_at', 'drafts_saved_at', 'draft_answers', 'blueprint'),
    knex('exam_attempts')
      .distinctOn('area_id')
      .where({ user_id: userId })
      .whereNot({ status: 'active' })
      .orderBy([{ column: 'area_id' }, { column: 'closed_at', order: 'desc' }])
      .select<ExamRow[]>('id', 'area_id', 'status', 'score_pct', 'passed', 'closed_at', 'blueprint'),
    knex('exam_passes')
      .distinctOn('area_id')
      .where({ user_id: userId })
      .orderBy([{ column: 'area_id' }, { column: 'passed_at', order: 'desc' }])
      .select<{ area_id: string; passed_at: Date; score_pct: string }[]>('area_id', 'passed_at', 'score_pct'),
    knex.select<{ now: Date }[]>(knex.raw('clock_timestamp() as now')),
  ]);
  const activeByArea = new Map(active.map((a) => [a.area_id, a]));
  const lastByArea = new Map(last.map((a) => [a.area_id, a]));
  const passByArea = new Map(passes.map((p) => [p.area_id, p]));
  return {
    serverNow: now,
    exams: blueprints.map((b) => {
      const own = activeByArea.get(b.area_id);
      const previous = lastByArea.get(b.area_id);
      const pass = passByArea.get(b.area_id);
      return {
        areaId: b.area_id,
        areaName: b.area_name,
        title: b.title,
        questionCount: b.question_count,
        timeLimitMinutes: b.time_limit_minutes,
        passMarkPct: b.pass_mark_pct,
        drills: b.mix.map((m) => ({ id: m.drill, title: getDrillTemplate(m.drill)?.title ?? m.drill, count: m.count })),
        active: own
          ? {
              id: own.id,
              startedAt: own.started_at,
              deadline: own.deadline_at,
              questionCount: own.blueprint.questionCount,
              answeredCount: Object.values(own.draft_answers ?? {}).filter((q) => Object.values(q).some((v) => String(v).trim() !== '')).length,
            }
          : null,
        last: previous
          ? { id: previous.id, status: previous.status, scorePct: previous.score_pct, passed: previous.passed, passMarkPct: previous.blueprint.passMarkPct, closedAt: previous.closed_at }
          : null,
        lastPass: pass ? { passedAt: pass.passed_at, scorePct: Number(pass.score_pct) } : null,
      };
    }),
  };
}

function expandMix(mix: { drill: string; count: number }[]): string[] {
  return mix.flatMap((entry) => Array.from({ length: entry.count }, () => entry.drill));
}

/** Starts an attempt: snapshot, fresh seeds, a server deadline. A second active attempt is a 409. */
export async function startExam(ctx: AppContext, who: { userId: string; companyId: string | null }, areaId: string) {
  try {
    const { value } = await withPasses(ctx, async (trx, passes) => {
      const running = await trx('exam_attempts').where({ user_id: who.userId, area_id: areaId, status: 'active' }).first<{ id: string } | undefined>('id');
      if (running) {
        const row = await lockAttempt(trx, who.userId, running.id);
        const closing = await expireIfDue(trx, row);
        if (closing?.passId) passes.push(closing.passId);
        if (!closing) throw new ExamInProgressError(row.id, row.deadline_at);
      }
      const blueprint = await trx('exam_blueprints')
        .join('areas', 'areas.id', 'exam_blueprints.area_id')
        .where('exam_blueprints.area_id', areaId)
        .first<BlueprintRow | undefined>('exam_blueprints.*', 'areas.name as area_name');
      if (!blueprint) throw notFound(`Exam for area "${areaId}"`);
      const drills = expandMix(blueprint.mix);
      if (drills.length !== blueprint.question_count) throw new Error(`Blueprint ${areaId}: the mix adds up to ${drills.length}, not ${blueprint.question_count}.`);
      const questions: QuestionRef[] = drills.map((drillId, index) => ({ index, drillId: templateOf(drillId).id, seed: freshSeed() }));
      const snapshot: BlueprintSnapshot = {
        title: blueprint.title,
        timeLimitMinutes: blueprint.time_limit_minutes,
        passMarkPct: blueprint.pass_mark_pct,
        questionCount: blueprint.question_count,
        mix: blueprint.mix.map((m) => ({ drill: m.drill, count: m.count })),
        questions,
      };
      const [row] = await trx('exam_attempts')
        .insert({
          user_id: who.userId,
          company_id: who.companyId,
          area_id: areaId,
          blueprint: JSON.stringify(snapshot),
          started_at: trx.raw('clock_timestamp()'),
          deadline_at: trx.raw('clock_timestamp() + make_interval(mins => ?)', [snapshot.timeLimitMinutes]),
        })
        .returning<ExamRow[]>('*');
      await trx('drill_attempts').insert(
        questions.map((q) => ({
          user_id: who.userId,
          company_id: who.companyId,
          drill_id: q.drillId,
          seed: q.seed,
          mode: 'exam',
          exam_attempt_id: row.id,
          question_index: q.index,
        })),
      );
      return activeView(row, blueprint.area_name, row.started_at);
    });
    return { attempt: value };
  } catch (error) {
    // Two starts at once: the partial unique index lets one through; the other resumes it.
    if ((error as { code?: string; constraint?: string }).code === '23505' && (error as { constraint?: string }).constraint === 'exam_attempts_one_active') {
      const running = await ctx.knex('exam_attempts').where({ user_id: who.userId, area_id: areaId, status: 'active' }).first<{ id: string; deadline_at: Date } | undefined>('id', 'deadline_at');
      if (running) throw new ExamInProgressError(running.id, running.deadline_at);
    }
    throw error;
  }
}

/** Resume or review one of my attempts. An active one past its deadline is closed first. */
export async function getExamAttempt(ctx: AppContext, userId: string, attemptId: string) {
  const { value, certificates } = await withPasses(ctx, async (trx, passes) => {
    const row = await lockAttempt(trx, userId, attemptId);
    const closing = await expireIfDue(trx, row);
    if (closing?.passId) passes.push(closing.passId);
    const current = closing ? await trx('exam_attempts').where({ id: row.id }).first<ExamRow>('*') : row;
    return attemptView(trx, current, row.server_now);
  });
  return { attempt: value, ...(certificates.length ? { certificate: certificates[0] } : {}) };
}

/** Largest answer text kept in a draft; anything a person types into one box fits. */
export const DRAFT_TEXT_MAX = 100;

/** Saves one question's answers as typed (unreadable text is fine until submission). */
export async function saveDraft(ctx: AppContext, userId: string, attemptId: string, questionIndex: number, answers: Record<string, string | null>) {
  const row = await ctx.knex('exam_attempts').where({ id: attemptId, user_id: userId }).first<ExamRow | undefined>('id', 'status', 'blueprint', 'closed_at');
  if (!row) throw notFound('Exam attempt');
  if (row.status !== 'active') throw alreadyClosed(row);
  const ref = row.blueprint.questions.find((q) => q.index === questionIndex);
  if (!ref) {
    throw badRequest(`questionIndex must be from 0 to ${row.blueprint.questions.length - 1}.`, [
      { field: 'questionIndex', message: `questionIndex: this exam has questions 0 to ${row.blueprint.questions.length - 1} (counted from 0).` },
    ]);
  }
  const template = templateOf(ref.drillId);
  const known = new Set(template.fields.map((f) => f.key));
  const unknown = Object.keys(answers).filter((key) => !known.has(key));
  if (unknown.length) {
    throw badRequest(
      `Question ${questionIndex + 1} has no answer field${unknown.length > 1 ? 's' : ''} named ${unknown.join(', ')}.`,
      unknown.map((key) => ({ field: `answers.${key}`, message: `answers.${key}: question ${questionIndex + 1} has no answer field of that name; its fields are ${[...known].join(', ')}.` })),
    );
  }
  const draft = Object.fromEntries(template.fields.filter((f) => Object.hasOwn(answers, f.key)).map((f) => [f.key, answers[f.key] ?? '']));

  // One statement: saved only while active and before the deadline, by the database's clock.
  const [saved] = await ctx.knex('exam_attempts')
    .where({ id: attemptId, user_id: userId, status: 'active' })
    .andWhere('deadline_at', '>', ctx.knex.raw('clock_timestamp()'))
    .update({
      draft_answers: ctx.knex.raw('jsonb_set(draft_answers, ?::text[], ?::jsonb, true)', [[String(questionIndex)], JSON.stringify(draft)]),
      drafts_saved_at: ctx.knex.raw('clock_timestamp()'),
    })
    .returning(['drafts_saved_at', 'deadline_at']);
  if (!saved) return refuseLate(ctx, userId, attemptId);
  return { saved: { questionIndex, answers: draft, savedAt: saved.drafts_saved_at as Date }, deadline: saved.deadline_at as Date, serverNow: saved.drafts_saved_at as Date };
}

/** Grades every question and closes the attempt; records the pass; 409 once the time has run out. */
export async function submitExam(ctx: AppContext, userId: string, attemptId: string) {
  const { value, certificates } = await withPasses(ctx, async (trx, passes) => {
    const row = await lockAttempt(trx, userId, attemptId);
    if (row.status !== 'active') throw alreadyClosed(row);
    const expired = await expireIfDue(trx, row);
    // Too late: the closing commits, and the refusal is thrown after it.
    if (expired) {
      if (expired.passId) passes.push(expired.passId);
      return { refusal: timeUp(row, expired) } as const;
    }
    const closing = await closeAttempt(trx, row, 'submitted', gradeStrict(row));
    if (closing.passId) passes.push(closing.passId);
    const closed = await trx('exam_attempts').where({ id: row.id }).first<ExamRow>('*');
    return { view: await closedView(trx, closed, await areaName(trx, row.area_id), row.server_now), passId: closing.passId } as const;
  });
  if ('refusal' in value) throw value.refusal;
  return { attempt: value.view, pass: value.passId ? { id: value.passId } : null, certificate: certificates[0] ?? null };
}

/** My closed attempts, newest first. */
export async function listExamAttempts(ctx: AppContext, userId: string, opts: { page: number; pageSize: number }) {
  await closeExpiredAttempts(ctx, { userId });
  const base = ctx.knex('exam_attempts').where({ 'exam_attempts.user_id': userId }).whereNot({ status: 'active' });
  const [{ count }] = await base.clone().count<{ count: number }[]>('* as count');
  const rows = await base
    .clone()
    .join('areas', 'areas.id', 'exam_attempts.area_id')
    .orderBy([{ column: 'closed_at', order: 'desc' }, { column: 'exam_attempts.id', order: 'desc' }])
    .offset((opts.page - 1) * opts.pageSize)
    .limit(opts.pageSize)
    .select<(ExamRow & { area_name: string })[]>('exam_attempts.*', 'areas.name as area_name');
  return {
    total: Number(count),
    page: opts.page,
    pageSize: opts.pageSize,
    attempts: rows.map((r) => ({
      id: r.id,
      areaId: r.area_id,
      areaName: r.area_name,
      title: r.blueprint.title,
      status: r.status,
      scorePct: r.score_pct,
      passed: r.passed,
      passMarkPct: r.blueprint.passMarkPct,
      startedAt: r.started_at,
      closedAt: r.closed_at,
    })),
  };
}
