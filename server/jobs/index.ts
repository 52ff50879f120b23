import PgBoss from 'pg-boss';
import type { AppContext } from '../context';
import { deliverQueuedEmails } from '../services/email-log';
import { runReminders } from '../services/notifications';
import { issuePendingCertificates } from '../services/certificates';
import { closeExpiredAttempts } from '../services/exams';

/**
 * Scheduled work through pg-boss (its tables live in the `pgboss` schema of our database).
 * - readiness.scan, hourly: expiry reminders and weekly digests (server/services/notifications.ts
 *   decides per company, in the company's time zone, which hour counts as "morning").
 * - email.deliver, every 5 minutes: retries outbox e-mail that failed.
 * - exams.sweep, every minute: closes exam attempts whose deadline passed while nobody was looking
 *   (graded on the answers saved in time), then issues any certificate a pass is still owed (a pass
 *   whose issuing failed, e.g. the process stopped between the two).
 * Several app processes may run this; pg-boss hands each job to one of them, and the scan's unique
 * keys keep every reminder to one send even if two scans overlap.
 */
export const QUEUES = { scan: 'readiness.scan', deliver: 'email.deliver', sweep: 'exams.sweep' } as const;

export interface RunningJobs {
  boss: PgBoss;
  /** Queues a scan now (optionally as of a given day); answers the job id, or null if one is already waiting. */
  requestScan: (asOf?: string | null) => Promise<string | null>;
  /** Queues an exam sweep now (closing overdue attempts, issuing owed certificates). */
  requestSweep: () => Promise<string | null>;
  stop: () => Promise<void>;
}

export async function startJobs(ctx: AppContext, opts: { schedule?: boolean; pollingIntervalSeconds?: number } = {}): Promise<RunningJobs> {
  const boss = new PgBoss({ connectionString: ctx.config.databaseUrl, schema: 'pgboss', max: 4, application_name: 'plumewright-jobs' });
  boss.on('error', (err) => ctx.logger.error({ err }, 'job queue error'));
  await boss.start();
  // Two processes starting together can deadlock creating the same queue; the loser simply tries again.
  const createQueue = async (name: string, options: Parameters<PgBoss['createQueue']>[1]) => {
    for (let attempt = 1; ; attempt++) {
      try {
        return await boss.createQueue(name, options);
      } catch (error) {
        if ((error as { code?: string }).code !== '40P01' || attempt >= 5) throw error;
        await new Promise((r) => setTimeout(r, 100 * attempt));
      }
    }
  };
  await createQueue(QUEUES.scan, { name: QUEUES.scan, retryLimit: 2, retryDelay: 300, expireInSeconds: 15 * 60 });
  await createQueue(QUEUES.deliver, { name: QUEUES.deliver, retryLimit: 0, expireInSeconds: 10 * 60 });
  await createQueue(QUEUES.sweep, { name: QUEUES.sweep, retryLimit: 0, expireInSeconds: 5 * 60 });
  if (opts.schedule !== false) {
    // Hourly in UTC: each company's own morning comes round once a day whatever its zone.
    await boss.schedule(QUEUES.scan, '5 * * * *', {}, { tz: 'UTC' });
    await boss.schedule(QUEUES.deliver, '*/5 * * * *', {}, { tz: 'UTC' });
    await boss.schedule(QUEUES.sweep, '* * * * *', {}, { tz: 'UTC' });
  }
  const polling = { pollingIntervalSeconds: opts.pollingIntervalSeconds ?? 2 };
  await boss.work<{ asOf?: string | null }>(QUEUES.scan, polling, async (jobs) => {
    for (const job of jobs) {
      const summary = await runReminders(ctx, { asOf: job.data?.asOf ?? null });
      ctx.logger.info({ summary, jobId: job.id }, 'readiness scan done');
    }
  });
  await boss.work(QUEUES.deliver, polling, async () => {
    await deliverQueuedEmails(ctx.knex, ctx.mailer, ctx.logger);
  });
  await boss.work(QUEUES.sweep, polling, async () => {
    const closed = await closeExpiredAttempts(ctx);
    const certificates = await issuePendingCertificates(ctx);
    if (closed || certificates.processed) ctx.logger.info({ closed, certificates }, 'exam sweep done');
  });
  return {
    boss,
    requestSweep: () => boss.send(QUEUES.sweep, {}),
    requestScan: (asOf) => boss.send(QUEUES.scan, { asOf: asOf ?? null }, { singletonKey: `scan:${asOf ?? 'now'}` }),
    stop: () => boss.stop({ graceful: true, wait: true, timeout: 10_000 }),
  };
}
