import { api } from '../../api/client';
import type {
  AuditorGrant,
  BatchAnswer,
  CertificateStatus,
  Evidence,
  FileCheckAnswer,
  GrantView,
  LookupEntry,
  MyCertificate,
  OperatorCertificate,
  VerificationAnswer,
} from '../../../shared/certificates';

export type {
  AuditorGrant, BatchAnswer, CertificateStatus, Evidence, FileCheckAnswer, GrantView, LookupEntry, MyCertificate, OperatorCertificate, VerificationAnswer,
};

const enc = encodeURIComponent;

function queryString(params: Record<string, string | number | undefined>) {
  const search = new URLSearchParams();
  for (const [key, value] of Object.entries(params)) if (value !== undefined && value !== '') search.set(key, String(value));
  const text = search.toString();
  return text ? `?${text}` : '';
}

function fileForm(file: File) {
  const form = new FormData();
  form.append('file', file, file.name);
  return form;
}

export interface Paged<T> {
  total: number;
  page: number;
  pageSize: number;
  items: T[];
}

/** Every certificate call the client makes, typed from shared/certificates.ts. */
export const certificatesApi = {
  verify: (number: string) => api.get<VerificationAnswer>(`/api/verify/${enc(number)}`),
  checkFile: (file: File) => api.upload<FileCheckAnswer>('/api/verify/file', fileForm(file)),
  mine: () => api.get<{ certificates: MyCertificate[] }>('/api/certificates/mine'),
  pdfUrl: (number: string) => `/api/certificates/${enc(number)}/pdf`,

  batch: (file: File) => api.upload<BatchAnswer>('/api/audit/batch', fileForm(file)),
  batchCsvUrl: (batchId: string) => `/api/audit/batches/${enc(batchId)}/csv`,
  lookups: async (q: { page: number; pageSize: number; kind?: LookupEntry['kind'] }): Promise<Paged<LookupEntry>> => {
    const res = await api.get<{ lookups: LookupEntry[]; total: number; page: number; pageSize: number }>(`/api/audit/lookups${queryString(q)}`);
    return { items: res.lookups, total: res.total, page: res.page, pageSize: res.pageSize };
  },
  auditorGrants: () => api.get<{ grants: AuditorGrant[] }>('/api/audit/grants'),
  evidence: (number: string) => api.get<{ evidence: Evidence }>(`/api/audit/certificates/${enc(number)}/evidence`),

  companyGrants: () => api.get<{ grants: GrantView[] }>('/api/company/auditor-grants'),
  grant: (email: string, scope: GrantView['scope']) => api.post<{ grant: GrantView }>('/api/company/auditor-grants', { email, scope }),
  withdraw: (grantId: string) => api.del(`/api/company/auditor-grants/${enc(grantId)}`),

  operatorList: async (q: { page: number; pageSize: number; q?: string; status?: CertificateStatus }): Promise<Paged<OperatorCertificate>> => {
    const res = await api.get<{ certificates: OperatorCertificate[]; total: number; page: number; pageSize: number }>(`/api/operator/certificates${queryString(q)}`);
    return { items: res.certificates, total: res.total, page: res.page, pageSize: res.pageSize };
  },
  revoke: (number: string, reason: string) => api.post<{ certificate: OperatorCertificate }>(`/api/operator/certificates/${enc(number)}/revoke`, { reason }),
  reissue: (number: string, holderName: string, updateAccountName: boolean) =>
    api.post<{ certificate: OperatorCertificate; replaces: string }>(`/api/operator/certificates/${enc(number)}/reissue`, { holderName, updateAccountName }),
};
