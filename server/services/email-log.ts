import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type { EmailLogEntry, EmailStatus } from '../../shared/readiness';
import type { Mailer, OutgoingMail } from '../mail/mailer';

/*
 * Every e-mail the platform sends is a row in email_log, for operators.
 *
 * - Direct mail (invitations): callers use ctx.mailer.send as always; the wrapper from withEmailLog
 *   writes the row and marks it sent or failed. The caller handles its own failures; direct rows are
 *   never retried from here.
 * - Outbox mail (expiry reminders, digests, password reset links, payment receipts, certificate
 *   notices): written as `queued` in the same transaction that decided to send it, then delivered
 *   after commit by deliverQueuedEmails (at once, by its ids, when a person or an event is waiting on
 *   it; otherwise by the sweep). A row is claimed (`sending`) with FOR UPDATE SKIP LOCKED, so two
 *   processes never pick the same row. An SMTP failure marks it `failed` and it is retried with a
 *   growing delay, up to MAX_ATTEMPTS. A row left in `sending` by a crash is not retried (it may have
 *   gone out): it becomes `failed` with a note.
 */
export const MAX_ATTEMPTS = 3;
const STUCK_AFTER_MINUTES = 15;

const RAW = Symbol('raw mailer');
type LoggedMailer = Mailer & { [RAW]: Mailer };

/** A label for mail other parts of the platform send, read from its subject (they pass none). */
function kindOfDirectMail(subject: string): string {
  if (/invited you/i.test(subject)) return 'invitation';
  if (/password/i.test(subject)) return 'password-reset';
  if (/payment|receipt|invoice/i.test(subject)) return 'receipt';
  if (/certificate/i.test(subject)) return 'certificate';
  return 'other';
}

/** Wraps a mailer so every message sent through it is logged. Logging trouble never stops a send. */
export function withEmailLog(knex: Knex, mailer: Mailer, logger: Logger): Mailer {
  if ((mailer as Partial<LoggedMailer>)[RAW]) return mailer;
  const logged: LoggedMailer = {
    [RAW]: mailer,
    async send(mail: OutgoingMail) {
      let id: number | undefined;
      try {
        const [row] = await knex('email_log')
          .insert({ source: 'direct', kind: kindOfDirectMail(mail.subject), to_address: mail.to, subject: mail.subject, body_text: mail.text, body_html: mail.html ?? null, status: 'sending', attempts: 1, claimed_at: knex.fn.now() })
          .returning('id');
        id = row.id;
      } catch (err) {
        logger.warn({ err }, 'could not write the e-mail log row');
      }
      try {
        await mailer.send(mail);
      } catch (error) {
        if (id !== undefined) await knex('email_log').where({ id }).update({ status: 'failed', last_error: String((error as Error).message ?? error).slice(0, 500) }).catch(() => undefined);
        throw error;
      }
      if (id !== undefined) await knex('email_log').where({ id }).update({ status: 'sent', sent_at: knex.fn.now() }).catch(() => undefined);
    },
    close: () => mailer.close(),
  };
  return logged;
}

/** The transport under the logging wrapper: outbox rows are already logged. */
export function rawMailer(mailer: Mailer): Mailer {
  return (mailer as Partial<LoggedMailer>)[RAW] ?? mailer;
}

export interface QueuedMail {
  to: string;
  subject: string;
  text: string;
  html?: string;
  kind: string;
  companyId?: string | null;
  notificationId?: string | null;
}

/** Adds mail to the outbox inside the caller's transaction; nothing is sent until it commits. Answers the row ids. */
export async function queueEmails(trx: Knex.Transaction, mails: QueuedMail[]): Promise<number[]> {
  if (!mails.length) return [];
  const rows: { id: string | number }[] = await trx('email_log').insert(
    mails.map((m) => ({
      source: 'outbox',
      kind: m.kind,
      to_address: m.to,
      subject: m.subject,
      body_text: m.text,
      body_html: m.html ?? null,
      status: 'queued',
      company_id: m.companyId ?? null,
      notification_id: m.notificationId ?? null,
    })),
  ).returning('id');
  return rows.map((r) => Number(r.id));
}

