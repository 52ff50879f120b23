import type { AppContext } from '../context';
import { authRoutes } from './auth';
import { calculationRoutes } from './calculations';
import { openApiRoutes } from './openapi';
import { companyRoutes } from './companies';
import { healthRoutes } from './health';
import type { RouteDef } from './types';

/** The router table: every API route with its access rule. The role matrix test is generated from it. */
export function routeTable(ctx: AppContext): RouteDef[] {
  const table: RouteDef[] = [
    ...healthRoutes(ctx),
    ...authRoutes(ctx),
    ...companyRoutes(ctx),
    ...calculationRoutes(ctx),
    ...openApiRoutes(() => table),
  ];
  return table;
}
