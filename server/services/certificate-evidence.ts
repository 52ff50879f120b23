import type { Knex } from 'knex';
import { badRequest, conflict, notFound } from '../middleware/errors';
import { recordAudit } from './audit';
import { effectiveStatus, todayUtc, type Actor, type CertificateRow } from './certificates';
import type { Evidence, GRANT_SCOPES, GrantView } from '../../shared/certificates';

/**
 * Evidence grants: a company admin lets one auditor, or every auditor of that auditor's firm, see the
 * exam evidence behind the company's certificates (exam date, score, duration). Without an active
 * grant the evidence answers 404, the same as for a number that does not exist.
 */
export type GrantScope = (typeof GRANT_SCOPES)[number];

const grantQuery = (db: Knex | Knex.Transaction) =>
  db('evidence_grants as g')
    .leftJoin('users as au', 'au.id', 'g.grantee_user_id')
    .leftJoin('companies as firm', 'firm.id', 'g.grantee_company_id')
    .leftJoin('users as by', 'by.id', 'g.granted_by')
    .select('g.id', 'g.grantee_user_id', 'g.grantee_company_id', 'g.granted_at', 'au.name as auditor_name', 'au.email as auditor_email', 'firm.name as firm_name', 'by.name as granted_by_name');

type GrantRow = { id: string; grantee_user_id: string | null; grantee_company_id: string | null; granted_at: Date; auditor_name: string | null; auditor_email: string | null; firm_name: string | null; granted_by_name: string | null };

const grantView = (r: GrantRow): GrantView => ({
  id: r.id,
  scope: r.grantee_user_id ? 'auditor' : 'firm',
  auditorName: r.auditor_name,
  auditorEmail: r.auditor_email,
  firmName: r.firm_name,
  grantedAt: r.granted_at.toISOString(),
  grantedBy: r.granted_by_name,
});

/** The company's active grants, newest first. */
export async function listGrants(db: Knex | Knex.Transaction, companyId: string): Promise<GrantView[]> {
  const rows = await grantQuery(db).where('g.company_id', companyId).whereNull('g.withdrawn_at').orderBy('g.granted_at', 'desc');
  return (rows as GrantRow[]).map(grantView);
}

/** Grants access to the auditor with this e-mail address, or to their whole firm. */
export async function grantAccess(knex: Knex, companyId: string, body: { email: string; scope: GrantScope }, actor: Actor): Promise<GrantView> {
  return knex.transaction(async (trx) => {
    const auditor = await trx('users as u')
      .join('memberships as m', 'm.user_id', 'u.id')
      .join('companies as c', 'c.id', 'm.company_id')
      .where('u.email', body.email)
      .whereNull('u.disabled_at')
      .whereRaw("'auditor' = any(m.roles)")
      .orderBy('c.name')
      .first<{ id: string; name: string; company_id: string; company_name: string } | undefined>('u.id', 'u.name', 'm.company_id', 'c.name as company_name');
    if (!auditor) {
      throw badRequest('No auditor account uses that e-mail address.', [
        { field: 'email', message: 'email: no auditor account signs in with this address; ask the auditor for the e-mail they use on Plumewright' },
      ]);
    }
    if (auditor.company_id === companyId) {
      throw badRequest('That auditor belongs to your own company.', [{ field: 'email', message: 'email: belongs to an auditor of your own company, who needs no grant' }]);
    }
    const grantee = body.scope === 'auditor' ? { grantee_user_id: auditor.id } : { grantee_company_id: auditor.company_id };
    const existing = await trx('evidence_grants').where({ company_id: companyId, ...grantee }).whereNull('withdrawn_at').first('id');
    if (existing) {
      throw conflict(body.scope === 'auditor' ? `${auditor.name} already has access.` : `Every auditor at ${auditor.company_name} already has access.`);
    }
    const [row] = await trx('evidence_grants').insert({ company_id: companyId, ...grantee, granted_by: actor.userId ?? null }).returning('id');
    await recordAudit(trx, {
      actorUserId: actor.userId, companyId, action: 'evidence.granted', targetType: body.scope === 'auditor' ? 'user' : 'company',
      targetId: body.scope === 'auditor' ? auditor.id : auditor.company_id, details: { scope: body.scope, auditor: auditor.name, firm: auditor.company_name }, ip: actor.ip,
    });
    const view = await grantQuery(trx).where('g.id', row.id).first();
    return grantView(view as GrantRow);
  });
}

