/**
 * Schemas and answer shapes for certificates, verification and the auditor's tools: the server
 * validates with these and the client reads its answers from the same definitions.
 */
import { z } from 'zod';
import { emailField } from './auth';

export const CERTIFICATE_STATUSES = ['valid', 'expired', 'revoked', 'superseded'] as const;
export type CertificateStatus = (typeof CERTIFICATE_STATUSES)[number];
export type VerificationStatus = CertificateStatus | 'not-found';

/** Upload limits, checked on the server; the client says them before anyone uploads. */
export const CERTIFICATE_PDF_MAX_BYTES = 5 * 1024 * 1024;
export const BATCH_CSV_MAX_BYTES = 1024 * 1024;
export const BATCH_MAX_ROWS = 5_000;

/** The caution the public page and the PDF both carry, word for word. */
export const VERIFY_CAUTION =
  'This page confirms a training record on Plumewright; it does not replace the method text, agency requirements, accreditation or licensed professional judgement.';

const page = z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be at least 1').default(1);
const pageSize = (max: number, fallback: number) =>
  z.coerce.number({ error: 'must be a number' }).int('must be a whole number').min(1, 'must be at least 1').max(max, `must be at most ${max}`).default(fallback);

/** What a person typed: checked for shape by the number parser, so only its length is limited here. */
export const numberParams = z.object({
  number: z.string({ error: 'is required' }).max(64, 'is far too long for a certificate number (they look like PW-7K3M-Q9TD-R4E)'),
});

export const lookupsQuery = z.object({
  page,
  pageSize: pageSize(200, 25),
  kind: z.enum(['single', 'batch', 'file'], { error: 'must be single, batch or file' }).optional(),
});

export const operatorCertificatesQuery = z.object({
  q: z.string({ error: 'must be text' }).trim().max(120, 'must be at most 120 characters').optional(),
  status: z.enum(CERTIFICATE_STATUSES, { error: `must be one of ${CERTIFICATE_STATUSES.join(', ')}` }).optional(),
  page,
  pageSize: pageSize(100, 25),
});

export const revokeBody = z.object({
  reason: z
    .string({ error: 'is required: say why the certificate is revoked (the public check shows it)' })
    .trim()
    .min(5, 'must say why in at least 5 characters (the public check shows it)')
    .max(300, 'must be at most 300 characters'),
});

export const reissueBody = z.object({
  holderName: z.string({ error: 'is required: type the corrected name' }).trim().min(2, 'must be at least 2 characters').max(120, 'must be at most 120 characters'),
  updateAccountName: z.boolean({ error: 'must be true or false' }).default(true),
});

export const GRANT_SCOPES = ['auditor', 'firm'] as const;
export const grantBody = z.object({
  email: emailField,
  scope: z.enum(GRANT_SCOPES, { error: 'must be "auditor" (this person only) or "firm" (every auditor at their firm)' }).default('auditor'),
});

export const batchParams = z.object({ batchId: z.uuid({ error: 'must be a batch id' }) });
export const grantParams = z.object({ grantId: z.uuid({ error: 'must be a grant id' }) });

// Answers ----------------------------------------------------------------------------------

export interface VerificationAnswer {
  number: string;
  status: VerificationStatus;
  holderName: string | null;
  area: string | null;
  issuedOn: string | null;
  expiresOn: string | null;
  revokedReason?: string;
  revokedOn?: string;
}

export interface FileCheckAnswer {
  authentic: boolean;
  sha256: string;
  number?: string;
  certificate?: VerificationAnswer;
}

export interface MyCertificate {
  number: string;
  area: string;
  areaId: string;
  status: CertificateStatus;
  issuedOn: string;
  expiresOn: string;
  revokedReason?: string;
  shareUrl: string;
}

export interface BatchRow {
  row: number;
  input: string;
  number?: string;
  status?: VerificationStatus;
  holderName?: string | null;
  area?: string | null;
  issuedOn?: string | null;
  expiresOn?: string | null;
  revokedReason?: string;
  error?: string;
}

export interface BatchSummary {
  rows: number;
  checked: number;
  invalid: number;
  valid: number;
  expired: number;
  revoked: number;
  superseded: number;
  notFound: number;
}

export interface BatchAnswer {
  batchId: string;
  fileName: string | null;
  createdAt: string;
  summary: BatchSummary;
  rows: BatchRow[];
}

export interface LookupEntry {
  at: string;
  kind: 'single' | 'batch' | 'file';
  input: string;
  result: VerificationStatus | 'malformed' | 'authentic' | 'not-authentic';
  number: string | null;
  batchId: string | null;
}

export interface Evidence {
  number: string;
  holderName: string;
  area: string;
  status: CertificateStatus;
  issuedOn: string;
  expiresOn: string;
  companyName: string | null;
  exam: { passedAt: string; scorePct: number; durationSeconds: number | null } | null;
}

export interface GrantView {
  id: string;
  scope: (typeof GRANT_SCOPES)[number];
  auditorName: string | null;
  auditorEmail: string | null;
  firmName: string | null;
  grantedAt: string;
  grantedBy: string | null;
}

export interface AuditorGrant {
  companyName: string;
  scope: (typeof GRANT_SCOPES)[number];
  grantedAt: string;
}

export interface OperatorCertificate {
  number: string;
  holderName: string;
  area: string;
  companyName: string | null;
  status: CertificateStatus;
  issuedOn: string;
  expiresOn: string;
  revokedReason: string | null;
  revokedAt: string | null;
  supersededReason: string | null;
}
