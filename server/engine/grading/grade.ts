/**
 * Server-side grading of a drill or exam submission (ENGINE.md, "Drills and grading").
 *
 * A numeric answer is right when it is within the field's relative tolerance of the exact value
 * (±1 % unless the field says otherwise; an optional absolute tolerance for values near zero), or
 * when it is the exact value rounded to the significant figures the trainee wrote, provided they
 * wrote at least 3. With the default ±1 % the rounding rule adds nothing (rounding to 3 or more
 * significant figures moves a value by at most 0.5 %); it matters for fields with a tighter
 * tolerance.
 *
 * Carried-forward credit: a field with `dependsOn` that misses the exact value is graded again
 * against the value the template recomputes from the trainee's own earlier answers (each earlier
 * field the trainee filled in replaces the exact value; blanks keep the exact value). Matching it
 * means the method was right:
 *   - if some field it depends on was wrong, the verdict is "carried-forward" and earns
 *     `carriedForwardCredit` (default 1, i.e. full credit: the earlier mistake already lost its own
 *     marks, so it is charged once, where it was made);
 *   - if every field it depends on was right (the miss comes only from the trainee carrying their
 *     own rounded earlier values), the verdict stays "correct".
 * Blank answers earn nothing and are not errors. Text that is not a number is not graded at all:
 * the whole submission is refused with an AnswerFormatError listing every such field.
 */
import type { FieldProblem } from '../../../shared/errors';
import type { AnswerField, DrillScenario, DrillStep, DrillTemplate, GivenEarlierValues } from '../drills/types';
import { parseNumber, NumberFormatError, type ParsedNumber } from './parse-number';

export type Verdict = 'correct' | 'carried-forward' | 'incorrect' | 'blank';

export interface FieldGrade {
  key: string;
  label: string;
  unit: string;
  verdict: Verdict;
  /** The exact value (full precision). */
  expected: number;
  /** What the trainee typed, trimmed; null when blank. */
  given: string | null;
  /** The typed value as a number; null when blank. */
  givenValue: number | null;
  /** The value worked from the trainee's own earlier answers, when that was checked. */
  recomputedExpected?: number;
  /** Share of the field's mark earned, 0 to 1. */
  credit: number;
  message: string;
}

export interface GradeResult {
  /** 0 to 100, one decimal. Every field carries the same weight. */
  score: number;
  fields: FieldGrade[];
  /** The worked solution from the engine. */
  steps: DrillStep[];
}

export interface GradeOptions {
  /** Share of a field's mark for a carried-forward answer, 0 to 1. Default 1. */
  carriedForwardCredit?: number;
}

export const DEFAULT_TOLERANCE_PCT = 1;
export const DEFAULT_CARRIED_FORWARD_CREDIT = 1;
/** Fewest significant figures for the "exact value rounded" rule (ENGINE.md). */
export const MIN_SIG_FIGS_FOR_ROUNDING_RULE = 3;

/** Some answers could not be read as numbers. Not a wrong answer: the request is refused (400). */
export class AnswerFormatError extends Error {
  constructor(public readonly fields: FieldProblem[]) {
    super(
      fields.length === 1
        ? fields[0].message
        : `${fields.length} answers could not be read: ${fields.map((f) => f.message).join(' ')}`,
    );
    this.name = 'AnswerFormatError';
  }
}

type AnswerInput = Readonly<Record<string, unknown>>;

