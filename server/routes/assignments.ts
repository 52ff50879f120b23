import { z } from 'zod';
import type { AppContext } from '../context';
import { assignmentBodySchema, assignmentListQuerySchema } from '../../shared/readiness';
import { assignmentOptions, createAssignments, listAssignments, myAssignments, withdrawAssignment } from '../services/assignments';
import { READINESS_ROLES } from './readiness';
import type { RouteDef } from './types';

const idParams = z.object({ id: z.uuid({ error: 'must be an assignment id' }) });

export function assignmentRoutes(ctx: AppContext): RouteDef[] {
  return [
    {
      method: 'get', path: '/api/assignments/options', access: READINESS_ROLES, summary: 'Drills and areas that can be assigned',
      handler: (req) => assignmentOptions(ctx.knex, req.membership!.companyId),
    },
    {
      method: 'post', path: '/api/assignments', access: READINESS_ROLES, summary: 'Assign a refresher drill or an exam to members, with a due date',
      body: assignmentBodySchema,
      handler: async (req, res) => {
        const result = await createAssignments(ctx.knex, req.membership!.companyId, req.user!.id, req.valid.body);
        res.status(201);
        return result;
      },
    },
    {
      method: 'get', path: '/api/assignments', access: READINESS_ROLES, summary: "The company's assignments with completion and overdue flags",
      query: assignmentListQuerySchema,
      handler: (req) => listAssignments(ctx.knex, req.membership!.companyId, req.valid.query),
    },
    {
      method: 'delete', path: '/api/assignments/:id', access: READINESS_ROLES, summary: 'Withdraw an assignment',
      params: idParams,
      handler: async (req, res) => {
        await withdrawAssignment(ctx.knex, req.membership!.companyId, req.user!.id, req.valid.params.id);
        res.status(204).end();
      },
    },
    {
      method: 'get', path: '/api/assignments/mine', access: ['crew'], summary: 'My assignments: open and overdue first',
      handler: (req) => myAssignments(ctx.knex, req.membership!.companyId, req.user!.id),
    },
  ];
}