/** Withdraws a grant at once; the row stays, stamped, as the record of who had access when. */
export async function withdrawGrant(knex: Knex, companyId: string, grantId: string, actor: Actor): Promise<void> {
  await knex.transaction(async (trx) => {
    const grant = await trx('evidence_grants').where({ id: grantId, company_id: companyId }).whereNull('withdrawn_at').forUpdate().first('id', 'grantee_user_id', 'grantee_company_id');
    if (!grant) throw notFound('Grant');
    await trx('evidence_grants').where({ id: grantId }).update({ withdrawn_at: trx.fn.now(), withdrawn_by: actor.userId ?? null });
    await recordAudit(trx, {
      actorUserId: actor.userId, companyId, action: 'evidence.withdrawn', targetType: grant.grantee_user_id ? 'user' : 'company',
      targetId: grant.grantee_user_id ?? grant.grantee_company_id, details: { grantId }, ip: actor.ip,
    });
  });
}

/** Companies whose evidence this auditor may see, personally or through their firm. */
export async function grantsForAuditor(knex: Knex, auditor: { userId: string; companyId: string }) {
  const rows = await knex('evidence_grants as g')
    .join('companies as c', 'c.id', 'g.company_id')
    .whereNull('g.withdrawn_at')
    .where((w) => w.where('g.grantee_user_id', auditor.userId).orWhere('g.grantee_company_id', auditor.companyId))
    .orderBy('c.name')
    .select('c.name as company_name', 'g.grantee_user_id', 'g.granted_at');
  return rows.map((r) => ({ companyName: r.company_name as string, scope: (r.grantee_user_id ? 'auditor' : 'firm') as GrantScope, grantedAt: (r.granted_at as Date).toISOString() }));
}

/** The exam behind a certificate, for an auditor the holder's company has granted; otherwise 404. */
export async function evidenceFor(knex: Knex, number: string, auditor: { userId: string; companyId: string; ip?: string }): Promise<Evidence> {
  const cert = await knex('certificates as c')
    .leftJoin('companies as co', 'co.id', 'c.company_id')
    .where('c.number', number)
    .first<(Pick<CertificateRow, 'id' | 'number' | 'company_id' | 'holder_name' | 'area_name' | 'status' | 'issued_on' | 'expires_on' | 'exam_pass_id'> & { current_company_name: string | null }) | undefined>(
      'c.id', 'c.number', 'c.company_id', 'c.holder_name', 'c.area_name', 'c.status', 'c.issued_on', 'c.expires_on', 'c.exam_pass_id', 'co.name as current_company_name',
    );
  if (!cert || !cert.company_id) throw notFound('Certificate evidence');
  const grant = await knex('evidence_grants')
    .where({ company_id: cert.company_id })
    .whereNull('withdrawn_at')
    .where((w) => w.where('grantee_user_id', auditor.userId).orWhere('grantee_company_id', auditor.companyId))
    .first('id');
  if (!grant) throw notFound('Certificate evidence');
  const pass = cert.exam_pass_id
    ? await knex('exam_passes').where({ id: cert.exam_pass_id }).first<{ passed_at: Date; score_pct: string; duration_seconds: number | null } | undefined>('passed_at', 'score_pct', 'duration_seconds')
    : undefined;
  // The company sees in its own audit log which auditor looked at whose evidence.
  await recordAudit(knex, { actorUserId: auditor.userId, companyId: cert.company_id, action: 'evidence.viewed', targetType: 'certificate', targetId: cert.id, details: { number }, ip: auditor.ip });
  return {
    number: cert.number,
    holderName: cert.holder_name,
    area: cert.area_name,
    status: effectiveStatus(cert, todayUtc()),
    issuedOn: cert.issued_on,
    expiresOn: cert.expires_on,
    companyName: cert.current_company_name,
    exam: pass ? { passedAt: pass.passed_at.toISOString(), scorePct: Number(pass.score_pct), durationSeconds: pass.duration_seconds } : null,
  };
}
