export const roles = ['admin', 'manager', 'crew', 'auditor', 'operator'] as const;
export type Role = (typeof roles)[number];

export const roleLabels: Record<Role, string> = {
  admin: 'Company admin',
  manager: 'Manager',
  crew: 'Crew member',
  auditor: 'Auditor',
  operator: 'Platform operator',
};

export interface MembershipView {
  companyId: string;
  companyName: string;
  companyKind: 'customer' | 'platform' | 'auditing';
  roles: Role[];
  /** Holds a usable seat: assigned, and the company's subscription in good standing (customer companies only). */
  seat: boolean;
}

export interface MeResponse {
  user: { id: string; email: string; name: string };
  memberships: MembershipView[];
  activeCompanyId: string | null;
}