/** Reads every answer; blank ones map to null. Throws AnswerFormatError listing every bad one. */
export function parseAnswers<D>(template: DrillTemplate<D>, answers: AnswerInput): Map<string, ParsedNumber | null> {
  if (typeof answers !== 'object' || answers === null || Array.isArray(answers)) {
    throw new AnswerFormatError([{ field: 'answers', message: 'answers must be an object of answer field keys and the values typed.' }]);
  }
  const problems: FieldProblem[] = [];
  const known = new Set(template.fields.map((f) => f.key));
  for (const key of Object.keys(answers)) {
    if (!known.has(key)) {
      problems.push({ field: `answers.${key}`, message: `${key}: this drill has no answer field of that name.` });
    }
  }
  const parsed = new Map<string, ParsedNumber | null>();
  for (const field of template.fields) {
    const raw = Object.hasOwn(answers, field.key) ? answers[field.key] : undefined;
    if (raw === undefined || raw === null || (typeof raw === 'string' && raw.trim() === '')) {
      parsed.set(field.key, null);
      continue;
    }
    const text = typeof raw === 'number' && Number.isFinite(raw) ? String(raw) : raw;
    if (typeof text !== 'string') {
      problems.push({ field: `answers.${field.key}`, message: `${field.key}: the answer must be typed as text.` });
      continue;
    }
    try {
      parsed.set(field.key, parseNumber(text, field.key));
    } catch (error) {
      if (!(error instanceof NumberFormatError)) throw error;
      problems.push({ field: `answers.${field.key}`, message: error.message });
    }
  }
  if (problems.length > 0) throw new AnswerFormatError(problems);
  return parsed;
}

type MatchRule = 'tolerance' | 'rounding';

/** How the typed value matches the target, or null when it does not (rules in the header). */
export function matchAnswer(given: ParsedNumber, target: number, field: Pick<AnswerField, 'tolerancePct' | 'absoluteTolerance'>): MatchRule | null {
  if (!Number.isFinite(target)) return null;
  const difference = Math.abs(given.value - target);
  const tolerancePct = field.tolerancePct ?? DEFAULT_TOLERANCE_PCT;
  // the tiny allowance absorbs binary rounding of values typed exactly at the limit
  if (difference <= (tolerancePct / 100) * Math.abs(target) * (1 + 1e-12)) return 'tolerance';
  if (field.absoluteTolerance !== undefined && difference <= field.absoluteTolerance * (1 + 1e-12)) return 'tolerance';
  if (given.sigFigs >= MIN_SIG_FIGS_FOR_ROUNDING_RULE && difference <= 0.5 * 10 ** given.lastDigitExponent * (1 + 1e-9)) {
    return 'rounding';
  }
  return null;
}

export function gradeSubmission<D>(
  template: DrillTemplate<D>,
  scenario: DrillScenario<D>,
  answers: AnswerInput,
  options: GradeOptions = {},
): GradeResult {
  if (scenario.templateId !== template.id) {
    throw new Error(`Scenario belongs to drill ${scenario.templateId}, not ${template.id}.`);
  }
  const carriedForwardCredit = options.carriedForwardCredit ?? DEFAULT_CARRIED_FORWARD_CREDIT;
  if (!(carriedForwardCredit >= 0 && carriedForwardCredit <= 1)) {
    throw new RangeError('carriedForwardCredit must be between 0 and 1.');
  }

  const parsed = parseAnswers(template, answers);
  const solution = template.solve(scenario);
  const ownValues: Record<string, number> = {};
  const verdicts = new Map<string, Verdict>();
  const fields: FieldGrade[] = [];

  for (const field of template.fields) {
    const expected = solution.expected[field.key];
    if (expected === undefined) throw new Error(`Drill ${template.id} has no expected value for ${field.key}.`);
    const given = parsed.get(field.key) ?? null;
    const grade = gradeField(field, expected, given, { ...ownValues }, verdicts, template, scenario, carriedForwardCredit);
    verdicts.set(field.key, grade.verdict);
    ownValues[field.key] = given ? given.value : expected;
    fields.push(grade);
  }
  for (const key of Object.keys(solution.expected)) {
    if (!verdicts.has(key)) throw new Error(`Drill ${template.id} solved an unknown field ${key}.`);
  }

  const earned = fields.reduce((sum, f) => sum + f.credit, 0);
  const score = fields.length === 0 ? 0 : Math.round((1000 * earned) / fields.length) / 10;
  return { score, fields, steps: solution.steps };
}

