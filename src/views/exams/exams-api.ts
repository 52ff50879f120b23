import { api } from '../../api/client';
import type { AnswerFieldView, DrillSheet, DrillStep, FieldFeedback, TypedAnswers } from '../drills/drills-api';

/** Response shapes of the exam routes (server/routes/exams.ts). */

export interface ExamSummary {
  areaId: string;
  areaName: string;
  title: string;
  questionCount: number;
  timeLimitMinutes: number;
  passMarkPct: number;
  drills: { id: string; title: string; count: number }[];
  active: { id: string; startedAt: string; deadline: string; questionCount: number; answeredCount: number } | null;
  last: { id: string; status: 'submitted' | 'expired'; scorePct: number; passed: boolean; passMarkPct: number; closedAt: string } | null;
  lastPass: { passedAt: string; scorePct: number } | null;
}

export interface ExamQuestion {
  index: number;
  drillId: string;
  drillTitle: string;
  scenario: DrillSheet;
  fields: AnswerFieldView[];
  answers: TypedAnswers;
  /** Only once the attempt has closed. */
  score?: number;
  feedback?: FieldFeedback[];
  steps?: DrillStep[];
}

export interface ExamAttempt {
  id: string;
  areaId: string;
  areaName: string;
  status: 'active' | 'submitted' | 'expired';
  title: string;
  timeLimitMinutes: number;
  passMarkPct: number;
  questionCount: number;
  startedAt: string;
  deadline: string;
  serverNow: string;
  draftsSavedAt?: string | null;
  submittedAt?: string | null;
  closedAt?: string | null;
  closedBy?: 'submission' | 'deadline';
  scorePct?: number;
  passed?: boolean;
  questions: ExamQuestion[];
}

export interface CertificateOutcome {
  status: 'issued' | 'pending';
  outcome?: 'issued' | 'renewed' | 'already-issued' | 'already-current';
  number?: string;
  expiresOn?: string;
}

export interface ExamHistoryEntry {
  id: string;
  areaId: string;
  areaName: string;
  title: string;
  status: 'submitted' | 'expired';
  scorePct: number;
  passed: boolean;
  passMarkPct: number;
  startedAt: string;
  closedAt: string;
}

const enc = encodeURIComponent;

export const examsApi = {
  list: () => api.get<{ serverNow: string; exams: ExamSummary[] }>('/api/exams'),
  start: (areaId: string) => api.post<{ attempt: ExamAttempt }>(`/api/exams/${enc(areaId)}/attempts`),
  get: (attemptId: string) => api.get<{ attempt: ExamAttempt; certificate?: CertificateOutcome }>(`/api/exam-attempts/${enc(attemptId)}`),
  saveDraft: (attemptId: string, questionIndex: number, answers: TypedAnswers) =>
    api.put<{ saved: { questionIndex: number; answers: TypedAnswers; savedAt: string }; deadline: string; serverNow: string }>(
      `/api/exam-attempts/${enc(attemptId)}/answers`,
      { questionIndex, answers },
    ),
  submit: (attemptId: string) =>
    api.post<{ attempt: ExamAttempt; pass: { id: string } | null; certificate: CertificateOutcome | null }>(`/api/exam-attempts/${enc(attemptId)}/submission`),
  history: (page: number, pageSize: number) =>
    api.get<{ total: number; page: number; pageSize: number; attempts: ExamHistoryEntry[] }>(`/api/exam-attempts?page=${page}&pageSize=${pageSize}`),
};
