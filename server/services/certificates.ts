import type { Knex } from 'knex';
import type { Logger } from 'pino';
import type { AppConfig } from '../config';
import type { Mailer } from '../mail/mailer';
import { certificateIssuedMail } from '../mail/templates';
import { HttpError, badRequest, conflict, notFound } from '../middleware/errors';
import { renderCertificatePdf, sha256Hex } from '../pdf/certificate';
import { recordAudit } from './audit';
import { deliverQueuedEmails, queueEmails } from './email-log';
import { generateCertificateNumber, parseCertificateNumber } from './certificate-number';
import { getCompanyLogo } from './logos';
import type { CertificateStatus, MyCertificate, OperatorCertificate } from '../../shared/certificates';

/**
 * Certificates: issued from exam passes, renewed, revoked, re-issued, listed and downloaded.
 *
 * Dates are calendar days in UTC. A certificate is valid from `issued_on` through `expires_on`
 * inclusive; from the next UTC day on it reads `expired`. `expired` is never stored: it is computed
 * from the date whenever a certificate is read, so no job has to run for it to be right.
 */
export type StoredStatus = 'valid' | 'revoked' | 'superseded';
export type { CertificateStatus };

/** How far before expiry a new pass renews (replaces) a certificate that is still valid. */
export const RENEWAL_WINDOW_DAYS = 90;

/**
 * What issuing needs: the app context satisfies it; the demo seed passes a smaller one. Without a
 * mailer no e-mail is queued (the seed's made-up history tells nobody).
 */
export interface IssueContext {
  knex: Knex;
  config: Pick<AppConfig, 'appUrl'>;
  mailer?: Mailer;
  logger?: Pick<Logger, 'warn' | 'info'>;
}

export interface Actor {
  userId?: string | null;
  ip?: string;
}

export interface CertificateRow {
  id: string;
  number: string;
  user_id: string | null;
  company_id: string | null;
  area_id: string;
  status: StoredStatus;
  issued_on: string;
  expires_on: string;
  holder_name: string;
  area_name: string;
  methods: string[];
  company_name: string | null;
  revoked_at: Date | null;
  revoked_reason: string | null;
  revoked_by: string | null;
  superseded_by: string | null;
  superseded_at: Date | null;
  superseded_reason: 'renewal' | 'name-correction' | null;
  exam_pass_id: string | null;
  pdf: Buffer;
  pdf_sha256: string;
  created_at: Date;
}

/** Every column but the PDF bytes, for queries that never need them. */
export const CERTIFICATE_COLUMNS = [
  'id', 'number', 'user_id', 'company_id', 'area_id', 'status', 'issued_on', 'expires_on', 'holder_name', 'area_name', 'methods',
  'company_name', 'revoked_at', 'revoked_reason', 'revoked_by', 'superseded_by', 'superseded_at', 'superseded_reason', 'exam_pass_id',
  'pdf_sha256', 'created_at',
] as const;
export const certificateColumns = (alias?: string) => CERTIFICATE_COLUMNS.map((c) => (alias ? `${alias}.${c}` : c));

// Dates ---------------------------------------------------------------------------------------

/** Today as a UTC calendar date, YYYY-MM-DD. */
export const todayUtc = (now: Date = new Date()) => now.toISOString().slice(0, 10);

