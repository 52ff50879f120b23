import type { Request, Response } from 'express';

/**
 * A map that forgets everything once it holds `limit` entries: for remembering results that can never
 * change for the same key (a verified cookie signature, a validated CSRF triple), so a flood of distinct
 * keys costs memory up to the limit and then starts over.
 */
export class BoundedMemo<K, V> {
  private readonly entries = new Map<K, V>();
  constructor(private readonly limit: number) {}
  get(key: K): V | undefined {
    return this.entries.get(key);
  }
  set(key: K, value: V) {
    if (this.entries.size >= this.limit) this.entries.clear();
    this.entries.set(key, value);
  }
}

/** Freezes an object and everything reachable from it, so it can be shared between requests. */
export function deepFreeze<T>(value: T): T {
  if (value && typeof value === 'object' && !Object.isFrozen(value)) {
    Object.freeze(value);
    for (const key of Object.keys(value)) deepFreeze((value as Record<string, unknown>)[key]);
  }
  return value;
}

/**
 * Writes a route's result as JSON: what Express's res.json does for our API (no replacer, no spaces,
 * no ETag; the API turned ETags off), without the generic content negotiation on each call.
 */
export function sendJson(req: Request, res: Response, value: unknown) {
  if (res.statusCode === 204 || res.statusCode === 304) {
    res.end();
    return;
  }
  const body = JSON.stringify(value);
  if (!res.hasHeader('Content-Type')) res.setHeader('Content-Type', 'application/json; charset=utf-8');
  res.setHeader('Content-Length', Buffer.byteLength(body));
  if (req.method === 'HEAD') res.end();
  else res.end(body);
}