function gradeField<D>(
  field: AnswerField<D>,
  expected: number,
  given: ParsedNumber | null,
  earlier: Record<string, number>,
  earlierVerdicts: ReadonlyMap<string, Verdict>,
  template: DrillTemplate<D>,
  scenario: DrillScenario<D>,
  carriedForwardCredit: number,
): FieldGrade {
  const base = { key: field.key, label: field.label, unit: field.unit, expected };
  const shownExpected = formatWithUnit(expected, field.unit);
  if (!given) {
    return { ...base, verdict: 'blank', given: null, givenValue: null, credit: 0, message: `No answer given; the expected value is ${shownExpected}.` };
  }
  const typed = { given: given.text, givenValue: given.value };

  const direct = matchAnswer(given, expected, field);
  if (direct) {
    return { ...base, ...typed, verdict: 'correct', credit: 1, message: correctMessage(direct, field, expected) };
  }

  const dependsOn = field.dependsOn ?? [];
  const recomputed = dependsOn.length > 0 ? recomputeFrom(template, field, earlier, scenario) : undefined;
  if (recomputed !== undefined && matchAnswer(given, recomputed, field)) {
    const wrongEarlier = dependsOn.filter((key) => earlierVerdicts.get(key) !== 'correct' && earlierVerdicts.get(key) !== 'blank');
    const labels = dependsOn.map((key) => labelOf(template, key)).join(', ');
    if (wrongEarlier.length === 0) {
      return {
        ...base, ...typed, verdict: 'correct', recomputedExpected: recomputed, credit: 1,
        message: `Correct: it follows from your own rounded values of ${labels}; the exact value is ${shownExpected}.`,
      };
    }
    return {
      ...base, ...typed, verdict: 'carried-forward', recomputedExpected: recomputed, credit: carriedForwardCredit,
      message:
        `Method credit: this follows correctly from your own value of ${wrongEarlier.map((key) => labelOf(template, key)).join(', ')}, ` +
        `which was off; with the exact earlier values it is ${shownExpected}.`,
    };
  }

  const tolerance = toleranceText(field);
  let message = `Not ${tolerance} of the expected ${shownExpected}.`;
  if (recomputed !== undefined && Math.abs(recomputed - expected) > 1e-9 * Math.abs(expected)) {
    message += ` Worked from your own earlier answers it would be ${formatWithUnit(recomputed, field.unit)}.`;
  }
  return {
    ...base, ...typed, verdict: 'incorrect', credit: 0,
    ...(recomputed !== undefined ? { recomputedExpected: recomputed } : {}),
    message,
  };
}

function recomputeFrom<D>(template: DrillTemplate<D>, field: AnswerField<D>, earlier: GivenEarlierValues, scenario: DrillScenario<D>): number | undefined {
  const value = template.recompute(field.key, earlier, scenario);
  return value !== undefined && Number.isFinite(value) ? value : undefined;
}

function correctMessage(rule: MatchRule, field: Pick<AnswerField, 'unit' | 'tolerancePct' | 'absoluteTolerance'>, expected: number): string {
  const shown = formatWithUnit(expected, field.unit);
  return rule === 'rounding'
    ? `Correct: the exact value ${shown} rounded to the figures you gave.`
    : `Correct: ${toleranceText(field)} of ${shown}.`;
}

function toleranceText(field: Pick<AnswerField, 'tolerancePct' | 'absoluteTolerance'>): string {
  const pct = `within ${field.tolerancePct ?? DEFAULT_TOLERANCE_PCT} %`;
  return field.absoluteTolerance === undefined ? pct : `${pct} (or ${field.absoluteTolerance} absolute)`;
}

function labelOf<D>(template: DrillTemplate<D>, key: string): string {
  return template.fields.find((f) => f.key === key)?.label ?? key;
}

/** Four significant figures for messages; the numbers in the result keep full precision. */
export function formatForMessage(value: number): string {
  if (value === 0) return '0';
  const magnitude = Math.abs(value);
  if (magnitude >= 1e-3 && magnitude < 1e6) return String(Number(value.toPrecision(4)));
  return value.toExponential(3);
}

function formatWithUnit(value: number, unit: string): string {
  return unit && unit !== '-' ? `${formatForMessage(value)} ${unit}` : formatForMessage(value);
}
