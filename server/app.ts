import fs from 'node:fs';
import path from 'node:path';
import express, { type Express, type RequestHandler } from 'express';
import helmet from 'helmet';
import session from 'express-session';
import connectPgSimple from 'connect-pg-simple';
import cookieParser from 'cookie-parser';
import { Passport } from 'passport';
import { Strategy as LocalStrategy } from 'passport-local';
import { doubleCsrf } from 'csrf-csrf';
import { pinoHttp } from 'pino-http';
import pg from 'pg';
import type { AppContext } from './context';
import { apiNotFound, errorHandler } from './middleware/errors';
import { requireAccess } from './middleware/access';
import { validate } from './middleware/validate';
import { jsonBody as readJsonBody } from './middleware/json-body';
import { ApiRoutes, apiSubpath, type ApiMatch } from './middleware/api-routes';
import { BoundedMemo, deepFreeze, sendJson } from './middleware/fast-path';
import { routeTable } from './routes';
import type { RouteDef } from './routes/types';
import { verifyPassword } from './services/passwords';
import { loadSessionUser } from './services/users';
import { ReadCache } from './services/read-cache';

export interface CreatedApp {
  app: Express;
  routes: RouteDef[];
  /** Closes what the app opened beside the context (the session pool). */
  close: () => Promise<void>;
}

const CLIENT_DIR = path.resolve(import.meta.dirname, '../dist/client');

/**
 * Helmet's headers depend only on its options, never on the request: run it once against a recording
 * response and set what it set in one step per request (instead of a dozen chained middlewares).
 */
function fixedHeaders(middleware: RequestHandler): RequestHandler {
  const headers: [string, string | number | readonly string[]][] = [];
  const removed: string[] = [];
  let passed = false;
  const recorder = {
    // Lower-case names: Node lower-cases every name it is given, a fresh string per call unless it already is.
    setHeader: (name: string, value: string | number | readonly string[]) => headers.push([name.toLowerCase(), value]),
    removeHeader: (name: string) => removed.push(name),
    getHeader: () => undefined,
  };
  void middleware({ headers: {}, method: 'GET', url: '/' } as express.Request, recorder as unknown as express.Response, (err?: unknown) => {
    if (err) throw err;
    passed = true;
  });
  if (!passed || !headers.length) return middleware; // not the static middleware expected: run it as it is
  return (_req, res, next) => {
    for (const [name, value] of headers) res.setHeader(name, value);
    for (const name of removed) res.removeHeader(name);
    next();
  };
}

/**
 * A route's handlers (access, rate limits or uploads, validation, the handler) run in order as one
 * router handler: the same contract as Express (an error or a rejected promise goes to the error
 * handler) with one dispatch step per request instead of one per handler.
 */
function inSequence(handlers: RequestHandler[]): RequestHandler {
  return (req, res, next) => {
    let index = 0;
    const step = (err?: unknown) => {
      if (err !== undefined && err !== null) return next(err);
      const handler = handlers[index++];
      if (!handler) return next();
      try {
        const returned = handler(req, res, step) as unknown;
        if (returned instanceof Promise) returned.then(undefined, (error: unknown) => next(error ?? new Error('Rejected promise')));
      } catch (error) {
        next(error);
      }
    };
    step();
  };
}

/** The parts of an Express app its request path uses (not in Express's public types). */
interface ExpressInternals {
  handle: (req: express.Request, res: express.Response, callback?: (err?: unknown) => void) => void;
  request: object;
  response: object;
}

