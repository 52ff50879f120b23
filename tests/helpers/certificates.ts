import crypto from 'node:crypto';
import type { Knex } from 'knex';

/**
 * A certificate row written straight into the table, for readiness tests that need exact dates.
 * The PDF is a few placeholder bytes with a unique hash: nothing here reads it.
 */
export async function insertCertificate(
  knex: Knex,
  opts: {
    userId: string;
    companyId?: string | null;
    area: string;
    issuedOn: string;
    expiresOn: string;
    status?: 'valid' | 'revoked' | 'superseded';
    createdAt?: Date;
  },
) {
  const token = crypto.randomBytes(8).toString('hex');
  const pdf = Buffer.from(`placeholder certificate ${token}`);
  const status = opts.status ?? 'valid';
  const [row] = await knex('certificates')
    .insert({
      number: `PW-T${token.slice(0, 4)}-${token.slice(4, 8)}-${token.slice(8, 11)}`.toUpperCase(),
      user_id: opts.userId,
      company_id: opts.companyId ?? null,
      area_id: opts.area,
      status,
      issued_on: opts.issuedOn,
      expires_on: opts.expiresOn,
      holder_name: 'Test Holder',
      area_name: opts.area,
      pdf,
      pdf_sha256: crypto.createHash('sha256').update(pdf).digest('hex'),
      revoked_at: status === 'revoked' ? new Date() : null,
      revoked_reason: status === 'revoked' ? 'test revocation' : null,
      superseded_at: status === 'superseded' ? new Date() : null,
      superseded_reason: status === 'superseded' ? 'renewal' : null,
      ...(opts.createdAt ? { created_at: opts.createdAt } : {}),
    })
    .returning(['id', 'number']);
  return row as { id: string; number: string };
}

/** A crew member of a company, with a crew name. */
export async function setCrew(knex: Knex, userId: string, companyId: string, crew: string | null) {
  await knex('memberships').where({ user_id: userId, company_id: companyId }).update({ crew });
}
