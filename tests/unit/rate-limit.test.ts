import { afterEach, describe, expect, it, vi } from 'vitest';
import type { NextFunction, Request, RequestHandler, Response } from 'express';
import { windowLimiter } from '../../server/middleware/rate-limit';

/** Runs the limiter once for a caller; returns whether the call went on, was refused, and the headers it set. */
function call(limiter: RequestHandler, ip: string) {
  const headers: Record<string, string> = {};
  const res = { setHeader: (name: string, value: string) => void (headers[name] = value) } as unknown as Response;
  let outcome: 'next' | 'limited' | undefined;
  limiter({ ip } as Request, res, (() => (outcome = 'next')) as NextFunction);
  return { outcome: outcome ?? 'limited', headers };
}

describe('windowLimiter (the public certificate check budget)', () => {
  afterEach(() => vi.useRealTimers());

  it('lets `limit` calls per key through in a window, refuses the next, and keeps keys apart', () => {
    vi.useFakeTimers({ now: new Date('2026-12-02T10:00:00Z') });
    const onLimited = vi.fn();
    const limiter = windowLimiter({ windowMs: 60_000, limit: 3, key: (req) => req.ip ?? '', onLimited });
    expect([1, 2, 3].map(() => call(limiter, '203.0.113.5').outcome)).toEqual(['next', 'next', 'next']);
    expect(call(limiter, '203.0.113.5').outcome).toBe('limited');
    expect(onLimited).toHaveBeenCalledTimes(1);
    // Another caller has a budget of its own.
    expect(call(limiter, '203.0.113.6').outcome).toBe('next');
  });

  it('sends the draft-7 policy and the remaining budget with its reset in seconds', () => {
    vi.useFakeTimers({ now: new Date('2026-12-02T10:00:00Z') });
    const limiter = windowLimiter({ windowMs: 60_000, limit: 2, key: (req) => req.ip ?? '', onLimited: vi.fn() });
    expect(call(limiter, '198.51.100.1').headers).toEqual({ 'RateLimit-Policy': '2;w=60', RateLimit: 'limit=2, remaining=1, reset=60' });
    vi.advanceTimersByTime(15_500);
    expect(call(limiter, '198.51.100.1').headers.RateLimit).toBe('limit=2, remaining=0, reset=45');
    expect(call(limiter, '198.51.100.1').headers.RateLimit).toBe('limit=2, remaining=0, reset=45');
  });

  it('starts a fresh budget when the window ends', () => {
    vi.useFakeTimers({ now: new Date('2026-12-02T10:00:00Z') });
    const limiter = windowLimiter({ windowMs: 60_000, limit: 1, key: (req) => req.ip ?? '', onLimited: vi.fn() });
    expect(call(limiter, '192.0.2.9').outcome).toBe('next');
    expect(call(limiter, '192.0.2.9').outcome).toBe('limited');
    vi.advanceTimersByTime(59_999);
    expect(call(limiter, '192.0.2.9').outcome).toBe('limited');
    vi.advanceTimersByTime(1);
    expect(call(limiter, '192.0.2.9').outcome).toBe('next');
  });
});
