import { api } from '../../api/client';
import type { CalculationStep } from '../../stores/calculations';

/** Response shapes of the drill routes (server/routes/drills.ts). */

export interface GivenValue {
  key: string;
  label: string;
  value: number | string;
  unit: string;
}

export interface SheetTable {
  key: string;
  title: string;
  columns: { key: string; label: string; unit: string }[];
  rows: (number | string)[][];
}

/** The field data sheet a trainee works from: never an expected value in it. */
export interface DrillSheet {
  templateId: string;
  title: string;
  intro: string;
  given: GivenValue[];
  tables: SheetTable[];
}

export interface AnswerFieldView {
  key: string;
  label: string;
  unit: string;
}

export type Verdict = 'correct' | 'carried-forward' | 'incorrect' | 'blank';

export interface FieldFeedback extends AnswerFieldView {
  verdict: Verdict;
  expected: number;
  given: string | null;
  givenValue: number | null;
  recomputedExpected?: number;
  credit: number;
  message: string;
}

export interface DrillStep extends CalculationStep {
  calculation: string;
}

export interface DrillSummary {
  id: string;
  area: string;
  areaName: string;
  title: string;
  summary: string;
  methods: string[];
  fieldCount: number;
  mine: { attempts: number; bestScore: number; lastAt: string } | null;
}

export interface DrillAttempt {
  id: string;
  drillId: string;
  drillTitle: string;
  area: string;
  createdAt: string;
  scenario: DrillSheet;
  fields: AnswerFieldView[];
}

export interface DrillResult {
  attemptId: string;
  drillId: string;
  submittedAt: string;
  score: number;
  fields: FieldFeedback[];
  steps: DrillStep[];
}

export interface DrillHistoryEntry {
  id: string;
  drillId: string;
  drillTitle: string;
  area: string | null;
  score: number;
  startedAt: string;
  submittedAt: string;
}

export interface Paged<T> {
  total: number;
  page: number;
  pageSize: number;
  attempts: T[];
}

export interface DrillPreview {
  drill: { id: string; area: string; title: string; summary: string; methods: string[] };
  seed: number;
  scenario: DrillSheet;
  fields: (AnswerFieldView & { source: string; tolerancePct: number; absoluteTolerance?: number; dependsOn: string[]; expected: number })[];
  steps: DrillStep[];
  warnings: string[];
}

export type TypedAnswers = Record<string, string>;

const enc = encodeURIComponent;

export const drillsApi = {
  list: () => api.get<{ drills: DrillSummary[] }>('/api/drills'),
  start: (drillId: string) => api.post<{ attempt: DrillAttempt }>(`/api/drills/${enc(drillId)}/attempts`),
  submit: (attemptId: string, answers: TypedAnswers) => api.post<DrillResult>(`/api/drill-attempts/${enc(attemptId)}/submission`, { answers }),
  history: (page: number, pageSize: number) => api.get<Paged<DrillHistoryEntry>>(`/api/drill-attempts?page=${page}&pageSize=${pageSize}`),
  preview: (drillId: string, seed?: number) =>
    api.get<DrillPreview>(`/api/drills/${enc(drillId)}/preview${seed === undefined ? '' : `?seed=${seed}`}`),
};

/** Server field names look like `answers.velocity_fps`; the inputs are keyed by `velocity_fps`. */
export function answerErrors(fields: { field: string; message: string }[], prefix = 'answers.'): Record<string, string> {
  const byKey: Record<string, string> = {};
  for (const f of fields) if (f.field.startsWith(prefix)) byKey[f.field.slice(prefix.length)] = f.message;
  return byKey;
}
