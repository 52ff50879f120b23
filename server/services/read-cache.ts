import session from 'express-session';
import pg from 'pg';
import type { Logger } from 'pino';

/**
 * A short-lived, in-process cache of session rows, signed-in users and public certificate lookups, so
 * a signed-in request does not cost two PostgreSQL round trips before it starts its own work, and a
 * public verification reads no row it read a moment ago.
 *
 * Correctness rests on PostgreSQL, not on timing: triggers (migration 20261202000060) announce every
 * change to a session, user, membership, company, subscription or certificate on the `plumewright_cache` channel,
 * and every app process listens. A notice drops the matching entries at once; a process signs out
 * everywhere within the time a notice takes to cross the loopback or the data centre (milliseconds).
 *
 * The cache only serves while its listening connection is up: when that connection fails (the
 * database restarting, a network cut) everything cached is dropped and every request reads the
 * database again until listening resumes, so no change can be missed while deaf. A load that
 * started before a notice arrived is not stored (the epoch check), and entries live at most
 * `ttlMs` whatever happens.
 */
export const READ_CACHE_CHANNEL = 'plumewright_cache';

interface Entry<T> {
  value: T;
  until: number;
}

export class ReadCache {
  private sessions = new Map<string, Entry<session.SessionData | null>>();
  private users = new Map<string, Entry<Express.User | null>>();
  private certificates = new Map<string, Entry<unknown>>();
  private epoch = 0;
  private listening = false;
  private client: pg.Client | null = null;
  private closed = false;
  private retry: NodeJS.Timeout | null = null;
  private retryMs = 250;

  constructor(
    private readonly opts: { databaseUrl: string; ttlMs: number; maxEntries?: number; logger: Logger },
  ) {}

  get enabled() {
    return this.listening && this.opts.ttlMs > 0;
  }

  /** Starts listening; resolves once the first LISTEN is in place (or failed, leaving the cache off and retrying). */
  async start(): Promise<void> {
    if (this.opts.ttlMs <= 0) return;
    await this.connect();
  }

  private async connect(): Promise<void> {
    if (this.closed) return;
    const client = new pg.Client({ connectionString: this.opts.databaseUrl, application_name: 'plumewright-read-cache', connectionTimeoutMillis: 5_000 });
    const deaf = (err?: Error) => {
      if (this.client !== client) return;
      this.client = null;
      this.goDeaf();
      if (err) this.opts.logger.warn({ err }, 'read cache stopped listening; reading sessions from the database');
      client.end().catch(() => {});
      this.scheduleReconnect();
    };
    client.on('error', deaf);
    client.on('end', () => deaf());
    client.on('notification', (msg) => this.onNotice(msg.payload ?? '*'));
    this.client = client;
    try {
      await client.connect();
      await client.query(`LISTEN ${READ_CACHE_CHANNEL}`);
      if (this.client !== client || this.closed) return;
      this.listening = true;
      this.retryMs = 250;
    } catch (err) {
      deaf(err as Error);
    }
  }

  private scheduleReconnect() {
    if (this.closed || this.retry) return;
    this.retry = setTimeout(() => {
      this.retry = null;
      void this.connect();
    }, this.retryMs);
    this.retry.unref();
    this.retryMs = Math.min(this.retryMs * 2, 5_000);
  }

  private goDeaf() {
    this.listening = false;
    this.clear();
  }

  private clear() {
    this.epoch++;
    this.sessions.clear();
    this.users.clear();
    this.certificates.clear();
  }

  /** Applies a change notice (also used for changes made by this process, before the database's notice comes back). */
  onNotice(payload: string) {
    this.epoch++;
    if (payload.startsWith('s:')) this.sessions.delete(payload.slice(2));
    else if (payload.startsWith('u:')) this.users.delete(payload.slice(2));
    else if (payload.startsWith('c:')) this.certificates.delete(payload.slice(2));
    else this.clear();
  }

  private read<T>(map: Map<string, Entry<T>>, key: string): Entry<T> | undefined {
    if (!this.enabled) return undefined;
    const hit = map.get(key);
    if (hit && hit.until > Date.now()) return hit;
    if (hit) map.delete(key);
    return undefined;
  }

