import { z } from 'zod';
import type { AppContext } from '../context';
import { listAuditEntries, listCompaniesForOperator, listMembers } from '../services/companies';
import type { RouteDef } from './types';

const companyParams = z.object({ companyId: z.uuid({ error: 'must be a company id' }) });

export function companyRoutes(ctx: AppContext): RouteDef[] {
  return [
    {
      method: 'get', path: '/api/companies/:companyId/members', access: ['admin', 'manager'], summary: "A company's members and roles",
      params: companyParams,
      handler: async (req) => ({ members: await listMembers(ctx.knex, req.membership!.companyId) }),
    },
    {
      method: 'get', path: '/api/companies/:companyId/audit-log', access: ['admin'], summary: "A company's recent audit entries",
      params: companyParams,
      query: z.object({ limit: z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be at least 1').max(500, 'must be at most 500').default(100) }),
      handler: async (req) => ({ entries: await listAuditEntries(ctx.knex, req.membership!.companyId, req.valid.query.limit) }),
    },
    {
      method: 'get', path: '/api/operator/companies', access: ['operator'], summary: 'Every company on the platform',
      handler: async () => ({ companies: await listCompaniesForOperator(ctx.knex) }),
    },
  ];
}
