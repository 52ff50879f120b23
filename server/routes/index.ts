import type { AppContext } from '../context';
import { authRoutes } from './auth';
import { calculationRoutes } from './calculations';
import { openApiRoutes } from './openapi';
import { companyRoutes } from './companies';
import { healthRoutes } from './health';
import { learningRoutes } from './learning';
import { drillRoutes } from './drills';
import { examRoutes } from './exams';
import { billingRoutes } from './billing';
import { invitationRoutes } from './invitations';
import { companyAdminRoutes } from './company-admin';
import { readinessRoutes } from './readiness';
import { assignmentRoutes } from './assignments';
import { noticeRoutes } from './notices';
import { certificateRoutes } from './certificates';
import { operatorConsoleRoutes } from './operator-console';
import type { RouteDef } from './types';

/** The router table: every API route with its access rule. The role matrix test is generated from it. */
export function routeTable(ctx: AppContext): RouteDef[] {
  const table: RouteDef[] = [
    ...healthRoutes(ctx),
    ...authRoutes(ctx),
    ...companyRoutes(ctx),
    ...calculationRoutes(ctx),
    ...learningRoutes(ctx),
    ...drillRoutes(ctx),
    ...examRoutes(ctx),
    ...billingRoutes(ctx),
    ...invitationRoutes(ctx),
    ...companyAdminRoutes(ctx),
    ...readinessRoutes(ctx),
    ...assignmentRoutes(ctx),
    ...noticeRoutes(ctx),
    ...certificateRoutes(ctx),
    ...operatorConsoleRoutes(ctx),
    ...openApiRoutes(() => table),
  ];
  return table;
}
