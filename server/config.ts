/** Every setting the server reads from its environment, in one place. */
export interface AppConfig {
  env: 'development' | 'production' | 'test';
  databaseUrl: string;
  host: string;
  port: number;
  /** Public base URL used in e-mails and certificate QR codes. */
  appUrl: string;
  sessionSecret: string;
  /** Set when served behind TLS so cookies get the Secure flag. */
  secureCookies: boolean;
  smtp: { host: string; port: number; from: string };
  mailInboxUrl?: string;
  stripe: { secretKey: string; webhookSecret: string; host?: string; port?: number; protocol?: 'http' | 'https' };
  loginRateLimit: { windowMs: number; max: number };
  /** Public certificate checks (number lookups and PDF checks) per caller address. */
  verifyRateLimit: { windowMs: number; max: number };
  /** How long a process may reuse a session or user it read (0 turns the cache off); see server/services/read-cache.ts. */
  readCacheSeconds: number;
  serveClient: boolean;
  logLevel: string;
}

function int(value: string | undefined, fallback: number) {
  const n = Number.parseInt(value ?? '', 10);
  return Number.isFinite(n) ? n : fallback;
}

export function loadConfig(env: NodeJS.ProcessEnv = process.env): AppConfig {
  const mode = env.NODE_ENV === 'production' ? 'production' : env.NODE_ENV === 'test' ? 'test' : 'development';
  const port = int(env.PORT, 3000);
  const host = env.HOST ?? '127.0.0.1';
  if (!env.DATABASE_URL) throw new Error('DATABASE_URL is not set (npm start and npm test set it for you).');
  if (mode === 'production' && !env.SESSION_SECRET) throw new Error('SESSION_SECRET must be set in production.');
  const stripeUrl = env.STRIPE_API_URL ? new URL(env.STRIPE_API_URL) : undefined;
  return {
    env: mode,
    databaseUrl: env.DATABASE_URL,
    host,
    port,
    appUrl: (env.APP_URL ?? `http://${host}:${port}`).replace(/\/$/, ''),
    sessionSecret: env.SESSION_SECRET ?? 'development-only-session-secret-change-me',
    secureCookies: env.SECURE_COOKIES === 'true',
    smtp: {
      host: env.SMTP_HOST ?? '127.0.0.1',
      port: int(env.SMTP_PORT, 1025),
      from: env.MAIL_FROM ?? 'Plumewright <no-reply@plumewright.example>',
    },
    mailInboxUrl: env.MAIL_INBOX_URL,
    stripe: {
      secretKey: env.STRIPE_SECRET_KEY ?? 'sk_test_local_fake',
      webhookSecret: env.STRIPE_WEBHOOK_SECRET ?? 'whsec_local_fake',
      host: stripeUrl?.hostname,
      port: stripeUrl ? int(stripeUrl.port, stripeUrl.protocol === 'https:' ? 443 : 80) : undefined,
      protocol: stripeUrl ? (stripeUrl.protocol.replace(':', '') as 'http' | 'https') : undefined,
    },
    loginRateLimit: { windowMs: int(env.LOGIN_RATE_WINDOW_MS, 15 * 60_000), max: int(env.LOGIN_RATE_MAX, 10) },
    verifyRateLimit: { windowMs: int(env.VERIFY_RATE_WINDOW_MS, 60_000), max: int(env.VERIFY_RATE_MAX, 60) },
    readCacheSeconds: Math.max(0, int(env.READ_CACHE_SECONDS, 60)),
    serveClient: env.SERVE_CLIENT === 'true' || mode === 'production',
    logLevel: env.LOG_LEVEL ?? (mode === 'test' ? 'silent' : 'info'),
  };
}
