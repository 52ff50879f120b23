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

/**
 * A user, optionally a member of a company. `seat: true` gives the member a usable seat (drills and
 * exams need one in a customer company): the company gets a paid-up subscription row with room to
 * spare if it has none yet. Billing tests leave it out and arrange seats through the payment flow.
 */
export async function createUser(knex: Knex, opts: { companyId?: string; roles?: Role[]; email?: string; name?: string; password?: string; seat?: boolean } = {}) {
  const passwordHash = opts.password ? await hashPassword(opts.password) : await (cachedHash ??= hashPassword(TEST_PASSWORD));
  const email = opts.email ?? uniqueEmail(opts.roles?.[0] ?? 'user');
  const [user] = await knex('users').insert({ email, name: opts.name ?? 'Test Person', password_hash: passwordHash }).returning(['id', 'email', 'name']);
  if (opts.companyId) {
    if (opts.seat) {
      await knex('subscriptions')
        .insert({ company_id: opts.companyId, status: 'active', interval: 'year', quantity: 10_000, current_period_end: new Date(Date.now() + 365 * 86_400_000) })
        .onConflict('company_id')
        .ignore();
    }
    await knex('memberships').insert({
      user_id: user.id, company_id: opts.companyId, roles: opts.roles ?? ['crew'],
      ...(opts.seat ? { seat_status: 'assigned', seat_assigned_at: knex.fn.now() } : {}),
    });
  }
  return { ...(user as { id: string; email: string; name: string }), password: opts.password ?? TEST_PASSWORD };
}
