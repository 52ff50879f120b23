import { z } from 'zod';
import type { AppContext } from '../context';
import { drillIds } from '../engine/drills';
import {
  freshSeed, getDrillAttempt, listDrillAttempts, listDrills, previewDrill, startDrillAttempt, submitDrillAttempt,
} from '../services/drill-attempts';
import type { RouteDef } from './types';
import { requireSeat } from '../middleware/access';

/** Roles that hold a seat and practise, plus platform staff (who check what the crews see). */
export const DRILL_ROLES = ['crew', 'manager', 'admin', 'operator'] as const;

const MAX_ANSWER_TEXT = 100;
const MAX_ANSWER_FIELDS = 40;

const drillParams = z.object({ id: z.string().max(80, 'must be a drill id') });
const attemptParams = z.object({ id: z.uuid({ error: 'must be a drill attempt id' }) });

/** `{ key: "text as typed" }`; whether the text is a number is the grader's question (a 400 naming the field). */
export const typedAnswersSchema = z
  .record(
    z.string().max(80, 'answer field keys are at most 80 characters'),
    z.union([z.string().max(MAX_ANSWER_TEXT, `must be at most ${MAX_ANSWER_TEXT} characters`), z.number(), z.null()], {
      error: 'must be the answer typed as text',
    }),
    { error: 'must be an object of answer field keys and the values typed, e.g. { "velocity_fps": "52.3" }' },
  )
  .refine((answers) => Object.keys(answers).length <= MAX_ANSWER_FIELDS, `must hold at most ${MAX_ANSWER_FIELDS} answers`);

const submissionBody = z.object({ answers: typedAnswersSchema });

const pageQuery = {
  page: z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be at least 1').default(1),
  pageSize: z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be at least 1').max(100, 'must be at most 100').default(20),
};
const historyQuery = z.object({
  ...pageQuery,
  drillId: z.enum(drillIds, { error: 'must be one of the drill ids' }).optional(),
});
const previewQuery = z.object({
  seed: z.coerce
    .number({ error: 'must be a whole number from 0 to 4294967295' })
    .int('must be a whole number from 0 to 4294967295')
    .min(0, 'must be a whole number from 0 to 4294967295')
    .max(0xffffffff, 'must be a whole number from 0 to 4294967295')
    .optional(),
});

export function drillRoutes(ctx: AppContext): RouteDef[] {
  return [
    {
      method: 'get', path: '/api/drills', access: DRILL_ROLES, summary: 'Drills by area, with my own record on each',
      handler: (req) => listDrills(ctx.knex, req.user!.id),
    },
    {
      method: 'post', path: '/api/drills/:id/attempts', access: DRILL_ROLES, summary: 'Start a practice attempt on fresh numbers (the sheet and blank fields only)',
      params: drillParams, before: [requireSeat],
      handler: (req) => startDrillAttempt(ctx.knex, { userId: req.user!.id, companyId: req.membership!.companyId }, req.valid.params.id),
    },
    {
      method: 'get', path: '/api/drills/:id/preview', access: ['operator'], summary: 'Preview a drill for a seed: sheet, expected answers and worked steps',
      params: drillParams, query: previewQuery,
      handler: (req) => previewDrill(req.valid.params.id, req.valid.query.seed ?? freshSeed()),
    },
    {
      method: 'get', path: '/api/drill-attempts', access: DRILL_ROLES, summary: 'My submitted practice attempts, newest first', query: historyQuery,
      handler: (req) => listDrillAttempts(ctx.knex, req.user!.id, req.valid.query),
    },
    {
      method: 'get', path: '/api/drill-attempts/:id', access: DRILL_ROLES, summary: 'One of my practice attempts (its result once submitted)', params: attemptParams,
      handler: (req) => getDrillAttempt(ctx.knex, req.user!.id, req.valid.params.id),
    },
    {
      method: 'post', path: '/api/drill-attempts/:id/submission', access: DRILL_ROLES, summary: 'Submit answers as typed; graded on the server with carried-forward credit',
      params: attemptParams, body: submissionBody,
      handler: (req) => submitDrillAttempt(ctx.knex, req.user!.id, req.valid.params.id, req.valid.body.answers),
    },
  ];
}
