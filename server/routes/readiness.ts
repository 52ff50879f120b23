import { z } from 'zod';
import type { AppContext } from '../context';
import {
  jobCheckBodySchema,
  readinessCsvQuerySchema,
  readinessQuerySchema,
  timeZoneBodySchema,
} from '../../shared/readiness';
import { recordAudit } from '../services/audit';
import { checkAndMaybeSave, deleteJobCheck, listJobChecks, rerunJobCheck } from '../services/job-checks';
import { companyClock, readinessCsv, readinessPage, readinessTrends, setCompanyTimeZone } from '../services/readiness';
import type { RouteDef } from './types';

/** Who looks after crew readiness: managers, and company admins. */
export const READINESS_ROLES = ['manager', 'admin'] as const;

const idParams = z.object({ id: z.uuid({ error: 'must be a saved job check id' }) });

export function readinessRoutes(ctx: AppContext): RouteDef[] {
  return [
    {
      method: 'get', path: '/api/readiness', access: READINESS_ROLES, summary: 'The readiness matrix: members × competency areas, paged, sorted and filtered',
      query: readinessQuerySchema,
      handler: (req) => readinessPage(ctx.knex, req.membership!.companyId, req.valid.query),
    },
    {
      method: 'get', path: '/api/readiness.csv', access: READINESS_ROLES, summary: 'The readiness matrix as CSV, with the same filters',
      query: readinessCsvQuerySchema,
      handler: async (req, res) => {
        const { csv, fileName } = await readinessCsv(ctx.knex, req.membership!.companyId, req.valid.query);
        res.setHeader('Content-Disposition', `attachment; filename="${fileName}"`);
        res.setHeader('Cache-Control', 'no-store');
        res.type('text/csv; charset=utf-8').send(csv);
      },
    },
    {
      method: 'get', path: '/api/readiness/trends', access: READINESS_ROLES, summary: 'Share in force per area over the past year, expiries by month ahead, drill activity',
      handler: (req) => readinessTrends(ctx.knex, req.membership!.companyId),
    },
    {
      method: 'get', path: '/api/readiness/settings', access: READINESS_ROLES, summary: "The company's time zone and today's date in it",
      handler: (req) => companyClock(ctx.knex, req.membership!.companyId),
    },
    {
      method: 'put', path: '/api/readiness/settings', access: ['admin'], summary: "Set the company's time zone (readiness, job dates, reminders)",
      body: timeZoneBodySchema,
      handler: async (req) => {
        const companyId = req.membership!.companyId;
        const timeZone = await ctx.knex.transaction(async (trx) => {
          const zone = await setCompanyTimeZone(trx, companyId, req.valid.body.timeZone);
          await recordAudit(trx, { actorUserId: req.user!.id, companyId, action: 'company.time-zone', details: { timeZone: zone }, ip: req.ip });
          return zone;
        });
        return companyClock(ctx.knex, companyId).then((clock) => ({ ...clock, timeZone }));
      },
    },
    {
      method: 'post', path: '/api/job-checks', access: READINESS_ROLES, summary: 'Who is qualified for these areas on a job date; saved when named',
      body: jobCheckBodySchema,
      handler: (req) => checkAndMaybeSave(ctx.knex, req.membership!.companyId, req.user!.id, req.valid.body),
    },
    {
      method: 'get', path: '/api/job-checks', access: READINESS_ROLES, summary: 'Saved job checks',
      handler: (req) => listJobChecks(ctx.knex, req.membership!.companyId),
    },
    {
      method: 'post', path: '/api/job-checks/:id/run', access: READINESS_ROLES, summary: 'Run a saved job check again on today’s certificates',
      params: idParams,
      handler: (req) => rerunJobCheck(ctx.knex, req.membership!.companyId, req.valid.params.id),
    },
    {
      method: 'delete', path: '/api/job-checks/:id', access: READINESS_ROLES, summary: 'Delete a saved job check',
      params: idParams,
      handler: async (req, res) => {
        await deleteJobCheck(ctx.knex, req.membership!.companyId, req.user!.id, req.valid.params.id);
        res.status(204).end();
      },
    },
  ];
}
