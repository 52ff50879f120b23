import { z } from 'zod';
import type { AppContext } from '../context';
import { AREA_IDS } from '../services/content-sync';
import {
  DRAFT_TEXT_MAX, ExamInProgressError, getExamAttempt, listExamAttempts, listExams, saveDraft, startExam, submitExam,
} from '../services/exams';
import type { RouteDef } from './types';
import { requireSeat } from '../middleware/access';

/** Members who sit exams: those who hold a seat in a customer company (platform staff do not certify). */
export const EXAM_ROLES = ['crew', 'manager', 'admin'] as const;

const areaParams = z.object({ areaId: z.enum(AREA_IDS, { error: `must be one of ${AREA_IDS.join(', ')}` }) });
const attemptParams = z.object({ id: z.uuid({ error: 'must be an exam attempt id' }) });

const draftBody = z.object({
  questionIndex: z.number({ error: 'must be the question number, counted from 0' }).int('must be a whole number').min(0, 'must be 0 or more').max(200, 'is past the last question'),
  answers: z
    .record(
      z.string().max(80, 'answer field keys are at most 80 characters'),
      z.union([z.string().max(DRAFT_TEXT_MAX, `must be at most ${DRAFT_TEXT_MAX} characters`), z.null()], { error: 'must be the answer typed as text' }),
      { error: 'must be an object of answer field keys and the text typed' },
    )
    .refine((answers) => Object.keys(answers).length <= 40, 'must hold at most 40 answers'),
});

const historyQuery = z.object({
  page: z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be at least 1').default(1),
  pageSize: z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be at least 1').max(100, 'must be at most 100').default(20),
});

export function examRoutes(ctx: AppContext): RouteDef[] {
  return [
    {
      method: 'get', path: '/api/exams', access: EXAM_ROLES, summary: 'Exams by area: blueprint summary, my attempt in progress, my latest result',
      handler: (req) => listExams(ctx, req.user!.id),
    },
    {
      method: 'post', path: '/api/exams/:areaId/attempts', access: EXAM_ROLES, summary: 'Start a timed exam attempt (409 with the running attempt id if one is active)',
      params: areaParams, before: [requireSeat],
      handler: async (req, res) => {
        try {
          return await startExam(ctx, { userId: req.user!.id, companyId: req.membership!.companyId }, req.valid.params.areaId);
        } catch (error) {
          if (!(error instanceof ExamInProgressError)) throw error;
          // The one error shape, plus the id of the attempt to resume.
          res.status(409).json({ error: { code: error.code, message: error.message, activeAttemptId: error.activeAttemptId } });
          return undefined;
        }
      },
    },
    {
      method: 'get', path: '/api/exam-attempts', access: EXAM_ROLES, summary: 'My finished exam attempts, newest first', query: historyQuery,
      handler: (req) => listExamAttempts(ctx, req.user!.id, req.valid.query),
    },
    {
      method: 'get', path: '/api/exam-attempts/:id', access: EXAM_ROLES, summary: 'Resume an attempt (questions, my drafts, the deadline) or review a closed one',
      params: attemptParams,
      handler: (req) => getExamAttempt(ctx, req.user!.id, req.valid.params.id),
    },
    {
      method: 'put', path: '/api/exam-attempts/:id/answers', access: EXAM_ROLES, summary: "Save one question's answers as typed, before the deadline",
      params: attemptParams, body: draftBody,
      handler: (req) => saveDraft(ctx, req.user!.id, req.valid.params.id, req.valid.body.questionIndex, req.valid.body.answers),
    },
    {
      method: 'post', path: '/api/exam-attempts/:id/submission', access: EXAM_ROLES, summary: 'Submit the attempt: graded on the server, per-question feedback, a pass recorded',
      params: attemptParams,
      handler: (req) => submitExam(ctx, req.user!.id, req.valid.params.id),
    },
  ];
}