/**
 * Withdraws outbox mail to `to` of this kind that has not gone out yet (say, a reset link that a
 * newer one replaced), so a retry never delivers it late. The rows stay in the log, failed, with the reason.
 */
export async function withdrawUnsentEmails(trx: Knex.Transaction, match: { to: string; kind: string }, reason: string) {
  await trx('email_log')
    .where({ source: 'outbox', to_address: match.to, kind: match.kind })
    .where((q) => q.where('status', 'queued').orWhere((f) => f.where('status', 'failed').where('attempts', '<', MAX_ATTEMPTS)))
    .update({ status: 'failed', attempts: MAX_ATTEMPTS, last_error: reason });
}

/** Sends what is due in the outbox, at most `limit` rows per call; only the rows `ids` when given. */
export async function deliverQueuedEmails(knex: Knex, mailer: Mailer, logger: Pick<Logger, 'warn'>, opts: { limit?: number; ids?: number[] } = {}) {
  const transport = rawMailer(mailer);
  await knex('email_log')
    .where({ source: 'outbox', status: 'sending' })
    .where('claimed_at', '<', knex.raw(`now() - interval '${STUCK_AFTER_MINUTES} minutes'`))
    .update({ status: 'failed', attempts: MAX_ATTEMPTS, last_error: 'Delivery was interrupted; not retried automatically, since it may have gone out.' });

  const claimed = await knex.raw(
    `update email_log set status = 'sending', attempts = attempts + 1, claimed_at = now()
     where id in (
       select id from email_log
       where source = 'outbox' and next_attempt_at <= now()
         and (status = 'queued' or (status = 'failed' and attempts < ?))
         ${opts.ids ? 'and id = any(?)' : ''}
       order by id limit ? for update skip locked)
     returning id, to_address, subject, body_text, body_html, attempts`,
    [MAX_ATTEMPTS, ...(opts.ids ? [opts.ids] : []), opts.limit ?? 100],
  );
  let sent = 0;
  let failed = 0;
  for (const row of claimed.rows as { id: number; to_address: string; subject: string; body_text: string; body_html: string | null; attempts: number }[]) {
    try {
      await transport.send({ to: row.to_address, subject: row.subject, text: row.body_text, html: row.body_html ?? undefined });
      await knex('email_log').where({ id: row.id }).update({ status: 'sent', sent_at: knex.fn.now(), last_error: null });
      sent++;
    } catch (error) {
      failed++;
      logger.warn({ err: error, emailId: row.id }, 'outbox e-mail failed');
      await knex('email_log')
        .where({ id: row.id })
        .update({
          status: 'failed',
          last_error: String((error as Error).message ?? error).slice(0, 500),
          next_attempt_at: knex.raw(`now() + interval '${5 * row.attempts} minutes'`),
        });
    }
  }
  return { sent, failed };
}

export async function listEmailLog(
  knex: Knex,
  q: { page: number; pageSize: number; status?: EmailStatus; kind?: string; search?: string },
): Promise<{ emails: EmailLogEntry[]; total: number; kinds: string[] }> {
  const base = knex('email_log');
  if (q.status) base.where('status', q.status);
  if (q.kind) base.where('kind', q.kind);
  if (q.search) {
    const like = `%${q.search.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    base.where((w) => w.whereRaw("to_address ilike ? escape '\\'", [like]).orWhereRaw("subject ilike ? escape '\\'", [like]));
  }
  const [rows, total, kinds] = await Promise.all([
    base.clone().orderBy('id', 'desc').limit(q.pageSize).offset((q.page - 1) * q.pageSize)
      .select('id', 'to_address', 'subject', 'kind', 'status', 'attempts', 'last_error', 'created_at', 'sent_at'),
    base.clone().count('* as n').first(),
    knex('email_log').distinct('kind').orderBy('kind').pluck('kind'),
  ]);
  return {
    emails: rows.map((r) => ({
      id: Number(r.id),
      to: r.to_address,
      subject: r.subject,
      kind: r.kind,
      status: r.status,
      attempts: r.attempts,
      lastError: r.last_error,
      createdAt: r.created_at.toISOString(),
      sentAt: r.sent_at?.toISOString() ?? null,
    })),
    total: Number(total?.n ?? 0),
    kinds,
  };
}
