import { z } from 'zod';
import type { AppContext } from '../context';
import { emailLogQuerySchema, runRemindersBodySchema } from '../../shared/readiness';
import { recordAudit } from '../services/audit';
import { listEmailLog } from '../services/email-log';
import { dismissNotice, myNotices, runReminders } from '../services/notifications';
import type { RouteDef } from './types';

const idParams = z.object({ id: z.uuid({ error: 'must be a notice id' }) });

export function noticeRoutes(ctx: AppContext): RouteDef[] {
  return [
    {
      method: 'get', path: '/api/notices/mine', access: ['crew'], summary: 'My in-app notices (certificates running out)',
      handler: (req) => myNotices(ctx.knex, req.membership!.companyId, req.user!.id),
    },
    {
      method: 'post', path: '/api/notices/:id/dismiss', access: ['crew'], summary: 'Dismiss one of my notices',
      params: idParams,
      handler: async (req, res) => {
        await dismissNotice(ctx.knex, req.membership!.companyId, req.user!.id, req.valid.params.id);
        res.status(204).end();
      },
    },
    {
      method: 'get', path: '/api/operator/emails', access: ['operator'], summary: 'The e-mail log: every message the platform sent or tried to',
      query: emailLogQuerySchema,
      handler: (req) => listEmailLog(ctx.knex, req.valid.query),
    },
    {
      method: 'post', path: '/api/operator/jobs/run-reminders', access: ['operator'], summary: 'Run the reminder and digest scan now (optionally as of a day)',
      body: runRemindersBodySchema,
      handler: async (req) => {
        const summary = await runReminders(ctx, { asOf: req.valid.body.asOf ?? null, anyHour: true });
        await recordAudit(ctx.knex, { actorUserId: req.user!.id, action: 'jobs.run-reminders', details: { ...summary }, ip: req.ip });
        return summary;
      },
    },
  ];
}
