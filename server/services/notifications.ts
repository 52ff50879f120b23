import type { Knex } from 'knex';
import type { Logger } from 'pino';
import { RENEWAL_WINDOW_DAYS, cellStatuses, type CellStatus, type NoticeView, type ScanSummary } from '../../shared/readiness';
import type { AppConfig } from '../config';
import type { Mailer } from '../mail/mailer';
import { expiryReminderMail, weeklyDigestMail } from '../mail/templates';
import { notFound } from '../middleware/errors';
import { overdueAssignments } from './assignments';
import { deliverQueuedEmails, queueEmails } from './email-log';
import { addDays, companyClock, daysBetween, isoWeek, isValidTimeZone, listAreas, readinessAll, zonedNow } from './readiness';

/*
 * The reminder scan (pg-boss job `readiness.scan`, and on demand for operators).
 *
 * For each customer company, in its own time zone:
 * - Without an explicit day (`asOf`), a company is handled only from SEND_FROM_HOUR local time, so
 *   mail arrives in the morning whatever the zone; the job runs hourly and the unique keys below
 *   make every later run that day a no-op. An operator's "run now" skips the hour check.
 * - Expiry reminders: for each member's best valid certificate with 0..90 days left, the reminder
 *   whose window holds today: expiry-90 for 90..31 days left, expiry-30 for 30..8, expiry-7 for
 *   7..0. A window opens exactly on expiry − 90/30/7 days; a missed day (the platform was down) is
 *   caught up later in the same window, never with a stale, less urgent one.
 * - Weekly digest: one per manager per company per ISO week (Monday-based, local), on the first run
 *   of the week.
 * Exactly once: the notification row (unique on (certificate_id, kind), and on
 * (company_id, user_id, period) for digests) and its outbox e-mails are written in one transaction;
 * a second process's insert conflicts and queues nothing. Mail leaves only after commit.
 */
export const SEND_FROM_HOUR = 7;

const REMINDER_KINDS = ['expiry-90', 'expiry-30', 'expiry-7'] as const;
type ReminderKind = (typeof REMINDER_KINDS)[number];

export function reminderKindFor(daysLeft: number): ReminderKind | null {
  if (daysLeft < 0 || daysLeft > RENEWAL_WINDOW_DAYS) return null;
  if (daysLeft <= 7) return 'expiry-7';
  if (daysLeft <= 30) return 'expiry-30';
  return 'expiry-90';
}
/** Reminders more urgent than this one: if one was sent, this one is stale. */
const moreUrgent = (kind: ReminderKind) => REMINDER_KINDS.slice(REMINDER_KINDS.indexOf(kind) + 1);

interface ScanContext {
  knex: Knex;
  config: AppConfig;
  logger: Logger;
  mailer: Mailer;
}

interface Candidate {
  id: string;
  user_id: string;
  area_id: string;
  area_name: string;
  expires_on: string;
  holder_name: string;
  holder_email: string;
}

async function remindersForCompany(ctx: ScanContext, company: { id: string; name: string }, today: string, managers: Person[]) {
  const { knex } = ctx;
  const candidates: Candidate[] = (
    await knex.raw(
      `select c.id, c.user_id, c.area_id, a.name as area_name, c.expires_on, u.name as holder_name, u.email as holder_email
       from certificates c
       join memberships m on m.user_id = c.user_id and m.company_id = ? and m.roles @> array['crew']::text[]
       join users u on u.id = c.user_id and u.disabled_at is null
       join areas a on a.id = c.area_id
       where c.status = 'valid' and c.expires_on between ?::date and ?::date
         and not exists (
           select 1 from certificates r
           where r.user_id = c.user_id and r.area_id = c.area_id and r.status = 'valid' and r.expires_on > c.expires_on)
       order by c.expires_on, c.id`,
      [company.id, today, addDays(today, RENEWAL_WINDOW_DAYS)],
    )
  ).rows;

  let sent = 0;
  let queued = 0;
  for (const c of candidates) {
    const daysLeft = daysBetween(today, c.expires_on);
    const kind = reminderKindFor(daysLeft);
    if (!kind) continue;
    const n = await knex.transaction(async (trx) => {
      const inserted = await trx.raw(
        `insert into notifications (kind, company_id, user_id, certificate_id, area_id, expires_on, for_date)
         select ?, ?, ?, ?, ?, ?, ?
         where not exists (select 1 from notifications where certificate_id = ? and kind = any(?::text[]))
         on conflict do nothing
         returning id`,
        [kind, company.id, c.user_id, c.id, c.area_id, c.expires_on, today, c.id, `{${moreUrgent(kind).join(',')}}`],
      );
      const notificationId: string | undefined = inserted.rows[0]?.id;
      if (!notificationId) return 0;
      const base = { holderName: c.holder_name, areaName: c.area_name, expiresOn: c.expires_on, daysLeft, companyName: company.name };
      const mails = [{ ...expiryReminderMail({ ...base, forHolder: true, url: `${ctx.config.appUrl}/` }), to: c.holder_email }];
      const seen = new Set([c.holder_email.toLowerCase()]);
      for (const manager of managers) {
        if (seen.has(manager.email.toLowerCase())) continue;
        seen.add(manager.email.toLowerCase());
        mails.push({ ...expiryReminderMail({ ...base, forHolder: false, url: `${ctx.config.appUrl}/crew` }), to: manager.email });
      }
      await queueEmails(trx, mails.map((m) => ({ ...m, kind: `reminder-${kind.slice(7)}`, companyId: company.id, notificationId })));
      return mails.length;
    });
    if (n) {
      sent++;
      queued += n;
    }
  }
  return { reminders: sent, queued };
}