/** The Express app factory: used by server/index.ts and by the API tests. */
export function createApp(ctx: AppContext): CreatedApp {
  const { config } = ctx;
  const app = express();
  app.disable('x-powered-by');
  // API answers are computed per request (and the public ones marked no-store): a hash of every body
  // for conditional requests nobody makes is wasted work. Static files keep their own ETags.
  app.set('etag', false);
  if (config.secureCookies) app.set('trust proxy', 1);

  const securityHeaders = fixedHeaders(helmet({
    contentSecurityPolicy: {
      useDefaults: false,
      directives: {
        defaultSrc: ["'self'"],
        scriptSrc: ["'self'"],
        // PrimeVue's theme writes <style> elements at run time; scripts stay strictly same-origin.
        styleSrc: ["'self'", "'unsafe-inline'"],
        imgSrc: ["'self'", 'data:', 'blob:'],
        fontSrc: ["'self'", 'data:'],
        connectSrc: ["'self'"],
        objectSrc: ["'none'"],
        baseUri: ["'self'"],
        frameAncestors: ["'none'"],
        formAction: ["'self'"],
        ...(config.secureCookies ? { upgradeInsecureRequests: [] } : {}),
      },
    },
  }));
  // pino-http builds a child logger with the serialized request for every request, whatever the level:
  // about half the CPU of a small API call. When its request lines would be discarded (LOG_LEVEL above
  // info) requests get the plain logger instead; errors are still logged through it.
  const logRequests: RequestHandler = ctx.logger.isLevelEnabled('info')
    ? pinoHttp({ logger: ctx.logger, autoLogging: { ignore: (req) => req.url === '/api/health' } })
    : (req, _res, next) => {
        req.log = ctx.logger;
        next();
      };

  const sessionPool = new pg.Pool({ connectionString: config.databaseUrl, max: 5, connectionTimeoutMillis: 5_000 });
  sessionPool.on('error', (err) => ctx.logger.warn({ err }, 'session pool error'));
  const PgStore = connectPgSimple(session);
  const readCache = new ReadCache({ databaseUrl: config.databaseUrl, ttlMs: config.readCacheSeconds * 1000, logger: ctx.logger });
  void readCache.start();
  ctx.readCache = readCache;

  const rawBody = express.raw({ type: () => true, limit: '1mb' });
  // The usual JSON body is read on a short path of our own (a tenth of a calculation's CPU), anything unusual by body-parser.
  const jsonBody = readJsonBody(100 * 1024, express.json({ limit: '100kb' }));
  const parseCookies = cookieParser();
  const sessionMiddleware = session({
    name: 'pw.sid',
    // No touch: a session lives 12 hours from sign-in (an absolute limit), and reads never write.
    store: readCache.wrapStore(new PgStore({ pool: sessionPool, tableName: 'session', createTableIfMissing: false, pruneSessionInterval: 15 * 60, disableTouch: true })),
    secret: config.sessionSecret,
    resave: false,
    saveUninitialized: false,
    rolling: false,
    cookie: { httpOnly: true, sameSite: 'lax', secure: config.secureCookies, maxAge: 12 * 60 * 60 * 1000, path: '/' },
  });

  // An instance per app, so several apps in one process (the tests) never share strategies.
  const passport = new Passport();
  ctx.passport = passport;
  passport.use(
    new LocalStrategy({ usernameField: 'email', passwordField: 'password' }, async (email, password, done) => {
      try {
        const row = await ctx.knex('users').where({ email: email.trim() }).whereNull('disabled_at').first('id', 'password_hash');
        if (!(await verifyPassword(row?.password_hash ?? null, password))) return done(null, false);
        done(null, await loadSessionUser(ctx.knex, row.id));
      } catch (error) {
        done(error);
      }
    }),
  );
  passport.serializeUser((user, done) => done(null, user.id));
  passport.deserializeUser(async (id: string, done) => {
    try {
      done(null, (await readCache.user(id, () => loadSessionUser(ctx.knex, id))) ?? false);
    } catch (error) {
      done(error);
    }
  });
  const passportInitialize = passport.initialize();
  const passportSession = passport.session();

  // A public lookup without cookies has no session to load and would save none: it skips the session
  // and sign-in machinery (a third of such a request's CPU). Everything else goes through it.
  const sessionless = (req: express.Request, apiPath: string) =>
    (req.method === 'GET' || req.method === 'HEAD') && !req.headers.cookie && (apiPath.startsWith('/verify/') || apiPath === '/health');
  // Read-only fast path: an API call that only reads its session (everything but sign-in, sign-out,
  // the CSRF token, switching company and sign-up), whose signed cookie verifies and whose session and
  // user the read cache holds, gets them from the cache and skips express-session and passport: about
  // a third of such a call's CPU. The session is deep-frozen there, so a write fails loudly instead of
  // being lost. Anything else, and every cache miss, takes the full path.
  const sessionWriters = /^\/(auth\/|signup\/?$)/i;
  // A cookie's signature is an HMAC of its exact text: a text that verified once verifies again, so
  // verified texts are remembered (bounded) instead of hashed on every call. Failures are not kept.
  const verifiedCookies = new BoundedMemo<string, string>(20_000);
  // One frozen view per cached session value (a new value replaces it when the session changes).
  const sessionViews = new WeakMap<object, session.SessionData>();
  const cachedSession = (req: express.Request, res: express.Response, apiPath: string) => {
    if (sessionWriters.test(apiPath)) return;
    const raw = (req.cookies as Record<string, string> | undefined)?.['pw.sid'];
    if (!raw?.startsWith('s:')) return;
    let sid = verifiedCookies.get(raw);
    if (sid === undefined) {
      const verified = cookieParser.signedCookie(raw, config.sessionSecret);
      if (!verified) return;
      sid = verified;
      verifiedCookies.set(raw, sid);
    }
    const hit = readCache.signedIn(sid);
    if (!hit) return;
    let view = sessionViews.get(hit.session);
    if (!view) {
      view = deepFreeze({ ...structuredClone(hit.session), id: sid }) as session.SessionData;
      sessionViews.set(hit.session, view);
    }
    req.sessionID = sid;
    req.session = view as typeof req.session;
    req.user = hit.user;
    res.locals.sessionFromCache = true;
  };
  // A browser sends the same Cookie header with every call of a session: its parse is remembered per
  // header text (bounded, short headers only) and shared frozen, instead of parsed on every call.
  const parsedCookies = new BoundedMemo<string, Record<string, string>>(5_000);
  const noCookies: Record<string, string> = Object.freeze(Object.create(null) as Record<string, string>);
  const readCookies = (req: express.Request, res: express.Response, done: (err?: unknown) => void) => {
    const header = req.headers.cookie;
    const known = header ? parsedCookies.get(header) : noCookies;
    if (known) {
      req.cookies = known;
      req.signedCookies = noCookies;
      return done();
    }
    parseCookies(req, res, (err?: unknown) => {
      if (err) return done(err);
      req.cookies = Object.freeze(req.cookies as Record<string, string>);
      if (header && header.length <= 1_024) parsedCookies.set(header, req.cookies);
      done();
    });
  };
  /** Cookies, then the session and signed-in user: from the read cache when it can, else express-session and passport. */
  const withSession = (req: express.Request, res: express.Response, apiPath: string, done: (err?: unknown) => void) => {
    readCookies(req, res, (err?: unknown) => {
      if (err) return done(err);
      cachedSession(req, res, apiPath);
      if (res.locals.sessionFromCache || sessionless(req, apiPath)) return done();
      sessionMiddleware(req, res, (err1?: unknown) => {
        if (err1) return done(err1);
        passportInitialize(req, res, (err2?: unknown) => (err2 ? done(err2) : passportSession(req, res, done)));
      });
    });
  };

  // Behind TLS the CSRF cookie takes the `__Host-` prefix (Secure, Path=/, no Domain).
  const csrfCookie = config.secureCookies ? '__Host-pw.csrf' : 'pw.csrf';
  const { generateCsrfToken, validateRequest, invalidCsrfTokenError } = doubleCsrf({
    getSecret: () => config.sessionSecret,
    getSessionIdentifier: (req) => req.session.id,
    cookieName: csrfCookie,
    cookieOptions: { sameSite: 'lax', secure: config.secureCookies, httpOnly: true, path: '/' },
    getCsrfTokenFromRequest: (req) => req.headers['x-csrf-token'] as string | undefined,
  });
  // Double-submit check on every unsafe API call (csrf-csrf's own validator). Webhooks carry their own
  // signature and have no browser session. A (session, cookie token, header token) triple that
  // validated is remembered, bounded, since the HMAC over it cannot change.
  const validCsrf = new BoundedMemo<string, true>(20_000);
  const csrfCheck = (req: express.Request, isWebhook: boolean) => {
    if (isWebhook || req.method === 'GET' || req.method === 'HEAD' || req.method === 'OPTIONS') return true;
    const fromCookie = (req.cookies as Record<string, string> | undefined)?.[csrfCookie];
    const fromHeader = req.headers['x-csrf-token'];
    if (typeof fromCookie !== 'string' || typeof fromHeader !== 'string') return false;
    const key = `${req.session?.id}\n${fromCookie}\n${fromHeader}`;
    if (validCsrf.get(key)) return true;
    if (!validateRequest(req)) return false;
    validCsrf.set(key, true);
    return true;
  };

  const routes = routeTable(ctx);
  // Each route's handlers (access, rate limits or uploads, validation, the handler) run in sequence.
  const api = new ApiRoutes(routes.map((route) => {
    const chain: RequestHandler[] = [requireAccess(route.access), ...(route.before ?? [])];
    if (route.body || route.query || route.params) chain.push(validate(route));
    else chain.push((req, _res, next) => { req.valid = { body: req.body, query: req.query, params: req.params }; next(); });
    chain.push(async (req, res) => {
      const result = await route.handler(req, res);
      if (result !== undefined && !res.headersSent) sendJson(req, res, result);
    });
    return { method: route.method, path: route.path.replace(/^\/api/, ''), run: inSequence(chain) };
  }));
  /** An API call: session, body, CSRF check, then its route (or a 404 naming what was asked). */
  const handleApi = (req: express.Request, res: express.Response, next: express.NextFunction, apiPath: string) => {
    withSession(req, res, apiPath, (err?: unknown) => {
      if (err) return next(err);
      // Webhook signatures are computed over the exact bytes sent, so that one path keeps its raw body.
      const isStripe = apiPath === '/webhooks/stripe' || apiPath.startsWith('/webhooks/stripe/');
      (isStripe ? rawBody : jsonBody)(req, res, (err1?: unknown) => {
        if (err1) return next(err1);
        if (!csrfCheck(req, apiPath.startsWith('/webhooks/'))) return next(invalidCsrfTokenError);
        res.locals.generateCsrfToken = generateCsrfToken;
        let found: ApiMatch;
        try {
          found = api.find(req.method, apiPath);
        } catch (error) {
          return next(error);
        }
        if (found.kind === 'route') {
          req.params = found.params;
          return found.run(req, res, next);
        }
        if (found.kind === 'options') {
          res.setHeader('Allow', found.allow);
          res.setHeader('Content-Type', 'text/plain; charset=utf-8');
          return res.end(found.allow);
        }
        apiNotFound(req, res, next);
      });
    });
  };
  // Every request gets the security headers and the request logger first.
  const common = (req: express.Request, res: express.Response, done: (err?: unknown) => void) => {
    securityHeaders(req, res, (err?: unknown) => (err ? done(err) : logRequests(req, res, done)));
  };
  app.use(common);
  // An API call needs nothing from Express's router (handleApi does all of its dispatch), so it skips
  // it: what app.handle does before its router (link the request and response, give them Express's
  // prototypes and res.locals), then the common layer and its route, errors to errorHandler. About a
  // tenth of a small call's CPU. Everything else (the built client) takes app.handle as it is.
  const expressApp = app as unknown as ExpressInternals;
  const routerHandle = expressApp.handle.bind(app);
  expressApp.handle = (req, res, callback) => {
    const query = req.url.indexOf('?');
    const apiPath = apiSubpath(query < 0 ? req.url : req.url.slice(0, query));
    if (apiPath === undefined) return routerHandle(req, res, callback);
    req.res = res;
    res.req = req;
    Object.setPrototypeOf(req, expressApp.request);
    Object.setPrototypeOf(res, expressApp.response);
    if (!res.locals) res.locals = Object.create(null) as express.Response['locals'];
    const fail = (err: unknown) => {
      if (res.headersSent) return void req.socket?.destroy();
      errorHandler(err, req, res, () => undefined);
    };
    const next = (err?: unknown) => (err ? fail(err) : apiNotFound(req, res, fail));
    common(req, res, (err?: unknown) => (err ? fail(err) : handleApi(req, res, next, apiPath)));
  };

  if (config.serveClient) {
    if (!fs.existsSync(path.join(CLIENT_DIR, 'index.html'))) {
      ctx.logger.warn('dist/client is missing: run `npm run build` to serve the client');
    }
    app.use(express.static(CLIENT_DIR, { index: false, maxAge: '1h', setHeaders: (res, file) => {
      if (file.includes(`${path.sep}assets${path.sep}`)) res.setHeader('Cache-Control', 'public, max-age=31536000, immutable');
    } }));
    // History fallback: every other GET is a client route.
    app.use((req, res, next) => {
      if (req.method !== 'GET' || req.path.startsWith('/api')) return next();
      res.setHeader('Cache-Control', 'no-cache');
      res.sendFile(path.join(CLIENT_DIR, 'index.html'), (err) => err && next());
    });
  }

  app.use(errorHandler);
  return { app, routes, close: async () => {
    await readCache.close();
    await sessionPool.end();
  } };
}