export function addDays(isoDate: string, days: number): string {
  const d = new Date(`${isoDate}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + days);
  return d.toISOString().slice(0, 10);
}

/** Calendar months later; a day the month lacks becomes its last day (31 Jan + 1 month = 28/29 Feb). */
export function addMonths(isoDate: string, months: number): string {
  const [y, m, d] = isoDate.split('-').map(Number);
  const target = new Date(Date.UTC(y, m - 1 + months, 1));
  const lastDay = new Date(Date.UTC(target.getUTCFullYear(), target.getUTCMonth() + 1, 0)).getUTCDate();
  target.setUTCDate(Math.min(d, lastDay));
  return target.toISOString().slice(0, 10);
}

/** The status a reader sees: revoked and superseded as stored, otherwise expired or valid by date. */
export function effectiveStatus(row: Pick<CertificateRow, 'status' | 'expires_on'>, today = todayUtc()): CertificateStatus {
  if (row.status !== 'valid') return row.status;
  return row.expires_on < today ? 'expired' : 'valid';
}

/** The same rule in SQL, for lists filtered or counted in the database (e.g. readiness). */
export function effectiveStatusSql(knex: Knex, alias = 'certificates', today = todayUtc()) {
  return knex.raw(`case when ??.status <> 'valid' then ??.status when ??.expires_on < ?::date then 'expired' else 'valid' end`, [alias, alias, alias, today]);
}

export const verifyUrlFor = (appUrl: string, number: string) => `${appUrl}/verify/${number}`;

export interface CertificateSummary {
  id: string;
  number: string;
  areaId: string;
  area: string;
  holderName: string;
  status: CertificateStatus;
  issuedOn: string;
  expiresOn: string;
}

export function summarise(row: CertificateRow, today = todayUtc()): CertificateSummary {
  return {
    id: row.id,
    number: row.number,
    areaId: row.area_id,
    area: row.area_name,
    holderName: row.holder_name,
    status: effectiveStatus(row, today),
    issuedOn: row.issued_on,
    expiresOn: row.expires_on,
  };
}

/** Canonical number from a route parameter, or a 400 naming the field with the typo hint. */
export function requireNumber(input: string, field = 'number'): string {
  const parsed = parseCertificateNumber(input);
  if (parsed.ok) return parsed.number;
  throw new HttpError(400, parsed.reason === 'check' ? 'number_check_failed' : 'invalid_number', `The certificate number ${parsed.message}.`, [
    { field, message: `${field}: ${parsed.message}` },
  ]);
}

// Issuing -------------------------------------------------------------------------------------

interface PdfSource {
  number: string;
  holderName: string;
  areaName: string;
  methods: string[];
  issuedOn: string;
  expiresOn: string;
  companyId: string | null;
  companyName: string | null;
}

async function renderFor(db: Knex | Knex.Transaction, appUrl: string, source: PdfSource) {
  const logo = source.companyId ? await getCompanyLogo(db, source.companyId) : null;
  const pdf = await renderCertificatePdf({
    number: source.number,
    holderName: source.holderName,
    areaName: source.areaName,
    methods: source.methods,
    issuedOn: source.issuedOn,
    expiresOn: source.expiresOn,
    companyName: source.companyName,
    logo,
    verifyUrl: verifyUrlFor(appUrl, source.number),
  });
  return { pdf, sha256: sha256Hex(pdf) };
}

/** A number no certificate has yet; the unique index stays the last word. */
async function freshNumber(db: Knex | Knex.Transaction): Promise<string> {
  for (let attempt = 0; attempt < 5; attempt++) {
    const number = generateCertificateNumber();
    if (!(await db('certificates').where({ number }).first('id'))) return number;
  }
  throw new Error('Could not find an unused certificate number in five tries.');
}

export type IssueOutcomeKind = 'issued' | 'renewed' | 'already-issued' | 'already-current';

export interface IssueOutcome {
  /** issued: first in this area; renewed: replaced one within the renewal window; already-issued: this
   * pass was consumed before; already-current: a certificate valid beyond the renewal window stands. */
  outcome: IssueOutcomeKind;
  certificate: CertificateSummary | null;
  /** The certificate this one replaced, on renewal. */
  supersedes?: string[];
}

interface PassRow {
  id: string;
  user_id: string;
  company_id: string | null;
  area_id: string;
  score_pct: string;
  duration_seconds: number | null;
  passed_at: Date;
  consumed_at: Date | null;
  certificate_id: string | null;
}

/**
 * Turns one exam pass into a certificate. Idempotent: the pass row is locked (`for update`) and
 * consumed in the same transaction that writes the certificate, so a second call, concurrent or
 * later, answers with the same certificate. A per-member-and-area advisory lock keeps two different
 * passes of the same person and area from both renewing the same certificate.
 *
 * Rules: the issue date is the pass's UTC date; validity is the area's `validity_months`. If the
 * member holds a certificate in the area that is valid on that day and expires within 90 days, it is
 * superseded by the new one (renewal). If it expires later than that, no new certificate is issued;
 * the pass is consumed and linked to the standing certificate.
 */
export async function issueCertificateForPass(ctx: IssueContext, passId: string): Promise<IssueOutcome> {
  let queued: number[] = [];
  const result = await ctx.knex.transaction(async (trx): Promise<IssueOutcome> => {
    const pass = await trx('exam_passes').where({ id: passId }).forUpdate().first<PassRow | undefined>();
    if (!pass) throw notFound('Exam pass');
    if (pass.consumed_at) {
      const existing = pass.certificate_id ? await trx('certificates').where({ id: pass.certificate_id }).first<CertificateRow>(certificateColumns()) : undefined;
      return { outcome: 'already-issued', certificate: existing ? summarise(existing) : null };
    }
    await trx.raw('select pg_advisory_xact_lock(hashtext(?))', [`certificate:${pass.user_id}:${pass.area_id}`]);

    const issuedOn = todayUtc(new Date(pass.passed_at));
    const area = await trx('areas').where({ id: pass.area_id }).first<{ name: string; methods: string[]; validity_months: number } | undefined>('name', 'methods', 'validity_months');
    if (!area) throw notFound(`Area "${pass.area_id}"`);
    const standing = await trx('certificates')
      .where({ user_id: pass.user_id, area_id: pass.area_id, status: 'valid' })
      .where('expires_on', '>=', issuedOn)
      .where('issued_on', '<=', issuedOn)
      .orderBy('expires_on', 'desc')
      .forUpdate()
      .select<CertificateRow[]>(certificateColumns());

    const renewalEdge = addDays(issuedOn, RENEWAL_WINDOW_DAYS);
    const beyondWindow = standing.find((c) => c.expires_on > renewalEdge);
    if (beyondWindow) {
      await trx('exam_passes').where({ id: pass.id }).update({ consumed_at: trx.fn.now(), certificate_id: beyondWindow.id });
      await recordAudit(trx, {
        actorUserId: pass.user_id, companyId: pass.company_id, action: 'certificate.pass-recorded',
        targetType: 'certificate', targetId: beyondWindow.id, details: { passId: pass.id, reason: 'valid beyond the renewal window' },
      });
      return { outcome: 'already-current', certificate: summarise(beyondWindow) };
    }

    const user = await trx('users').where({ id: pass.user_id }).first<{ name: string; email: string }>('name', 'email');
    const company = pass.company_id ? await trx('companies').where({ id: pass.company_id }).first<{ name: string } | undefined>('name') : undefined;
    const number = await freshNumber(trx);
    const source: PdfSource = {
      number,
      holderName: user.name,
      areaName: area.name,
      methods: area.methods,
      issuedOn,
      expiresOn: addMonths(issuedOn, area.validity_months),
      companyId: pass.company_id,
      companyName: company?.name ?? null,
    };
    const { pdf, sha256 } = await renderFor(trx, ctx.config.appUrl, source);
    const [row] = await trx('certificates')
      .insert({
        number,
        user_id: pass.user_id,
        company_id: pass.company_id,
        area_id: pass.area_id,
        status: 'valid',
        issued_on: source.issuedOn,
        expires_on: source.expiresOn,
        holder_name: source.holderName,
        area_name: source.areaName,
        methods: source.methods,
        company_name: source.companyName,
        exam_pass_id: pass.id,
        pdf,
        pdf_sha256: sha256,
      })
      .returning<CertificateRow[]>(certificateColumns());
    const supersedes = standing.map((c) => c.number);
    if (standing.length) {
      await trx('certificates')
        .whereIn('id', standing.map((c) => c.id))
        .update({ status: 'superseded', superseded_by: row.id, superseded_at: trx.fn.now(), superseded_reason: 'renewal' });
    }
    await trx('exam_passes').where({ id: pass.id }).update({ consumed_at: trx.fn.now(), certificate_id: row.id });
    await recordAudit(trx, {
      actorUserId: pass.user_id, companyId: pass.company_id, action: standing.length ? 'certificate.renewed' : 'certificate.issued',
      targetType: 'certificate', targetId: row.id, details: { number, areaId: pass.area_id, passId: pass.id, supersedes },
    });
    const summary = summarise(row);
    queued = await queueIssuedMail(ctx, trx, { to: user.email, name: user.name, companyId: pass.company_id, summary, kind: standing.length ? 'renewal' : 'first' });
    return { outcome: standing.length ? 'renewed' : 'issued', certificate: summary, ...(supersedes.length ? { supersedes } : {}) };
  });
  await deliverIssuedMail(ctx, queued);
  return result;
}

/**
 * The "certificate issued" message goes through the e-mail outbox: queued in the transaction that
 * writes the certificate (so exactly once per certificate, since the pass or the old certificate is
 * locked and consumed there), sent right after commit, retried by the delivery job if that fails.
 */
async function queueIssuedMail(
  ctx: IssueContext,
  trx: Knex.Transaction,
  mail: { to: string; name: string; companyId: string | null; summary: CertificateSummary; kind: 'first' | 'renewal' | 'correction' },
): Promise<number[]> {
  if (!ctx.mailer) return [];
  const message = certificateIssuedMail({
    name: mail.name,
    number: mail.summary.number,
    area: mail.summary.area,
    issuedOn: mail.summary.issuedOn,
    expiresOn: mail.summary.expiresOn,
    verifyUrl: verifyUrlFor(ctx.config.appUrl, mail.summary.number),
    certificatesUrl: `${ctx.config.appUrl}/certificates`,
    kind: mail.kind,
  });
  return queueEmails(trx, [{ to: mail.to, kind: 'certificate', companyId: mail.companyId, ...message }]);
}

async function deliverIssuedMail(ctx: IssueContext, ids: number[]) {
  if (!ids.length || !ctx.mailer) return;
  const logger = ctx.logger ?? { warn: () => undefined };
  try {
    await deliverQueuedEmails(ctx.knex, ctx.mailer, logger, { ids });
  } catch (err) {
    // The certificate stands and its message waits in the outbox for the delivery job.
    logger.warn({ err, emailIds: ids }, 'certificate e-mail left for the delivery job');
  }
}

/** The sweep: issues from every pass not yet consumed, oldest first. Safe to run anywhere, any time. */
export async function issuePendingCertificates(ctx: IssueContext, limit = 500): Promise<{ processed: number; issued: number; failed: number }> {
  const pending = await ctx.knex('exam_passes').whereNull('consumed_at').orderBy('passed_at').limit(limit).pluck('id');
  let issued = 0;
  let failed = 0;
  for (const id of pending as string[]) {
    try {
      const outcome = await issueCertificateForPass(ctx, id);
      if (outcome.outcome === 'issued' || outcome.outcome === 'renewed') issued++;
    } catch (err) {
      failed++;
      ctx.logger?.warn({ err, passId: id }, 'certificate sweep: pass left for the next run');
    }
  }
  return { processed: pending.length, issued, failed };
}

// Reading -------------------------------------------------------------------------------------

export async function findCertificate(db: Knex | Knex.Transaction, number: string) {
  return db('certificates').where({ number }).first<CertificateRow | undefined>(certificateColumns());
}

/** The signed-in member's certificates, current ones first, then by issue date. */
export async function listMyCertificates(knex: Knex, appUrl: string, userId: string): Promise<MyCertificate[]> {
  const rows = await knex('certificates').where({ user_id: userId }).orderBy([{ column: 'issued_on', order: 'desc' }, { column: 'created_at', order: 'desc' }]).select<CertificateRow[]>(certificateColumns());
  const today = todayUtc();
  const rank: Record<CertificateStatus, number> = { valid: 0, expired: 1, superseded: 2, revoked: 3 };
  return rows
    .map((row) => ({
      number: row.number,
      area: row.area_name,
      areaId: row.area_id,
      status: effectiveStatus(row, today),
      issuedOn: row.issued_on,
      expiresOn: row.expires_on,
      ...(row.status === 'revoked' && row.revoked_reason ? { revokedReason: row.revoked_reason } : {}),
      shareUrl: verifyUrlFor(appUrl, row.number),
    }))
    .sort((a, b) => rank[a.status] - rank[b.status]);
}

/**
 * The stored PDF bytes, for the holder, their company's admins and managers, and platform operators.
 * Anyone else gets the same 404 as for a number that does not exist.
 */
export async function certificatePdfFor(knex: Knex, number: string, user: Express.User) {
  const row = await knex('certificates').where({ number }).first<Pick<CertificateRow, 'number' | 'user_id' | 'company_id' | 'pdf' | 'pdf_sha256'> | undefined>('number', 'user_id', 'company_id', 'pdf', 'pdf_sha256');
  if (!row) throw notFound('Certificate');
  const mayRead =
    row.user_id === user.id ||
    user.memberships.some((m) => m.roles.includes('operator')) ||
    (row.company_id !== null && user.memberships.some((m) => m.companyId === row.company_id && (m.roles.includes('admin') || m.roles.includes('manager'))));
  if (!mayRead) throw notFound('Certificate');
  return row;
}

// Operator ------------------------------------------------------------------------------------

const operatorView = (row: CertificateRow, today: string): OperatorCertificate => ({
  number: row.number,
  holderName: row.holder_name,
  area: row.area_name,
  companyName: row.company_name,
  status: effectiveStatus(row, today),
  issuedOn: row.issued_on,
  expiresOn: row.expires_on,
  revokedReason: row.revoked_reason,
  revokedAt: row.revoked_at ? row.revoked_at.toISOString() : null,
  supersededReason: row.superseded_reason,
});

/** Every certificate on the platform, searched by number or holder, paged on the server. */
export async function listCertificatesForOperator(
  knex: Knex,
  opts: { q?: string; status?: CertificateStatus; page: number; pageSize: number },
): Promise<{ certificates: OperatorCertificate[]; total: number; page: number; pageSize: number }> {
  const today = todayUtc();
  const query = knex('certificates as c');
  const q = opts.q?.trim();
  if (q) {
    const parsed = parseCertificateNumber(q);
    query.where((w) => {
      w.whereILike('c.holder_name', `%${q.replace(/[\\%_]/g, (s) => `\\${s}`)}%`).orWhereILike('c.number', `%${q.replace(/[^0-9A-Za-z-]/g, '')}%`);
      if (parsed.ok) w.orWhere('c.number', parsed.number);
    });
  }
  if (opts.status) query.whereRaw(`(${effectiveStatusSql(knex, 'c', today).toQuery()}) = ?`, [opts.status]);
  const [{ count }] = await query.clone().count<{ count: number }[]>('* as count');
  const rows = await query
    .orderBy([{ column: 'c.issued_on', order: 'desc' }, { column: 'c.created_at', order: 'desc' }])
    .limit(opts.pageSize)
    .offset((opts.page - 1) * opts.pageSize)
    .select<CertificateRow[]>(certificateColumns('c'));
  return { certificates: rows.map((r) => operatorView(r, today)), total: Number(count), page: opts.page, pageSize: opts.pageSize };
}

/** Revokes at once: the next verification of the number answers `revoked` with the reason. */
export async function revokeCertificate(knex: Knex, number: string, reason: string, actor: Actor): Promise<OperatorCertificate> {
  return knex.transaction(async (trx) => {
    const row = await trx('certificates').where({ number }).forUpdate().first<CertificateRow | undefined>(certificateColumns());
    if (!row) throw notFound('Certificate');
    if (row.status === 'revoked') throw conflict(`Certificate ${number} was already revoked on ${row.revoked_at!.toISOString().slice(0, 10)}.`);
    const [updated] = await trx('certificates')
      .where({ id: row.id })
      .update({ status: 'revoked', revoked_at: trx.fn.now(), revoked_reason: reason, revoked_by: actor.userId ?? null })
      .returning<CertificateRow[]>(certificateColumns());
    await recordAudit(trx, {
      actorUserId: actor.userId, companyId: row.company_id, action: 'certificate.revoked', targetType: 'certificate', targetId: row.id,
      details: { number, reason, previousStatus: effectiveStatus(row) }, ip: actor.ip,
    });
    return operatorView(updated, todayUtc());
  });
}

/**
 * A corrected copy after a name correction: a new number and PDF with the same area and dates; the
 * old certificate is superseded. The member's account name is corrected too unless told otherwise.
 */
export async function reissueCertificate(
  ctx: IssueContext,
  number: string,
  opts: { holderName: string; updateAccountName: boolean },
  actor: Actor,
): Promise<{ certificate: OperatorCertificate; replaces: string }> {
  let queued: number[] = [];
  const result = await ctx.knex.transaction(async (trx) => {
    const old = await trx('certificates').where({ number }).forUpdate().first<CertificateRow | undefined>(certificateColumns());
    if (!old) throw notFound('Certificate');
    const status = effectiveStatus(old);
    if (status !== 'valid') {
      throw conflict(`Certificate ${number} is ${status}; only a valid certificate can be re-issued. ${status === 'superseded' ? 'Re-issue the certificate that replaced it.' : ''}`.trim());
    }
    if (opts.holderName === old.holder_name) {
      throw badRequest('The corrected name is the same as the name on the certificate.', [
        { field: 'holderName', message: 'holderName: is the same as the name already on the certificate; type the corrected name' },
      ]);
    }
    const newNumber = await freshNumber(trx);
    const source: PdfSource = {
      number: newNumber,
      holderName: opts.holderName,
      areaName: old.area_name,
      methods: old.methods,
      issuedOn: old.issued_on,
      expiresOn: old.expires_on,
      companyId: old.company_id,
      companyName: old.company_name,
    };
    const { pdf, sha256 } = await renderFor(trx, ctx.config.appUrl, source);
    const [row] = await trx('certificates')
      .insert({
        number: newNumber,
        user_id: old.user_id,
        company_id: old.company_id,
        area_id: old.area_id,
        status: 'valid',
        issued_on: old.issued_on,
        expires_on: old.expires_on,
        holder_name: opts.holderName,
        area_name: old.area_name,
        methods: old.methods,
        company_name: old.company_name,
        exam_pass_id: old.exam_pass_id,
        pdf,
        pdf_sha256: sha256,
      })
      .returning<CertificateRow[]>(certificateColumns());
    await trx('certificates').where({ id: old.id }).update({ status: 'superseded', superseded_by: row.id, superseded_at: trx.fn.now(), superseded_reason: 'name-correction' });
    if (opts.updateAccountName && old.user_id) {
      await trx('users').where({ id: old.user_id }).update({ name: opts.holderName, updated_at: trx.fn.now() });
    }
    await recordAudit(trx, {
      actorUserId: actor.userId, companyId: old.company_id, action: 'certificate.reissued', targetType: 'certificate', targetId: row.id,
      details: { number: newNumber, replaces: number, previousName: old.holder_name, holderName: opts.holderName, accountNameUpdated: opts.updateAccountName && !!old.user_id },
      ip: actor.ip,
    });
    if (old.user_id) {
      const user = await trx('users').where({ id: old.user_id }).first<{ email: string } | undefined>('email');
      if (user) queued = await queueIssuedMail(ctx, trx, { to: user.email, name: opts.holderName, companyId: old.company_id, summary: summarise(row), kind: 'correction' });
    }
    return { certificate: operatorView(row, todayUtc()), replaces: number };
  });
  await deliverIssuedMail(ctx, queued);
  return result;
}