interface Person {
  id: string;
  name: string;
  email: string;
}

async function digestsForCompany(ctx: ScanContext, company: { id: string; name: string; time_zone: string }, today: string, managers: Person[]) {
  const { knex } = ctx;
  const period = isoWeek(today);
  const done = new Set<string>(
    await knex('notifications').where({ company_id: company.id, kind: 'digest', period }).pluck('user_id'),
  );
  const due = managers.filter((m) => !done.has(m.id));
  if (!due.length) return { digests: 0, queued: 0 };

  const areas = await listAreas(knex);
  const areaNames = new Map(areas.map((a) => [a.id, a.name]));
  const rows = await readinessAll(knex, company.id, { today, areaIds: areas.map((a) => a.id), areas });
  const counts = Object.fromEntries(cellStatuses.map((s) => [s, 0])) as Record<CellStatus, number>;
  const soonLimit = addDays(today, 30);
  const expiringSoon: { name: string; areaName: string; expiresOn: string }[] = [];
  for (const row of rows) {
    for (const cell of row.cells) {
      counts[cell.status]++;
      if (cell.status === 'expiring' && cell.expiresOn! <= soonLimit) expiringSoon.push({ name: row.name, areaName: areaNames.get(cell.area) ?? cell.area, expiresOn: cell.expiresOn! });
    }
  }
  expiringSoon.sort((a, b) => a.expiresOn.localeCompare(b.expiresOn));
  const overdue = (await overdueAssignments(knex, company.id, today)).map((a) => ({
    name: a.memberName,
    what: a.kind === 'drill' ? `drill "${a.drillTitle}"` : `${a.areaName} exam`,
    dueOn: a.dueOn,
  }));

  let digests = 0;
  for (const manager of due) {
    const inserted = await knex.transaction(async (trx) => {
      const result = await trx.raw(
        `insert into notifications (kind, company_id, user_id, period, for_date) values ('digest', ?, ?, ?, ?)
         on conflict do nothing returning id`,
        [company.id, manager.id, period, today],
      );
      const notificationId: string | undefined = result.rows[0]?.id;
      if (!notificationId) return false;
      const mail = weeklyDigestMail({
        managerName: manager.name,
        companyName: company.name,
        week: period,
        today,
        timeZone: company.time_zone,
        counts,
        expiringSoon: expiringSoon.slice(0, 25),
        overdue: overdue.slice(0, 25),
        url: `${ctx.config.appUrl}/crew`,
      });
      await queueEmails(trx, [{ ...mail, to: manager.email, kind: 'digest', companyId: company.id, notificationId }]);
      return true;
    });
    if (inserted) digests++;
  }
  return { digests, queued: digests };
}

/** Decides what is due and queues it (exactly once across processes); does not send. */
export interface ScanOptions {
  /** Act as if it were this day in every company (tests, demos, replays). */
  asOf?: string | null;
  now?: Date;
  companyIds?: string[];
  /** Run for every company whatever its local hour (an operator asked for a run now). */
  anyHour?: boolean;
}

