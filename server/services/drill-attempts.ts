/**
 * Practice drill attempts: start one on a fresh seed, grade a submission on the server and keep it.
 *
 * An attempt row holds the seed and never the sheet or the answers: the template regenerates the
 * sheet from the seed, so expected values exist only while grading and in the stored result after
 * submission. What the client gets before submitting is `publicAttemptView` (the sheet and blank
 * fields), built from an allow-list in the engine.
 */
import crypto from 'node:crypto';
import type { Knex } from 'knex';
import {
  drillTemplates,
  getDrillTemplate,
  publicAttemptView,
  type DrillScenario,
  type DrillStep,
  type DrillTemplate,
} from '../engine/drills';
import { gradeSubmission, type FieldGrade, type GradeResult } from '../engine/grading';
import { conflict, notFound } from '../middleware/errors';

/** Answers as the client sends them: text as typed, by field key. */
export type TypedAnswers = Readonly<Record<string, string | number | null>>;

/** A fresh seed from the operating system's random source; drill seeds are 32-bit (engine/drills/random.ts). */
export function freshSeed(): number {
  return crypto.randomBytes(4).readUInt32BE(0);
}

/** The template for a drill id, or a 404 naming it. */
export function requireTemplate(drillId: string): DrillTemplate {
  const template = getDrillTemplate(drillId);
  if (!template) throw notFound(`Drill "${drillId}"`);
  return template;
}

/** One graded field as the API shows it after submission. */
export interface FieldFeedback {
  key: string;
  label: string;
  unit: string;
  verdict: FieldGrade['verdict'];
  expected: number;
  given: string | null;
  givenValue: number | null;
  recomputedExpected?: number;
  credit: number;
  message: string;
}

export const fieldFeedback = (f: FieldGrade): FieldFeedback => ({
  key: f.key,
  label: f.label,
  unit: f.unit,
  verdict: f.verdict,
  expected: f.expected,
  given: f.given,
  givenValue: f.givenValue,
  ...(f.recomputedExpected !== undefined ? { recomputedExpected: f.recomputedExpected } : {}),
  credit: f.credit,
  message: f.message,
});

export const stepView = (s: DrillStep) => ({
  key: s.key,
  label: s.label,
  equation: s.equation,
  value: s.value,
  unit: s.unit,
  source: s.source,
  dependsOn: s.dependsOn,
  calculation: s.calculation,
});

/** The list of drills with this member's own record on each. */
export async function listDrills(knex: Knex, userId: string) {
  const [areas, mine] = await Promise.all([
    knex('areas').orderBy('sort_order').select<{ id: string; name: string }[]>('id', 'name'),
    knex('drill_attempts')
      .where({ user_id: userId, mode: 'practice' })
      .whereNotNull('submitted_at')
      .groupBy('drill_id')
      .select<{ drill_id: string; attempts: number; best: number; last_at: Date }[]>(
        'drill_id',
        knex.raw('count(*)::int as attempts'),
        knex.raw('max(score) as best'),
        knex.raw('max(submitted_at) as last_at'),
      ),
  ]);
  const byDrill = new Map(mine.map((row) => [row.drill_id, row]));
  const areaNames = new Map(areas.map((a) => [a.id, a.name]));
  return {
    drills: drillTemplates.map((t) => {
      const own = byDrill.get(t.id);
      return {
        id: t.id,
        area: t.area,
        areaName: areaNames.get(t.area) ?? t.area,
        title: t.title,
        summary: t.summary,
        methods: t.methods,
        fieldCount: t.fields.length,
        mine: own ? { attempts: own.attempts, bestScore: own.best, lastAt: own.last_at } : null,
      };
    }),
  };
}

/** Starts a practice attempt on a fresh seed; the response carries the sheet and blank fields only. */
export async function startDrillAttempt(knex: Knex, who: { userId: string; companyId: string | null }, drillId: string) {
  const template = requireTemplate(drillId);
  const seed = freshSeed();
  const scenario = template.generate(seed);
  const [row] = await knex('drill_attempts')
    .insert({ user_id: who.userId, company_id: who.companyId, drill_id: template.id, seed, mode: 'practice' })
    .returning(['id', 'created_at']);
  const view = publicAttemptView(template, scenario);
  return {
    attempt: {
      id: row.id as string,
      drillId: template.id,
      drillTitle: template.title,
      area: template.area,
      createdAt: row.created_at as Date,
      scenario: view.scenario,
      fields: view.fields,
    },
  };
}

interface DrillAttemptRow {
  id: string;
  user_id: string;
  drill_id: string;
  seed: number;
  mode: 'practice' | 'exam';
  created_at: Date;
  submitted_at: Date | null;
  answers: Record<string, string> | null;
  result: { fields: FieldFeedback[] } | null;
  score: number | null;
}

/** Answers kept as typed (trimmed text; numbers written as the client sent them). */
export function typedAnswers(answers: TypedAnswers): Record<string, string> {
  const kept: Record<string, string> = {};
  for (const [key, value] of Object.entries(answers)) {
    if (value === null || value === undefined) continue;
    const text = String(value).trim();
    if (text) kept[key] = text;
  }
  return kept;
}

export function gradedView(result: GradeResult) {
  return { score: result.score, fields: result.fields.map(fieldFeedback), steps: result.steps.map(stepView) };
}

