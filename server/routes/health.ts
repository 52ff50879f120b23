import type { AppContext } from '../context';
import type { RouteDef } from './types';

export function healthRoutes(ctx: AppContext): RouteDef[] {
  return [
    {
      method: 'get', path: '/api/health', access: 'public', summary: 'Liveness of the app and its database',
      handler: async (_req, res) => {
        try {
          await Promise.race([
            ctx.knex.raw('select 1'),
            new Promise((_, reject) => setTimeout(() => reject(new Error('database check timed out')), 2_000)),
          ]);
          return { status: 'ok', db: 'ok' };
        } catch {
          res.status(503).json({ status: 'degraded', db: 'down' });
        }
      },
    },
  ];
}
