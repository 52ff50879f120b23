import type { Knex } from 'knex';
import { grantAccess } from '../services/certificate-evidence';
import { addDays, addMonths, issueCertificateForPass, revokeCertificate, todayUtc } from '../services/certificates';
import { DEMO_COMPANY_ID, DEMO_DOMAIN } from './demo-data';

/**
 * The demo company's certificate history, dated relative to the day it is seeded: current, expiring
 * within 90 days, expired, renewed (superseded) and revoked certificates, each issued through the
 * real issuer from an exam pass with an invented score, with its PDF rendered and stored. The
 * company also lets the demo auditor's firm see the exam evidence. Every name is invented.
 */
type When =
  | { kind: 'ago-months'; months: number }
  /** Passed so that the certificate's last day is this many days from today (negative: already past). */
  | { kind: 'expires-in'; days: number };

interface DemoPass {
  email: string;
  area: string;
  when: When;
  score: number;
  minutes: number;
  revoke?: string;
}

const crewEmail = (first: string, n: number) => `${first}.${n}@${DEMO_DOMAIN}`;

const HISTORY: DemoPass[] = [
  // Juniper Vasquez-Holm, the demo crew member: current, expiring soon, and a renewal.
  { email: `crew@${DEMO_DOMAIN}`, area: 'flow-moisture', when: { kind: 'ago-months', months: 14 }, score: 92, minutes: 48 },
  { email: `crew@${DEMO_DOMAIN}`, area: 'particulate', when: { kind: 'expires-in', days: 45 }, score: 84, minutes: 71 },
  { email: `crew@${DEMO_DOMAIN}`, area: 'emission-rates', when: { kind: 'expires-in', days: 30 }, score: 79, minutes: 52 },
  { email: `crew@${DEMO_DOMAIN}`, area: 'emission-rates', when: { kind: 'ago-months', months: 1 }, score: 88, minutes: 44 },
  // Torvald Mensah, manager on the crew: one current, one expired.
  { email: `manager@${DEMO_DOMAIN}`, area: 'gas-analysis', when: { kind: 'ago-months', months: 8 }, score: 95, minutes: 39 },
  { email: `manager@${DEMO_DOMAIN}`, area: 'flow-moisture', when: { kind: 'expires-in', days: -92 }, score: 81, minutes: 57 },
  // The rest of the crew.
  { email: crewEmail('tamsin', 1), area: 'flow-moisture', when: { kind: 'ago-months', months: 6 }, score: 90, minutes: 41, revoke: 'Exam sat under a shared sign-in; the member must retake it under their own account.' },
  { email: crewEmail('tamsin', 1), area: 'particulate', when: { kind: 'ago-months', months: 5 }, score: 86, minutes: 66 },
  { email: crewEmail('ilya', 2), area: 'monitor-audits', when: { kind: 'expires-in', days: 20 }, score: 77, minutes: 58 },
  { email: crewEmail('ilya', 2), area: 'flow-moisture', when: { kind: 'ago-months', months: 11 }, score: 89, minutes: 46 },
  { email: crewEmail('marisol', 3), area: 'particulate', when: { kind: 'ago-months', months: 2 }, score: 93, minutes: 62 },
  { email: crewEmail('marisol', 3), area: 'gas-analysis', when: { kind: 'expires-in', days: -210 }, score: 80, minutes: 50 },
  { email: crewEmail('priya', 5), area: 'ambient-conversions', when: { kind: 'expires-in', days: -150 }, score: 83, minutes: 35 },
  { email: crewEmail('priya', 5), area: 'emission-rates', when: { kind: 'ago-months', months: 16 }, score: 91, minutes: 47 },
  { email: crewEmail('emeka', 6), area: 'gas-analysis', when: { kind: 'ago-months', months: 3 }, score: 87, minutes: 43 },
  { email: crewEmail('emeka', 6), area: 'monitor-audits', when: { kind: 'expires-in', days: 70 }, score: 75, minutes: 61 },
  { email: crewEmail('wren', 7), area: 'flow-moisture', when: { kind: 'ago-months', months: 20 }, score: 94, minutes: 38 },
];

function passDate(when: When, validityMonths: number, today: string) {
  if (when.kind === 'ago-months') return addMonths(today, -when.months);
  return addMonths(addDays(today, when.days), -validityMonths);
}

export async function seedDemoCertificates(knex: Knex, appUrl: string): Promise<'seeded' | 'already-seeded' | 'skipped'> {
  const areas = new Map((await knex('areas').select('id', 'validity_months')).map((a) => [a.id as string, a.validity_months as number]));
  if (!areas.size) return 'skipped';
  if (!(await knex('companies').where({ id: DEMO_COMPANY_ID }).first('id'))) return 'skipped';
  if (await knex('certificates').where({ company_id: DEMO_COMPANY_ID }).first('id')) return 'already-seeded';

  const users = new Map((await knex('users').where('email', 'like', `%@${DEMO_DOMAIN}`).select('id', 'email')).map((u) => [u.email as string, u.id as string]));
  const operatorId = users.get(`operator@${DEMO_DOMAIN}`) ?? null;
  const adminId = users.get(`admin@${DEMO_DOMAIN}`) ?? null;
  const today = todayUtc();
  const ctx = { knex, config: { appUrl } };

  const dated = HISTORY.filter((p) => users.has(p.email) && areas.has(p.area))
    .map((p) => ({ ...p, passedOn: passDate(p.when, areas.get(p.area)!, today) }))
    .sort((a, b) => a.passedOn.localeCompare(b.passedOn));
  for (const p of dated) {
    const [row] = await knex('exam_passes')
      .insert({
        user_id: users.get(p.email),
        company_id: DEMO_COMPANY_ID,
        area_id: p.area,
        score_pct: p.score,
        duration_seconds: p.minutes * 60 + 17,
        passed_at: `${p.passedOn}T14:30:00Z`,
      })
      .returning('id');
    const outcome = await issueCertificateForPass(ctx, row.id);
    if (p.revoke && outcome.certificate) await revokeCertificate(knex, outcome.certificate.number, p.revoke, { userId: operatorId });
  }

  const alreadyGranted = await knex('evidence_grants').where({ company_id: DEMO_COMPANY_ID }).whereNull('withdrawn_at').first('id');
  if (!alreadyGranted && users.has(`auditor@${DEMO_DOMAIN}`)) {
    await grantAccess(knex, DEMO_COMPANY_ID, { email: `auditor@${DEMO_DOMAIN}`, scope: 'firm' }, { userId: adminId });
  }
  return 'seeded';
}
