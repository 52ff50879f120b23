import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import crypto from 'node:crypto';
import { createTestApp, type TestApp } from '../helpers/app';
import { TestAgent, signedIn } from '../helpers/agent';
import { createCompany, createUser } from '../helpers/factory';
import { roles, type Role } from '../../shared/roles';
import type { RouteDef } from '../../server/routes/types';

/**
 * The route × role matrix, generated from the router table: every non-public route answers 401 to
 * anonymous callers, 403 to a signed-in user without one of its roles, and 404 to a member of another
 * company naming this company's id in the path.
 */
let t: TestApp;
let companyA: string;
let companyB: string;
const agentsA = new Map<Role, TestAgent>();
const agentsB = new Map<Role, TestAgent>();

const kindFor = (role: Role) => (role === 'operator' ? 'platform' : role === 'auditor' ? 'auditing' : 'customer');

beforeAll(async () => {
  t = await createTestApp();
  const companies = new Map<string, string>();
  for (const side of ['A', 'B'] as const) {
    for (const role of roles) {
      const key = `${side}-${kindFor(role)}`;
      if (!companies.has(key)) companies.set(key, (await createCompany(t.knex, `Matrix ${key}`, kindFor(role))).id);
      const user = await createUser(t.knex, { companyId: companies.get(key)!, roles: [role], seat: true });
      (side === 'A' ? agentsA : agentsB).set(role, await signedIn(t.app, user.email, user.password));
    }
  }
  companyA = companies.get('A-customer')!;
  companyB = companies.get('B-customer')!;
  expect(companyB).not.toBe(companyA);
});
afterAll(() => t.close());

function concretePath(route: RouteDef, companyId: string) {
  return route.path.replace(':companyId', companyId).replace(/:[A-Za-z]+/g, () => crypto.randomUUID());
}

async function call(agent: TestAgent, route: RouteDef, path: string) {
  return route.method === 'get' ? agent.get(path) : agent.send(route.method, path, {});
}

describe('route × role matrix', () => {
  it('covers a table with protected routes', () => {
    expect(t.routes.filter((r) => r.access !== 'public').length).toBeGreaterThan(3);
  });

  it('answers 401 to anonymous callers on every non-public route', async () => {
    const anonymous = new TestAgent(t.app);
    for (const route of t.routes.filter((r) => r.access !== 'public')) {
      const res = await call(anonymous, route, concretePath(route, companyA));
      expect(res.status, `${route.method.toUpperCase()} ${route.path}`).toBe(401);
      expect(res.body.error.code).toBe('unauthorized');
    }
  }, 120_000);

  it('answers 403 to every role a route does not allow, and lets its own roles through', async () => {
    const activeCompany = new Map<Role, string>();
    for (const role of roles) activeCompany.set(role, (await agentsA.get(role)!.get('/api/auth/me')).body.activeCompanyId);
    for (const route of t.routes.filter((r) => Array.isArray(r.access))) {
      const allowed = route.access as readonly Role[];
      for (const role of roles) {
        const agent = agentsA.get(role)!;
        const res = await call(agent, route, concretePath(route, activeCompany.get(role)!));
        const label = `${role} → ${route.method.toUpperCase()} ${route.path}`;
        if (allowed.includes(role)) expect([401, 403], label).not.toContain(res.status);
        else expect(res.status, label).toBe(403);
      }
    }
  }, 180_000);

  it("answers 404 when a member of another company names this company's id", async () => {
    const scoped = t.routes.filter((r) => Array.isArray(r.access) && r.path.includes(':companyId'));
    expect(scoped.length).toBeGreaterThan(0);
    for (const route of scoped) {
      const role = (route.access as readonly Role[])[0];
      const res = await call(agentsB.get(role)!, route, concretePath(route, companyA));
      expect(res.status, `${role} of B → ${route.path} of A`).toBe(404);
      const own = await call(agentsB.get(role)!, route, concretePath(route, companyB));
      expect(own.status, `${role} of B → ${route.path} of B`).toBe(200);
    }
  });
});