  private write<T>(map: Map<string, Entry<T>>, key: string, value: T, epochAtLoad: number, until = Date.now() + this.opts.ttlMs) {
    if (!this.enabled || epochAtLoad !== this.epoch) return;
    if (map.size >= (this.opts.maxEntries ?? 20_000)) map.clear();
    map.set(key, { value, until: Math.min(until, Date.now() + this.opts.ttlMs) });
  }

  /** The signed-in user behind an id, through the cache. `load` answers undefined for a removed or disabled user. */
  async user(id: string, load: () => Promise<Express.User | undefined>): Promise<Express.User | undefined> {
    const hit = this.read(this.users, id);
    if (hit) return hit.value ?? undefined;
    const epoch = this.epoch;
    const value = await load();
    this.write(this.users, id, value ?? null, epoch);
    return value;
  }

  /**
   * A signed-in request's session and user when both were read a moment ago, else undefined (the
   * caller then goes through express-session and passport as usual). Never loads anything.
   */
  signedIn(sid: string): { session: session.SessionData; user: Express.User } | undefined {
    const sessionHit = this.read(this.sessions, sid)?.value;
    const expires = sessionHit ? this.expiryOf(sessionHit) : Infinity;
    const userId = (sessionHit as { passport?: { user?: unknown } } | null | undefined)?.passport?.user;
    if (!sessionHit || expires <= Date.now() || typeof userId !== 'string') return undefined;
    const user = this.read(this.users, userId)?.value;
    return user ? { session: sessionHit, user } : undefined;
  }

  /** When a cached session's cookie expires (ms), read once per cached value instead of parsed on every call. */
  private readonly expiries = new WeakMap<object, number>();
  private expiryOf(value: session.SessionData): number {
    let expires = this.expiries.get(value);
    if (expires === undefined) {
      expires = value.cookie?.expires ? new Date(value.cookie.expires).getTime() : Infinity;
      this.expiries.set(value, expires);
    }
    return expires;
  }

  /** A certificate's row by its canonical number (null when there is none), through the cache. */
  async certificate<T>(number: string, load: () => Promise<T | undefined>): Promise<T | undefined> {
    const hit = this.read(this.certificates, number);
    if (hit) return (hit.value ?? undefined) as T | undefined;
    const epoch = this.epoch;
    const value = await load();
    this.write(this.certificates, number, value ?? null, epoch);
    return value;
  }

  /** Wraps a session store so reads come from the cache; writes and deletions go through and drop the entry. */
  wrapStore(inner: session.Store): session.Store {
    // eslint-disable-next-line @typescript-eslint/no-this-alias
    const cache = this;
    class CachedStore extends session.Store {
      get(sid: string, callback: (err: unknown, session?: session.SessionData | null) => void) {
        const hit = cache.read(cache.sessions, sid);
        if (hit) {
          const value = hit.value;
          if (value && cache.expiryOf(value) <= Date.now()) {
            cache.sessions.delete(sid);
            return callback(null, null);
          }
          // Each request gets its own copy: express-session decorates and mutates what it is given.
          return callback(null, value ? structuredClone(value) : null);
        }
        const epoch = cache.epoch;
        inner.get(sid, (err, value) => {
          if (!err) {
            const expires = value?.cookie?.expires ? new Date(value.cookie.expires).getTime() : undefined;
            cache.write(cache.sessions, sid, value ? structuredClone(value) : null, epoch, expires);
          }
          callback(err, value);
        });
      }
      set(sid: string, value: session.SessionData, callback?: (err?: unknown) => void) {
        cache.onNotice(`s:${sid}`);
        inner.set(sid, value, (err?: unknown) => {
          cache.onNotice(`s:${sid}`);
          callback?.(err);
        });
      }
      destroy(sid: string, callback?: (err?: unknown) => void) {
        cache.onNotice(`s:${sid}`);
        inner.destroy(sid, (err?: unknown) => {
          cache.onNotice(`s:${sid}`);
          callback?.(err);
        });
      }
      touch(sid: string, value: session.SessionData, callback?: () => void) {
        if (inner.touch) inner.touch(sid, value, () => callback?.());
        else callback?.();
      }
    }
    return new CachedStore();
  }

  async close() {
    this.closed = true;
    if (this.retry) clearTimeout(this.retry);
    const client = this.client;
    this.client = null;
    this.goDeaf();
    await client?.end().catch(() => {});
  }
}
