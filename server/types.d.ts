import type { Role } from '../shared/roles';

declare global {
  namespace Express {
    interface User {
      id: string;
      email: string;
      name: string;
      memberships: { companyId: string; companyName: string; companyKind: 'customer' | 'platform' | 'auditing'; roles: Role[]; seat: boolean }[];
    }
    interface Request {
      /** The membership a role-restricted route runs under (the active company, or the company in the path). */
      membership?: { companyId: string; roles: Role[]; companyKind: 'customer' | 'platform' | 'auditing'; seat: boolean };
      /** Parsed and validated request parts, set by the validation middleware. */
      // eslint-disable-next-line @typescript-eslint/no-explicit-any -- each route's own zod schema decides these shapes
      valid: { body: any; query: any; params: any };
    }
  }
}

declare module 'express-session' {
  interface SessionData {
    activeCompanyId?: string;
    csrfReady?: boolean;
  }
}

export {};
