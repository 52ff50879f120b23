import type { Request, RequestHandler, Response } from 'express';
import type { ZodType } from 'zod';
import type { Access } from '../middleware/access';

export type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

/**
 * One row of the router table. The role matrix test walks these rows, so every route's access
 * rule lives here and nowhere else.
 */
export interface RouteDef {
  method: Method;
  path: string;
  access: Access;
  summary: string;
  body?: ZodType;
  query?: ZodType;
  params?: ZodType;
  /** Extra middleware run after access checks and before validation (rate limits, uploads). */
  before?: RequestHandler[];
  /** Whatever the handler returns is sent as JSON, unless it already answered. */
  handler: (req: Request, res: Response) => unknown;
}
