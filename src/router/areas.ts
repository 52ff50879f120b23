import type { Role } from '../api/auth';

export interface AreaLink {
  /** Route name, also used as the nav item's key. */
  name: string;
  path: string;
  label: string;
  icon: string;
  /** Empty means every signed-in user. */
  roles: Role[];
}

/** One table drives both the router's role meta and the header navigation, so they cannot drift apart. */
export const AREAS: AreaLink[] = [
  { name: 'dashboard', path: '/', label: 'Dashboard', icon: 'pi pi-home', roles: [] },
  { name: 'learn', path: '/learn', label: 'Learn', icon: 'pi pi-book', roles: ['crew'] },
  { name: 'drills', path: '/drills', label: 'Drills', icon: 'pi pi-pencil', roles: ['crew'] },
  { name: 'exams', path: '/exams', label: 'Exams', icon: 'pi pi-stopwatch', roles: ['crew'] },
  { name: 'certificates', path: '/certificates', label: 'Certificates', icon: 'pi pi-id-card', roles: ['crew'] },
  {
    name: 'calculators',
    path: '/calculators',
    label: 'Calculators',
    icon: 'pi pi-calculator',
    roles: ['crew', 'manager', 'admin', 'operator'],
  },
  { name: 'crew', path: '/crew', label: 'Crew', icon: 'pi pi-users', roles: ['manager', 'admin'] },
  { name: 'company', path: '/company', label: 'Company', icon: 'pi pi-building', roles: ['admin'] },
  { name: 'company-auditors', path: '/company/auditors', label: 'Auditor access', icon: 'pi pi-key', roles: ['admin'] },
  { name: 'company-billing', path: '/company/billing', label: 'Billing', icon: 'pi pi-credit-card', roles: ['admin'] },
  { name: 'audit', path: '/audit', label: 'Audit', icon: 'pi pi-verified', roles: ['auditor'] },
  { name: 'operate', path: '/operate', label: 'Operate', icon: 'pi pi-cog', roles: ['operator'] },
  { name: 'operate-drills', path: '/operate/drills', label: 'Drill preview', icon: 'pi pi-eye', roles: ['operator'] },
  { name: 'operate-certificates', path: '/operate/certificates', label: 'Certificates', icon: 'pi pi-id-card', roles: ['operator'] },
];

export function areaRoles(name: string): Role[] {
  return AREAS.find((area) => area.name === name)?.roles ?? [];
}

export function canUse(roles: readonly Role[], held: readonly Role[]): boolean {
  return roles.length === 0 || roles.some((role) => held.includes(role));
}