export async function runReadinessScan(ctx: ScanContext, opts: ScanOptions = {}) {
  const { knex } = ctx;
  const now = opts.now ?? new Date();
  const query = knex('companies').where({ kind: 'customer' }).orderBy('id').select('id', 'name', 'time_zone');
  if (opts.companyIds) query.whereIn('id', opts.companyIds);
  const companies: { id: string; name: string; time_zone: string }[] = await query;
  const summary = { asOf: opts.asOf ?? null, companies: 0, reminders: 0, digests: 0, emailsQueued: 0 };
  for (const company of companies) {
    const timeZone = isValidTimeZone(company.time_zone) ? company.time_zone : 'UTC';
    const local = zonedNow(timeZone, now);
    if (!opts.asOf && !opts.anyHour && local.hour < SEND_FROM_HOUR) continue;
    const today = opts.asOf ?? local.date;
    summary.companies++;
    const managers: Person[] = await knex('memberships as m')
      .join('users as u', 'u.id', 'm.user_id')
      .where('m.company_id', company.id)
      .whereRaw("m.roles @> array['manager']::text[]")
      .whereNull('u.disabled_at')
      .orderBy('u.id')
      .select('u.id', 'u.name', 'u.email');
    try {
      const r = await remindersForCompany(ctx, company, today, managers);
      const d = await digestsForCompany(ctx, { ...company, time_zone: timeZone }, today, managers);
      summary.reminders += r.reminders;
      summary.digests += d.digests;
      summary.emailsQueued += r.queued + d.queued;
    } catch (err) {
      // One company's trouble must not hold up the others; the next run tries again.
      ctx.logger.error({ err, companyId: company.id }, 'readiness scan failed for a company');
    }
  }
  return summary;
}

/** The whole job: decide and queue, then deliver what is queued. */
export async function runReminders(ctx: ScanContext, opts: ScanOptions = {}): Promise<ScanSummary> {
  const summary = await runReadinessScan(ctx, opts);
  const delivered = await deliverQueuedEmails(ctx.knex, ctx.mailer, ctx.logger);
  return { ...summary, delivered };
}

const dayWords = (date: string) =>
  new Date(`${date}T12:00:00Z`).toLocaleDateString('en-GB', { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' });

/** A member's in-app notices: the latest reminder per certificate that is still the one they hold. */
export async function myNotices(knex: Knex, companyId: string, userId: string, now = new Date()): Promise<{ notices: NoticeView[]; today: string; timeZone: string }> {
  const { today, timeZone } = await companyClock(knex, companyId, now);
  const rows = await knex.raw(
    `select * from (
       select distinct on (n.certificate_id) n.id, n.kind, n.area_id, a.name as area_name, c.expires_on, n.created_at, n.dismissed_at
       from notifications n
       join certificates c on c.id = n.certificate_id
       left join areas a on a.id = n.area_id
       where n.user_id = ? and n.company_id = ? and n.kind <> 'digest'
         and c.status = 'valid' and c.expires_on >= ?::date
         and not exists (
           select 1 from certificates r
           where r.user_id = c.user_id and r.area_id = c.area_id and r.status = 'valid' and r.expires_on > c.expires_on)
       order by n.certificate_id, n.created_at desc
     ) latest where dismissed_at is null order by expires_on`,
    [userId, companyId, today],
  );
  return {
    notices: rows.rows.map((r: { id: string; kind: string; area_id: string | null; area_name: string | null; expires_on: string; created_at: Date }) => {
      const daysLeft = daysBetween(today, r.expires_on);
      const area = r.area_name ?? 'competency area';
      const left = daysLeft === 0 ? 'today is its last valid day' : `${daysLeft} day${daysLeft === 1 ? '' : 's'} left`;
      return {
        id: r.id,
        kind: r.kind,
        areaId: r.area_id,
        areaName: r.area_name,
        expiresOn: r.expires_on,
        daysLeft,
        message: `Your ${area} certificate expires on ${dayWords(r.expires_on)} (${left}). Renew it by passing the ${area} exam again.`,
        createdAt: r.created_at.toISOString(),
      };
    }),
    today,
    timeZone,
  };
}

export async function dismissNotice(knex: Knex, companyId: string, userId: string, id: string) {
  const updated = await knex('notifications').where({ id, user_id: userId, company_id: companyId }).whereNot('kind', 'digest').update({ dismissed_at: knex.fn.now() }).returning('id');
  if (!updated.length) throw notFound('Notice');
}
