import type { Role } from '../api/auth';

/** How each role is named on screen. */
export const ROLE_LABELS: Record<Role, string> = {
  admin: 'Company admin',
  manager: 'Manager',
  crew: 'Crew member',
  auditor: 'Auditor',
  operator: 'Operator',
};
