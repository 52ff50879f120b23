import crypto from 'node:crypto';
import type { Knex } from 'knex';
import type { Role } from '../../shared/roles';
import { hashPassword } from '../../server/services/passwords';

export const TEST_PASSWORD = 'correct horse battery';
let cachedHash: Promise<string> | undefined;

export const uniqueEmail = (label = 'user') => `${label}-${crypto.randomBytes(5).toString('hex')}@tests.plumewright.example`;

export async function createCompany(knex: Knex, name = `Test Company ${crypto.randomBytes(3).toString('hex')}`, kind: 'customer' | 'platform' | 'auditing' = 'customer') {
  const [row] = await knex('companies').insert({ name, kind }).returning(['id', 'name']);
  return row as { id: string; name: string };
}

export async function createUser(knex: Knex, opts: { companyId?: string; roles?: Role[]; email?: string; name?: string; password?: string } = {}) {
  const passwordHash = opts.password ? await hashPassword(opts.password) : await (cachedHash ??= hashPassword(TEST_PASSWORD));
  const email = opts.email ?? uniqueEmail(opts.roles?.[0] ?? 'user');
  const [user] = await knex('users').insert({ email, name: opts.name ?? 'Test Person', password_hash: passwordHash }).returning(['id', 'email', 'name']);
  if (opts.companyId) await knex('memberships').insert({ user_id: user.id, company_id: opts.companyId, roles: opts.roles ?? ['crew'] });
  return { ...(user as { id: string; email: string; name: string }), password: opts.password ?? TEST_PASSWORD };
}
