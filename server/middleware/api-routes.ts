import { match, type MatchFunction } from 'path-to-regexp';
import type { RequestHandler } from 'express';

/** A route of the API table, its path without the `/api` prefix, and what runs when it matches. */
export interface ApiRouteEntry {
  method: string;
  path: string;
  run: RequestHandler;
}

export type ApiMatch =
  | { kind: 'route'; run: RequestHandler; params: Record<string, string> }
  | { kind: 'options'; allow: string }
  | { kind: 'none' };

interface Compiled {
  method: string;
  matches: MatchFunction<Record<string, string>>;
  run: RequestHandler;
}

/** Percent-decodes a path parameter as Express's router does: a broken escape is a 400, not a 500. */
function decodeParam(value: string): string {
  if (value.length === 0) return value;
  try {
    return decodeURIComponent(value);
  } catch (error) {
    if (error instanceof URIError) {
      error.message = `Failed to decode param '${value}'`;
      (error as URIError & { status: number }).status = 400;
    }
    throw error;
  }
}

/**
 * The API's routes, matched the way Express's router matches them (path-to-regexp, any letter case,
 * an optional trailing slash, HEAD answered by a GET route, OPTIONS listing the methods a path has),
 * but in one lookup: routes are grouped by their first path segment, so a call is tried against its
 * own group's few routes (then the routes that start with a parameter) instead of the whole table.
 */
export class ApiRoutes {
  private readonly groups = new Map<string, Compiled[]>();
  private readonly ungrouped: Compiled[] = [];

  constructor(entries: ApiRouteEntry[]) {
    for (const entry of entries) {
      const compiled: Compiled = {
        method: entry.method.toUpperCase(),
        matches: match<Record<string, string>>(entry.path, { decode: decodeParam, sensitive: false, trailing: true, end: true }),
        run: entry.run,
      };
      const segment = /^\/([^/:*{]+)(?=\/|$)/.exec(entry.path)?.[1]?.toLowerCase();
      if (!segment) {
        this.ungrouped.push(compiled);
        continue;
      }
      const group = this.groups.get(segment) ?? [];
      group.push(compiled);
      this.groups.set(segment, group);
    }
  }

  /** The route for a method and a path under /api (e.g. `/calculations/stack-flow`). Throws a 400 URIError for a broken escape. */
  find(method: string, path: string): ApiMatch {
    const end = path.indexOf('/', 1);
    const segment = (end < 0 ? path.slice(1) : path.slice(1, end)).toLowerCase();
    // Methods of routes whose path matched but whose method did not (made only when there is one).
    let allowed: Set<string> | undefined;
    const tryRoutes = (candidates: Compiled[] | undefined): ApiMatch | undefined => {
      for (const route of candidates ?? []) {
        const matched = route.matches(path);
        if (!matched) continue;
        if (route.method === method || (method === 'HEAD' && route.method === 'GET')) return { kind: 'route', run: route.run, params: { ...matched.params } };
        allowed ??= new Set();
        allowed.add(route.method);
        if (route.method === 'GET') allowed.add('HEAD');
      }
      return undefined;
    };
    const found = tryRoutes(this.groups.get(segment)) ?? tryRoutes(this.ungrouped);
    if (found) return found;
    if (method === 'OPTIONS' && allowed) return { kind: 'options', allow: [...allowed].join(', ') };
    return { kind: 'none' };
  }
}

/** The part of a request path after `/api` (Express mounts match in any letter case), or undefined outside the API. */
export function apiSubpath(pathname: string): string | undefined {
  if (pathname.length < 4 || pathname.charCodeAt(0) !== 47 || pathname.slice(1, 4).toLowerCase() !== 'api') return undefined;
  if (pathname.length === 4) return '/';
  return pathname.charCodeAt(4) === 47 ? pathname.slice(4) : undefined;
}