/**
 * Grades a practice attempt and stores the answers and the result. A malformed answer throws
 * AnswerFormatError (400, nothing stored); a second submission is refused (409).
 */
export async function submitDrillAttempt(knex: Knex, userId: string, attemptId: string, answers: TypedAnswers) {
  // The two statements of every submission are written out (fixed text, only the columns used): the
  // busiest write in the product should not rebuild its SQL on each call.
  const { rows: [row] } = await knex.raw<{ rows: Pick<DrillAttemptRow, 'id' | 'drill_id' | 'seed' | 'submitted_at'>[] }>(
    "select id, drill_id, seed, submitted_at from drill_attempts where id = ? and user_id = ? and mode = 'practice'",
    [attemptId, userId],
  );
  if (!row) throw notFound('Drill attempt');
  if (row.submitted_at) throw alreadySubmitted(row.submitted_at);
  const template = requireTemplate(row.drill_id);
  const scenario = template.generate(Number(row.seed));
  const result = gradeSubmission(template, scenario, answers);
  const view = gradedView(result);
  const { rows: [stored] } = await knex.raw<{ rows: { submitted_at: Date }[] }>(
    `update drill_attempts set submitted_at = now(), answers = ?::jsonb, result = ?::jsonb, score = ?
      where id = ? and user_id = ? and submitted_at is null returning submitted_at`,
    [JSON.stringify(typedAnswers(answers)), JSON.stringify({ fields: view.fields }), result.score, row.id, userId],
  );
  // Two submissions racing: the first one stored wins, the second is told so.
  if (!stored) throw alreadySubmitted(null);
  return { attemptId: row.id, drillId: template.id, submittedAt: stored.submitted_at as Date, ...view };
}

function alreadySubmitted(at: Date | null) {
  return conflict(
    `This drill attempt was already submitted${at ? ` at ${at.toISOString()}` : ''}; its result stands. Start a new attempt to practise on new numbers.`,
  );
}

/** One of my attempts: before submission the sheet only, after it the result with the worked steps. */
export async function getDrillAttempt(knex: Knex, userId: string, attemptId: string) {
  const row = await knex<DrillAttemptRow>('drill_attempts').where({ id: attemptId, user_id: userId, mode: 'practice' }).first();
  if (!row) throw notFound('Drill attempt');
  const template = requireTemplate(row.drill_id);
  const scenario = template.generate(Number(row.seed));
  const view = publicAttemptView(template, scenario);
  const base = {
    id: row.id,
    drillId: template.id,
    drillTitle: template.title,
    area: template.area,
    createdAt: row.created_at,
    submittedAt: row.submitted_at,
    scenario: view.scenario,
    fields: view.fields,
  };
  if (!row.submitted_at || !row.result) return { attempt: base };
  return {
    attempt: {
      ...base,
      answers: row.answers ?? {},
      result: { score: row.score, fields: row.result.fields, steps: template.solve(scenario).steps.map(stepView) },
    },
  };
}

/** My submitted practice attempts, newest first, for the history table and the score chart. */
export async function listDrillAttempts(knex: Knex, userId: string, opts: { page: number; pageSize: number; drillId?: string }) {
  const base = knex('drill_attempts').where({ user_id: userId, mode: 'practice' }).whereNotNull('submitted_at');
  if (opts.drillId) base.andWhere({ drill_id: opts.drillId });
  const [{ count }] = await base.clone().count<{ count: number }[]>('* as count');
  const rows = await base
    .clone()
    .orderBy([{ column: 'submitted_at', order: 'desc' }, { column: 'id', order: 'desc' }])
    .offset((opts.page - 1) * opts.pageSize)
    .limit(opts.pageSize)
    .select<{ id: string; drill_id: string; score: number; created_at: Date; submitted_at: Date }[]>('id', 'drill_id', 'score', 'created_at', 'submitted_at');
  return {
    total: Number(count),
    page: opts.page,
    pageSize: opts.pageSize,
    attempts: rows.map((r) => {
      const template = getDrillTemplate(r.drill_id);
      return {
        id: r.id,
        drillId: r.drill_id,
        drillTitle: template?.title ?? r.drill_id,
        area: template?.area ?? null,
        score: r.score,
        startedAt: r.created_at,
        submittedAt: r.submitted_at,
      };
    }),
  };
}

/** Operator preview: the sheet for a chosen seed, with the expected answers and the worked steps. */
export function previewDrill(drillId: string, seed: number) {
  const template = requireTemplate(drillId);
  const scenario: DrillScenario = template.generate(seed);
  const solution = template.solve(scenario);
  const view = publicAttemptView(template, scenario);
  return {
    drill: { id: template.id, area: template.area, title: template.title, summary: template.summary, methods: template.methods },
    seed,
    scenario: view.scenario,
    fields: template.fields.map((f) => ({
      key: f.key,
      label: f.label,
      unit: f.unit,
      source: f.source,
      tolerancePct: f.tolerancePct ?? 1,
      ...(f.absoluteTolerance !== undefined ? { absoluteTolerance: f.absoluteTolerance } : {}),
      dependsOn: f.dependsOn ?? [],
      expected: solution.expected[f.key],
    })),
    steps: solution.steps.map(stepView),
    warnings: solution.warnings,
  };
}
