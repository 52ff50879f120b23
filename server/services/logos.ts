import type { Knex } from 'knex';
import { LOGO_MAX_BYTES } from '../../shared/billing';
import { HttpError } from '../middleware/errors';
import { recordAudit } from './audit';
import type { Actor } from './seats';

/**
 * The company logo printed on certificates: PNG or JPEG, at most 1 MB, recognised by its first
 * bytes (the file name and the browser's stated type are not trusted).
 */
export type LogoMime = 'image/png' | 'image/jpeg';

const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

export function detectImageType(bytes: Buffer): LogoMime | null {
  if (bytes.length >= PNG_SIGNATURE.length && bytes.subarray(0, PNG_SIGNATURE.length).equals(PNG_SIGNATURE)) return 'image/png';
  // JPEG: start-of-image marker followed by another marker.
  if (bytes.length >= 4 && bytes[0] === 0xff && bytes[1] === 0xd8 && bytes[2] === 0xff) return 'image/jpeg';
  return null;
}

export async function saveLogo(knex: Knex, companyId: string, bytes: Buffer, actor: Actor = {}) {
  if (bytes.length > LOGO_MAX_BYTES) {
    throw new HttpError(413, 'too_large', 'The logo is larger than 1 MB. Export it smaller (a 600 px wide PNG is plenty) and upload it again.', [
      { field: 'logo', message: 'logo: is larger than 1 MB' },
    ]);
  }
  const mime = detectImageType(bytes);
  if (!mime) {
    throw new HttpError(400, 'unsupported_image', 'The logo must be a PNG or JPEG image; this file is neither, whatever its name says.', [
      { field: 'logo', message: 'logo: is not a PNG or JPEG image' },
    ]);
  }
  await knex.transaction(async (trx) => {
    await trx('company_logos')
      .insert({ company_id: companyId, mime, bytes, size: bytes.length, updated_by: actor.userId ?? null, updated_at: trx.fn.now() })
      .onConflict('company_id')
      .merge();
    await recordAudit(trx, { actorUserId: actor.userId, companyId, action: 'logo.uploaded', targetType: 'company', targetId: companyId, details: { mime, size: bytes.length }, ip: actor.ip });
  });
  return logoMeta(knex, companyId);
}

export async function deleteLogo(knex: Knex, companyId: string, actor: Actor = {}) {
  await knex.transaction(async (trx) => {
    const removed = await trx('company_logos').where({ company_id: companyId }).del();
    if (removed) await recordAudit(trx, { actorUserId: actor.userId, companyId, action: 'logo.removed', targetType: 'company', targetId: companyId, ip: actor.ip });
  });
}

export async function logoMeta(db: Knex | Knex.Transaction, companyId: string) {
  const row = await db('company_logos').where({ company_id: companyId }).first('mime', 'size', 'updated_at');
  return row ? { mime: row.mime as LogoMime, size: row.size as number, updatedAt: (row.updated_at as Date).toISOString() } : null;
}

/** The logo's bytes for certificates and the logo route; null when the company has none. */
export async function getCompanyLogo(db: Knex | Knex.Transaction, companyId: string): Promise<{ mime: LogoMime; bytes: Buffer; updatedAt: Date } | null> {
  const row = await db('company_logos').where({ company_id: companyId }).first('mime', 'bytes', 'updated_at');
  return row ? { mime: row.mime, bytes: row.bytes, updatedAt: row.updated_at } : null;
}
