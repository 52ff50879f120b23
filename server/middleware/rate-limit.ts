import type { Request, RequestHandler } from 'express';

export interface WindowLimiterOptions {
  windowMs: number;
  /** Calls allowed per key in each window. */
  limit: number;
  /** Whose budget a call spends (e.g. the caller's address). */
  key: (req: Request) => string;
  /** Answers a call over the budget (it is counted, and not passed on). */
  onLimited: RequestHandler;
}

/**
 * A per-key budget of calls in fixed windows, kept in this process and decided synchronously. It is
 * for the public certificate check, the one route meant to be called at volume: express-rate-limit's
 * middleware (used for the other limits) costs about a twelfth of a lookup's CPU there (several awaits,
 * an info object and debug formatting per call). Same contract as those limiters: the draft-7
 * `RateLimit-Policy` and `RateLimit` headers on every answer, one budget shared by every route given
 * the same limiter. All keys start a new window together, so a window's map is dropped whole.
 */
export function windowLimiter(opts: WindowLimiterOptions): RequestHandler {
  let windowEnds = 0;
  let used = new Map<string, number>();
  const policy = `${opts.limit};w=${Math.ceil(opts.windowMs / 1000)}`;
  return (req, res, next) => {
    const now = Date.now();
    if (now >= windowEnds) {
      used = new Map();
      windowEnds = now + opts.windowMs;
    }
    const key = opts.key(req);
    const count = (used.get(key) ?? 0) + 1;
    used.set(key, count);
    res.setHeader('RateLimit-Policy', policy);
    res.setHeader('RateLimit', `limit=${opts.limit}, remaining=${Math.max(0, opts.limit - count)}, reset=${Math.ceil((windowEnds - now) / 1000)}`);
    if (count > opts.limit) return opts.onLimited(req, res, next);
    next();
  };
}
