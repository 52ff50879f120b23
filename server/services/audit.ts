import type { Knex } from 'knex';

export interface AuditRecord {
  actorUserId?: string | null;
  companyId?: string | null;
  action: string;
  targetType?: string;
  targetId?: string;
  details?: Record<string, unknown>;
  ip?: string;
}

/** Appends to the audit log; pass the transaction when the audited change runs in one. */
export async function recordAudit(db: Knex | Knex.Transaction, entry: AuditRecord) {
  await db('audit_log').insert({
    actor_user_id: entry.actorUserId ?? null,
    company_id: entry.companyId ?? null,
    action: entry.action,
    target_type: entry.targetType ?? null,
    target_id: entry.targetId ?? null,
    details: JSON.stringify(entry.details ?? {}),
    ip: entry.ip ?? null,
  });
}
