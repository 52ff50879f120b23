import type { Knex } from 'knex';
import type { Role } from '../../shared/roles';
import { hashPassword } from '../services/passwords';

/**
 * The demo scenario: an invented testing company, its crew, an invented assessor's firm and our own
 * operations team. Every name here is made up. Seeded by the start command only, never into tests.
 */
export const DEMO_PASSWORD = 'plumewright-demo';
export const DEMO_DOMAIN = 'demo.plumewright.example';

export const DEMO_COMPANY_ID = '4f1c6a2e-7d0b-4c55-9a51-2b6f0d6c1a01';
const AUDIT_FIRM_ID = '4f1c6a2e-7d0b-4c55-9a51-2b6f0d6c1a02';
const PLATFORM_ID = '4f1c6a2e-7d0b-4c55-9a51-2b6f0d6c1a03';

export const demoSignIns: { email: string; roles: Role[]; note: string }[] = [
  { email: `admin@${DEMO_DOMAIN}`, roles: ['admin', 'manager'], note: 'company admin (also a manager)' },
  { email: `manager@${DEMO_DOMAIN}`, roles: ['manager', 'crew'], note: 'crew manager (also on the crew)' },
  { email: `crew@${DEMO_DOMAIN}`, roles: ['crew'], note: 'crew member' },
  { email: `auditor@${DEMO_DOMAIN}`, roles: ['auditor'], note: 'auditor at an assessment firm' },
  { email: `operator@${DEMO_DOMAIN}`, roles: ['operator'], note: 'platform operator' },
];

const crew: [string, string][] = [
  ['Tamsin Okonkwo-Reyes', 'West crew'],
  ['Ilya Brandvold', 'West crew'],
  ['Marisol Quennell', 'West crew'],
  ['Dashiell Morrow-Avani', 'West crew'],
  ['Priya Halvorsen', 'East crew'],
  ['Emeka Strand', 'East crew'],
  ['Wren Castellanos', 'East crew'],
  ['Bastien Olufemi', 'East crew'],
  ['Saoirse Lindqvist', 'Stack team 3'],
  ['Callum Achterberg', 'Stack team 3'],
  ['Noor Delacroix-Baines', 'Stack team 3'],
];

export async function seedDemo(knex: Knex): Promise<'seeded' | 'already-seeded'> {
  const exists = await knex('companies').where({ id: DEMO_COMPANY_ID }).first('id');
  if (exists) return 'already-seeded';
  const passwordHash = await hashPassword(DEMO_PASSWORD);
  await knex.transaction(async (trx) => {
    await trx('companies').insert([
      { id: DEMO_COMPANY_ID, name: 'Bramblewick Source Testing', kind: 'customer' },
      { id: AUDIT_FIRM_ID, name: 'Quillmere Assessment Partners', kind: 'auditing' },
      { id: PLATFORM_ID, name: 'Plumewright Operations', kind: 'platform' },
    ]);
    const people: { email: string; name: string; companyId: string; roles: Role[]; crew?: string }[] = [
      { email: `admin@${DEMO_DOMAIN}`, name: 'Rosalind Achebe-Farrow', companyId: DEMO_COMPANY_ID, roles: ['admin', 'manager'] },
      { email: `manager@${DEMO_DOMAIN}`, name: 'Torvald Mensah', companyId: DEMO_COMPANY_ID, roles: ['manager', 'crew'], crew: 'West crew' },
      { email: `crew@${DEMO_DOMAIN}`, name: 'Juniper Vasquez-Holm', companyId: DEMO_COMPANY_ID, roles: ['crew'], crew: 'West crew' },
      { email: `auditor@${DEMO_DOMAIN}`, name: 'Ottoline Prasad', companyId: AUDIT_FIRM_ID, roles: ['auditor'] },
      { email: `operator@${DEMO_DOMAIN}`, name: 'Feargal Nakamura', companyId: PLATFORM_ID, roles: ['operator'] },
      ...crew.map(([name, crewName], i) => ({
        email: `${name.toLowerCase().split(' ')[0]}.${i + 1}@${DEMO_DOMAIN}`,
        name,
        companyId: DEMO_COMPANY_ID,
        roles: ['crew'] as Role[],
        crew: crewName,
      })),
    ];
    for (const person of people) {
      const [user] = await trx('users').insert({ email: person.email, name: person.name, password_hash: passwordHash }).returning('id');
      await trx('memberships').insert({ user_id: user.id, company_id: person.companyId, roles: person.roles, crew: person.crew ?? null });
    }
  });
  return 'seeded';
}
