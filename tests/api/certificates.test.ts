import crypto from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Response } from 'supertest';
import QRCode from 'qrcode';
import { PDFParse } from 'pdf-parse';
import { createTestApp, type TestApp } from '../helpers/app';
import { TestAgent, signedIn } from '../helpers/agent';
import { createCompany, createUser } from '../helpers/factory';
import { waitForMail } from '../helpers/mail';
import { syncContent } from '../../server/services/content-sync';
import { issueCertificateForPass, issuePendingCertificates } from '../../server/services/certificates';
import { checkSymbol, formatNumber, generateCertificateNumber } from '../../server/services/certificate-number';
import { saveLogo } from '../../server/services/logos';
import type { Role } from '../../shared/roles';

/**
 * Certificates end to end through the API: issue from exam passes (idempotent, renewal), the PDF
 * (text, stored bytes, authenticity), public verification (shape, typo hint, rate limit, log), the
 * auditor's batch, lookups and evidence grants, the operator's revoke and re-issue, and who may
 * download which PDF.
 */
let t: TestApp;
type Person = { id: string; email: string; name: string; agent: TestAgent };
const people: Record<string, Person> = {};
let companyA: string;
let companyB: string;
let firm: string;
const anonymous = () => new TestAgent(t.app);

const DAY = 86_400_000;
const isoDaysAgo = (days: number) => new Date(Date.now() - days * DAY).toISOString();
const today = () => new Date().toISOString().slice(0, 10);

async function person(key: string, companyId: string, roles: Role[], name: string) {
  const user = await createUser(t.knex, { companyId, roles, name });
  people[key] = { id: user.id, email: user.email, name, agent: await signedIn(t.app, user.email, user.password) };
  return people[key];
}

async function pass(userKey: string, areaId: string, passedAt: string, opts: { companyId?: string; score?: number; duration?: number } = {}) {
  const [row] = await t.knex('exam_passes')
    .insert({ user_id: people[userKey].id, company_id: opts.companyId ?? companyA, area_id: areaId, score_pct: opts.score ?? 88.5, duration_seconds: opts.duration ?? 2710, passed_at: passedAt })
    .returning('id');
  return row.id as string;
}

async function issue(userKey: string, areaId: string, passedAt: string, opts?: Parameters<typeof pass>[3]) {
  const outcome = await issueCertificateForPass(t.ctx, await pass(userKey, areaId, passedAt, opts));
  expect(outcome.certificate, `a certificate for ${userKey} in ${areaId}`).not.toBeNull();
  return outcome.certificate!.number;
}

const binary = (res: Response, cb: (err: Error | null, body: Buffer) => void) => {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
};
const download = (agent: TestAgent, number: string) => agent.get(`/api/certificates/${number}/pdf`).buffer(true).parse(binary);

async function upload(agent: TestAgent, path: string, bytes: Buffer, fileName: string, field = 'file') {
  const token = await agent.csrfToken();
  return agent.agent.post(path).set('x-csrf-token', token).attach(field, bytes, fileName);
}

async function pdfText(bytes: Buffer) {
  const parser = new PDFParse({ data: new Uint8Array(bytes) });
  try {
    return (await parser.getText()).text;
  } finally {
    await parser.destroy();
  }
}

/** A well-formed number that was never issued. */
function unusedNumber() {
  return generateCertificateNumber();
}

/** The same number with two different neighbours swapped: the check symbol must catch it. */
function swapped(number: string) {
  const body = number.replace(/^PW-/, '').replaceAll('-', '');
  const i = [...body].findIndex((c, k) => k < body.length - 1 && c !== body[k + 1]);
  return formatNumber(body.slice(0, i) + body[i + 1] + body[i] + body.slice(i + 2));
}

beforeAll(async () => {
  t = await createTestApp({}, { VERIFY_RATE_MAX: '100000' });
  await syncContent(t.knex);
  // Validity comes from the area: give one area a shorter period to see it used.
  await t.knex('areas').where({ id: 'particulate' }).update({ validity_months: 24 });
  companyA = (await createCompany(t.knex, 'Harrowgate Stack Services')).id;
  companyB = (await createCompany(t.knex, 'Penmoor Emission Testing')).id;
  firm = (await createCompany(t.knex, 'Ashcombe Assessment Group', 'auditing')).id;
  const otherFirm = (await createCompany(t.knex, 'Lowther Quality Reviews', 'auditing')).id;
  const platform = (await createCompany(t.knex, 'Plumewright Operations', 'platform')).id;
  await person('crew', companyA, ['crew'], 'Ysolde Marchetti-Oyelaran');
  await person('crew2', companyA, ['crew'], 'Bram Kettleworth');
  await person('admin', companyA, ['admin'], 'Odile Farquharson');
  await person('manager', companyA, ['manager', 'crew'], 'Hollis Abernathy-Quist');
  await person('crewB', companyB, ['crew'], 'Casimir Ndlovu-Park');
  await person('adminB', companyB, ['admin'], 'Marguerite Olsby');
  await person('auditor', firm, ['auditor'], 'Ansel Tremayne');
  await person('colleague', firm, ['auditor'], 'Perpetua Vance');
  await person('outsider', otherFirm, ['auditor'], 'Isidore Wexcombe');
  await person('operator', platform, ['operator'], 'Leocadia Brunswick');
});
afterAll(() => t?.close());

describe('issuing from an exam pass', () => {
  it('issues a certificate with a well-formed number, the area validity and methods, and consumes the pass', async () => {
    const passId = await pass('crew', 'particulate', '2025-03-14T15:20:00Z', { score: 91.25, duration: 3125 });
    const outcome = await issueCertificateForPass(t.ctx, passId);
    expect(outcome.outcome).toBe('issued');
    const cert = outcome.certificate!;
    expect(cert.number).toMatch(/^PW-[0-9A-Z]{4}-[0-9A-Z]{4}-[0-9A-Z]{3}$/);
    expect(cert).toMatchObject({ areaId: 'particulate', area: 'Particulate sampling', holderName: 'Ysolde Marchetti-Oyelaran', issuedOn: '2025-03-14', expiresOn: '2027-03-14', status: 'valid' });
    const row = await t.knex('certificates').where({ number: cert.number }).first();
    expect(row.methods).toEqual(['Method 5']);
    expect(row.company_id).toBe(companyA);
    expect(row.pdf_sha256).toBe(crypto.createHash('sha256').update(row.pdf).digest('hex'));
    const consumed = await t.knex('exam_passes').where({ id: passId }).first();
    expect(consumed.consumed_at).not.toBeNull();
    expect(consumed.certificate_id).toBe(row.id);
    const audit = await t.knex('audit_log').where({ action: 'certificate.issued', target_id: row.id }).first();
    expect(audit.company_id).toBe(companyA);
  });

  it('e-mails the holder with the number and the public check address', async () => {
    const number = await issue('crew2', 'gas-analysis', isoDaysAgo(3));
    const mail = await waitForMail(people.crew2.email, { subject: /certificate/i });
    expect(mail.subject).toContain('Instrumental gas analysis');
    expect(mail.text).toContain(number);
    expect(mail.text).toContain(`${t.ctx.config.appUrl}/verify/${number}`);
    expect(mail.text).toMatch(/does not replace the method text/);
    // Through the outbox, queued with the certificate and sent after commit.
    const logged = await t.knex('email_log').where({ kind: 'certificate', to_address: people.crew2.email }).whereLike('body_text', `%${number}%`);
    expect(logged).toMatchObject([{ source: 'outbox', company_id: companyA, status: 'sent', attempts: 1 }]);
  });

  it('is idempotent: a second call, and concurrent calls, answer with the same certificate', async () => {
    const passId = await pass('crew', 'monitor-audits', isoDaysAgo(10));
    const first = await issueCertificateForPass(t.ctx, passId);
    const again = await issueCertificateForPass(t.ctx, passId);
    expect(again.outcome).toBe('already-issued');
    expect(again.certificate!.number).toBe(first.certificate!.number);

    const racing = await pass('crew', 'emission-rates', isoDaysAgo(9));
    const outcomes = await Promise.all(Array.from({ length: 6 }, () => issueCertificateForPass(t.ctx, racing)));
    expect(new Set(outcomes.map((o) => o.certificate!.number)).size).toBe(1);
    expect(outcomes.filter((o) => o.outcome === 'issued')).toHaveLength(1);
    expect(await t.knex('certificates').where({ exam_pass_id: racing }).count('* as n').first()).toEqual({ n: 1 });
    // One message for the one certificate, however many calls raced.
    for (const number of [first.certificate!.number, outcomes[0].certificate!.number]) {
      const logged = await t.knex('email_log').where({ kind: 'certificate', to_address: people.crew.email }).whereLike('body_text', `%${number}%`);
      expect(logged, number).toMatchObject([{ source: 'outbox', status: 'sent' }]);
    }
  });

  it('renews within 90 days of expiry: the new certificate supersedes the old one, which reads superseded', async () => {
    // Flow and moisture is valid 36 months; a pass 36 months minus 40 days ago expires in about 40 days.
    const oldNumber = await issue('manager', 'flow-moisture', isoDaysAgo(3 * 365 + 1 - 40));
    expect((await anonymous().get(`/api/verify/${oldNumber}`)).body.status).toBe('valid');
    const renewal = await issueCertificateForPass(t.ctx, await pass('manager', 'flow-moisture', new Date().toISOString()));
    expect(renewal.outcome).toBe('renewed');
    expect(renewal.supersedes).toEqual([oldNumber]);
    const old = await t.knex('certificates').where({ number: oldNumber }).first();
    expect(old).toMatchObject({ status: 'superseded', superseded_reason: 'renewal' });
    expect(old.superseded_by).toBe((await t.knex('certificates').where({ number: renewal.certificate!.number }).first()).id);
    expect((await anonymous().get(`/api/verify/${oldNumber}`)).body.status).toBe('superseded');
    expect((await anonymous().get(`/api/verify/${renewal.certificate!.number}`)).body.status).toBe('valid');

    // A further pass while the new certificate runs for years issues nothing new.
    const extraPass = await pass('manager', 'flow-moisture', new Date().toISOString());
    const extra = await issueCertificateForPass(t.ctx, extraPass);
    expect(extra.outcome).toBe('already-current');
    expect(extra.certificate!.number).toBe(renewal.certificate!.number);
    expect((await t.knex('exam_passes').where({ id: extraPass }).first()).consumed_at).not.toBeNull();
  });

  it('the sweep issues every pass not yet consumed, once', async () => {
    const pending = await pass('crew2', 'ambient-conversions', isoDaysAgo(1));
    const first = await issuePendingCertificates(t.ctx);
    expect(first.issued).toBeGreaterThanOrEqual(1);
    expect((await t.knex('exam_passes').where({ id: pending }).first()).certificate_id).not.toBeNull();
    const second = await issuePendingCertificates(t.ctx);
    expect(second).toEqual({ processed: 0, issued: 0, failed: 0 });
  });
});

describe('GET /api/certificates/mine', () => {
  it('lists my own certificates with number, area, status and dates, and nobody else’s', async () => {
    const res = await people.crew.agent.get('/api/certificates/mine').expect(200);
    const mine = await t.knex('certificates').where({ user_id: people.crew.id }).pluck('number');
    expect(res.body.certificates.map((c: { number: string }) => c.number).sort()).toEqual(mine.sort());
    for (const c of res.body.certificates) {
      expect(c).toMatchObject({ number: expect.any(String), area: expect.any(String), status: expect.stringMatching(/^(valid|expired|revoked|superseded)$/), issuedOn: expect.stringMatching(/^\d{4}-\d{2}-\d{2}$/), expiresOn: expect.stringMatching(/^\d{4}-\d{2}-\d{2}$/) });
      expect(c.shareUrl).toBe(`${t.ctx.config.appUrl}/verify/${c.number}`);
    }
    const other = await people.crewB.agent.get('/api/certificates/mine').expect(200);
    expect(other.body.certificates).toEqual([]);
  });
});

describe('the certificate PDF', () => {
  let number: string;
  let first: Buffer;
  beforeAll(async () => {
    number = (await t.knex('certificates').where({ user_id: people.crew.id, area_id: 'particulate' }).first()).number;
    first = (await download(people.crew.agent, number).expect(200)).body as Buffer;
  });

  it('holds the holder, the number, the area, the dates, the methods and the caution as text', async () => {
    const text = await pdfText(first);
    expect(text).toContain('Ysolde Marchetti-Oyelaran');
    expect(text).toContain(number);
    expect(text).toContain('Particulate sampling');
    expect(text).toContain('14 March 2025');
    expect(text).toContain('14 March 2027');
    expect(text).toContain('Method 5');
    expect(text).toContain(`/verify/${number}`);
    expect(text.replace(/\s+/g, ' ')).toContain('does not replace the method text, agency requirements, accreditation or licensed professional judgement');
    expect(text).toContain('Harrowgate Stack Services');
  });

  it('downloads byte-identical every time, and is the stored file with the stored SHA-256', async () => {
    const res = await download(people.crew.agent, number).expect(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    expect(res.headers['content-disposition']).toContain(`plumewright-certificate-${number}.pdf`);
    const second = res.body as Buffer;
    expect(second.equals(first)).toBe(true);
    const row = await t.knex('certificates').where({ number }).first('pdf', 'pdf_sha256');
    expect(Buffer.compare(row.pdf, first)).toBe(0);
    expect(crypto.createHash('sha256').update(first).digest('hex')).toBe(row.pdf_sha256);
    expect(first.subarray(0, 5).toString('latin1')).toBe('%PDF-');
  });

  it('prints the company logo when the company has one, and a text line when it has none', async () => {
    const imagesIn = (pdf: Buffer) => (pdf.toString('latin1').match(/\/Subtype \/Image/g) ?? []).length;
    const withoutLogo = imagesIn(first); // the QR code (with its alpha mask)
    expect(withoutLogo).toBeGreaterThanOrEqual(1);
    await saveLogo(t.knex, companyA, await QRCode.toBuffer('an invented logo', { type: 'png' }));
    const withLogo = await issue('crew2', 'emission-rates', isoDaysAgo(2));
    const pdf = (await download(people.crew2.agent, withLogo).expect(200)).body as Buffer;
    expect(imagesIn(pdf)).toBeGreaterThan(withoutLogo);
    expect(await pdfText(pdf)).not.toContain('Harrowgate Stack Services');
    await t.knex('company_logos').where({ company_id: companyA }).del();
  });

  it('is served to the holder, their company admins and managers and operators; to anyone else it does not exist', async () => {
    for (const key of ['crew', 'admin', 'manager', 'operator']) {
      expect((await download(people[key].agent, number)).status, key).toBe(200);
    }
    for (const key of ['crew2', 'crewB', 'adminB', 'auditor']) {
      const res = await people[key].agent.get(`/api/certificates/${number}/pdf`);
      expect(res.status, key).toBe(404);
      expect(res.body.error.code).toBe('not_found');
    }
    expect((await people.crew.agent.get(`/api/certificates/${unusedNumber()}/pdf`)).status).toBe(404);
    expect((await anonymous().get(`/api/certificates/${number}/pdf`)).status).toBe(401);
  });
});

describe('GET /api/verify/:number (public)', () => {
  let number: string;
  beforeAll(async () => {
    number = (await t.knex('certificates').where({ user_id: people.crew.id, area_id: 'particulate' }).first()).number;
  });

  it('answers the minimum: status, holder, area and dates, never an e-mail or company detail', async () => {
    const res = await anonymous().get(`/api/verify/${number}`).expect(200);
    expect(res.body).toEqual({ number, status: 'valid', holderName: 'Ysolde Marchetti-Oyelaran', area: 'Particulate sampling', issuedOn: '2025-03-14', expiresOn: '2027-03-14' });
    const raw = JSON.stringify(res.body);
    expect(raw).not.toContain(people.crew.email);
    expect(raw).not.toContain('@');
    expect(raw).not.toMatch(/Harrowgate|company/i);
    expect(res.headers['cache-control']).toBe('no-store');
  });

  it('is tolerant of case, spaces, dashes and a missing prefix', async () => {
    const sloppy = ` ${number.toLowerCase().replaceAll('-', ' ').replace(/^pw /, '')} `;
    const res = await anonymous().get(`/api/verify/${encodeURIComponent(sloppy)}`).expect(200);
    expect(res.body.number).toBe(number);
    expect(res.body.status).toBe('valid');
  });

  it('answers 400 with a typo hint naming the field when the check character fails', async () => {
    const res = await anonymous().get(`/api/verify/${swapped(number)}`).expect(400);
    expect(res.body.error.code).toBe('number_check_failed');
    expect(res.body.error.fields).toEqual([{ field: 'number', message: expect.stringMatching(/^number: .*(mistyped|swapped)/) }]);
    const short = await anonymous().get('/api/verify/PW-7K3M').expect(400);
    expect(short.body.error.fields[0]).toMatchObject({ field: 'number', message: expect.stringContaining('characters') });
  });

  it('answers not-found, not an error, for a well-formed number that was never issued', async () => {
    const unknown = unusedNumber();
    const res = await anonymous().get(`/api/verify/${unknown}`).expect(200);
    expect(res.body).toEqual({ number: unknown, status: 'not-found', holderName: null, area: null, issuedOn: null, expiresOn: null });
  });

  it('reads expired by date: a certificate past its last day', async () => {
    const old = await issue('crew2', 'flow-moisture', isoDaysAgo(4 * 365));
    const res = await anonymous().get(`/api/verify/${old}`).expect(200);
    expect(res.body.status).toBe('expired');
    expect(res.body.expiresOn < today()).toBe(true);
  });

  it('logs every lookup: found, not found and malformed, with the signed-in user when there is one', async () => {
    const before = Number((await t.knex('verification_log').count('* as n').first())!.n);
    await anonymous().get(`/api/verify/${number}`).expect(200);
    await people.auditor.agent.get(`/api/verify/${number}`).expect(200);
    await anonymous().get(`/api/verify/${unusedNumber()}`).expect(200);
    await anonymous().get('/api/verify/not-a-number!').expect(400);
    const rows = await t.knex('verification_log').orderBy('id', 'desc').limit(4).select('*');
    expect(Number((await t.knex('verification_log').count('* as n').first())!.n)).toBe(before + 4);
    expect(rows.map((r) => r.result)).toEqual(['malformed', 'not-found', 'valid', 'valid']);
    expect(rows.every((r) => r.kind === 'single' && typeof r.ip_hash === 'string' && r.ip_hash.length === 32 && !r.ip_hash.includes('127.0.0.1'))).toBe(true);
    expect(rows[1].user_id).toBeNull();
    expect(rows[2].user_id).toBe(people.auditor.id);
    expect(rows[3].user_id).toBeNull();
    expect(rows[0].number_tried).toBe('not-a-number!');
  });

  it('is rate limited per address', async () => {
    const limited = await createTestApp({}, { VERIFY_RATE_MAX: '3' });
    try {
      const agent = new TestAgent(limited.app);
      const probe = unusedNumber();
      for (let i = 0; i < 3; i++) expect((await agent.get(`/api/verify/${probe}`)).status).toBe(200);
      const res = await agent.get(`/api/verify/${probe}`);
      expect(res.status).toBe(429);
      expect(res.body.error.code).toBe('rate_limited');
      // The file check shares the budget.
      const file = await upload(agent, '/api/verify/file', Buffer.from('%PDF-1.7\n'), 'x.pdf');
      expect(file.status).toBe(429);
    } finally {
      await limited.close();
    }
  });
});

describe('POST /api/verify/file (public authenticity check)', () => {
  let number: string;
  let pdf: Buffer;
  beforeAll(async () => {
    number = (await t.knex('certificates').where({ user_id: people.crew.id, area_id: 'particulate' }).first()).number;
    pdf = (await download(people.crew.agent, number).expect(200)).body as Buffer;
  });

  it('says authentic, with the number, for the exact issued file', async () => {
    const res = await upload(anonymous(), '/api/verify/file', pdf, 'certificate.pdf');
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ authentic: true, number, certificate: { status: 'valid', holderName: 'Ysolde Marchetti-Oyelaran' } });
    expect(JSON.stringify(res.body)).not.toContain('@');
  });

  it('says not authentic when a single byte is changed', async () => {
    const tampered = Buffer.from(pdf);
    const at = Math.floor(tampered.length / 2);
    tampered[at] = tampered[at] ^ 0x01;
    const res = await upload(anonymous(), '/api/verify/file', tampered, 'certificate.pdf');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ authentic: false });
    const logged = await t.knex('verification_log').where({ kind: 'file' }).orderBy('id', 'desc').first();
    expect(logged.result).toBe('not-authentic');
  });

  it('refuses a file that is not a PDF (400) and one over 5 MB (413), naming the field', async () => {
    const png = await QRCode.toBuffer('not a certificate', { type: 'png' });
    const notPdf = await upload(anonymous(), '/api/verify/file', png, 'certificate.pdf');
    expect(notPdf.status).toBe(400);
    expect(notPdf.body.error.fields[0]).toMatchObject({ field: 'file', message: expect.stringContaining('not a PDF') });
    const big = Buffer.concat([Buffer.from('%PDF-1.7\n'), Buffer.alloc(5 * 1024 * 1024)]);
    const tooBig = await upload(anonymous(), '/api/verify/file', big, 'big.pdf');
    expect(tooBig.status).toBe(413);
    expect(tooBig.body.error.fields[0].field).toBe('file');
    const missing = await anonymous().post('/api/verify/file', {});
    expect(missing.status).toBe(400);
    expect(missing.body.error.fields[0].field).toBe('file');
    const wrongField = await upload(anonymous(), '/api/verify/file', pdf, 'certificate.pdf', 'pdf');
    expect(wrongField.status).toBe(400);
  });
});

describe('operator: revoke and re-issue', () => {
  it('revokes with a reason, which the public check shows at once', async () => {
    const number = await issue('crew2', 'particulate', isoDaysAgo(20));
    const missing = await people.operator.agent.post(`/api/operator/certificates/${number}/revoke`, {});
    expect(missing.status).toBe(400);
    expect(missing.body.error.fields[0].field).toBe('reason');
    expect((await people.admin.agent.post(`/api/operator/certificates/${number}/revoke`, { reason: 'Not allowed here' })).status).toBe(403);

    const reason = 'Exam sat under another member’s sign-in; a retake is required.';
    const res = await people.operator.agent.post(`/api/operator/certificates/${number}/revoke`, { reason });
    expect(res.status).toBe(200);
    expect(res.body.certificate).toMatchObject({ number, status: 'revoked', revokedReason: reason });
    const verify = await anonymous().get(`/api/verify/${number}`).expect(200);
    expect(verify.body).toMatchObject({ status: 'revoked', revokedReason: reason, revokedOn: today() });
    expect((await people.operator.agent.post(`/api/operator/certificates/${number}/revoke`, { reason })).status).toBe(409);
    expect(await t.knex('audit_log').where({ action: 'certificate.revoked' }).first()).toMatchObject({ actor_user_id: people.operator.id, company_id: companyA });
    const listed = await people.operator.agent.get(`/api/operator/certificates?status=revoked&q=${number.toLowerCase()}`).expect(200);
    expect(listed.body.certificates.map((c: { number: string }) => c.number)).toEqual([number]);
  });

  it('re-issues after a name correction: new number and PDF, old one superseded, account name corrected', async () => {
    const number = await issue('crew2', 'monitor-audits', isoDaysAgo(30));
    const res = await people.operator.agent.post(`/api/operator/certificates/${number}/reissue`, { holderName: 'Bram Kettleworth-Ainsley' });
    expect(res.status).toBe(201);
    const fresh = res.body.certificate.number as string;
    expect(fresh).not.toBe(number);
    expect(res.body.replaces).toBe(number);
    expect((await anonymous().get(`/api/verify/${number}`)).body.status).toBe('superseded');
    const now = (await anonymous().get(`/api/verify/${fresh}`)).body;
    expect(now).toMatchObject({ status: 'valid', holderName: 'Bram Kettleworth-Ainsley' });
    const old = await t.knex('certificates').where({ number }).first();
    expect(now).toMatchObject({ issuedOn: old.issued_on, expiresOn: old.expires_on });
    expect(old.superseded_reason).toBe('name-correction');
    expect(await pdfText((await download(people.crew2.agent, fresh).expect(200)).body)).toContain('Bram Kettleworth-Ainsley');
    expect((await t.knex('users').where({ id: people.crew2.id }).first()).name).toBe('Bram Kettleworth-Ainsley');
    const mail = await waitForMail(people.crew2.email, { subject: /corrected/i });
    expect(mail.text).toContain(fresh);
    expect((await people.operator.agent.post(`/api/operator/certificates/${number}/reissue`, { holderName: 'Someone Else' })).status).toBe(409);
  });
});

describe('auditor batch check', () => {
  it('checks good rows and reports each bad row by its line; results download as CSV', async () => {
    const valid = (await t.knex('certificates').where({ user_id: people.crew.id, area_id: 'particulate' }).first()).number;
    const revoked = (await t.knex('certificates').where({ status: 'revoked' }).first()).number;
    const unknown = unusedNumber();
    const csv = [
      'Certificate number,Note',
      `${valid},from the job file`,
      `"${valid.toLowerCase().replaceAll('-', ' ')}",typed by hand`,
      `${swapped(valid)},a typo`,
      ',empty cell',
      '',
      `${revoked},`,
      'hello world,not a number',
      `${unknown},never issued`,
    ].join('\r\n');
    const res = await upload(people.auditor.agent, '/api/audit/batch', Buffer.from(csv), 'numbers.csv');
    expect(res.status).toBe(200);
    const rows = res.body.rows as { row: number; status?: string; error?: string; number?: string }[];
    expect(rows.map((r) => r.row)).toEqual([2, 3, 4, 5, 7, 8, 9]);
    expect(rows.map((r) => r.status ?? 'invalid')).toEqual(['valid', 'valid', 'invalid', 'invalid', 'revoked', 'invalid', 'not-found']);
    expect(rows[1].number).toBe(valid);
    expect(rows[2].error).toMatch(/^Row 4: .*(mistyped|swapped)/);
    expect(rows[3].error).toBe('Row 5: the number column is empty');
    expect(rows[5].error).toMatch(/^Row 8: /);
    expect(res.body.summary).toEqual({ rows: 7, checked: 4, invalid: 3, valid: 2, expired: 0, revoked: 1, superseded: 0, notFound: 1 });
    expect(JSON.stringify(res.body)).not.toContain('@');

    const logged = await t.knex('verification_log').where({ batch_id: res.body.batchId }).count('* as n').first();
    expect(logged).toEqual({ n: 7 });

    const download = await people.auditor.agent.get(`/api/audit/batches/${res.body.batchId}/csv`).expect(200);
    expect(download.headers['content-type']).toContain('text/csv');
    const lines = download.text.trim().split(/\r?\n/);
    expect(lines[0]).toBe('row,input,number,status,holder_name,area,issued_on,expires_on,revoked_reason,problem');
    expect(lines).toHaveLength(8);
    expect(lines[1]).toContain(`2,${valid},${valid},valid,Ysolde Marchetti-Oyelaran,Particulate sampling,2025-03-14,2027-03-14`);
    expect(lines[4]).toContain('Row 5: the number column is empty');
    expect((await people.colleague.agent.get(`/api/audit/batches/${res.body.batchId}/csv`)).status).toBe(404);
  });

  it('reads a file without a header from its first column, and refuses files that are not CSV or too long', async () => {
    const valid = (await t.knex('certificates').where({ user_id: people.crew.id, area_id: 'particulate' }).first()).number;
    const plain = await upload(people.auditor.agent, '/api/audit/batch', Buffer.from(`${valid}\n${unusedNumber()}\n`), 'plain.csv');
    expect(plain.status).toBe(200);
    expect(plain.body.rows.map((r: { row: number; status: string }) => [r.row, r.status])).toEqual([[1, 'valid'], [2, 'not-found']]);

    const binary = await upload(people.auditor.agent, '/api/audit/batch', await QRCode.toBuffer('x', { type: 'png' }), 'numbers.csv');
    expect(binary.status).toBe(400);
    expect(binary.body.error.fields[0].field).toBe('file');
    const tooMany = Array.from({ length: 5_001 }, () => unusedNumber()).join('\n');
    const long = await upload(people.auditor.agent, '/api/audit/batch', Buffer.from(tooMany), 'long.csv');
    expect(long.status).toBe(400);
    expect(long.body.error.fields[0].message).toMatch(/5,001 rows.*at most 5,000/);
    const empty = await upload(people.auditor.agent, '/api/audit/batch', Buffer.from('number\n'), 'empty.csv');
    expect(empty.status).toBe(400);
    expect((await upload(people.crew.agent, '/api/audit/batch', Buffer.from(valid), 'n.csv')).status).toBe(403);
  });
});

describe('auditor lookup log', () => {
  it("lists the auditor's own lookups, newest first, and nobody else's", async () => {
    const number = (await t.knex('certificates').where({ user_id: people.crew.id, area_id: 'particulate' }).first()).number;
    await people.colleague.agent.get(`/api/verify/${number}`).expect(200);
    await people.colleague.agent.get(`/api/verify/${unusedNumber()}`).expect(200);
    const res = await people.colleague.agent.get('/api/audit/lookups?pageSize=10').expect(200);
    expect(res.body.total).toBe(2);
    expect(res.body.lookups.map((l: { result: string }) => l.result)).toEqual(['not-found', 'valid']);
    expect(res.body.lookups[1]).toMatchObject({ kind: 'single', input: number, number });
    const mine = await people.auditor.agent.get('/api/audit/lookups?kind=batch&pageSize=200').expect(200);
    expect(mine.body.lookups.length).toBeGreaterThanOrEqual(9);
    expect(mine.body.lookups.every((l: { kind: string }) => l.kind === 'batch')).toBe(true);
    const bad = await people.colleague.agent.get('/api/audit/lookups?pageSize=0');
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields[0].field).toBe('pageSize');
  });
});

describe('evidence grants', () => {
  let number: string;
  beforeAll(async () => {
    number = (await t.knex('certificates').where({ user_id: people.crew.id, area_id: 'particulate' }).first()).number;
  });
  const evidence = (key: string) => people[key].agent.get(`/api/audit/certificates/${number}/evidence`);

  it('hides the evidence from every auditor until the company grants it', async () => {
    for (const key of ['auditor', 'colleague', 'outsider']) expect((await evidence(key)).status, key).toBe(404);
  });

  it('a grant to one auditor shows them the exam date, score and duration, and no one else', async () => {
    const res = await people.admin.agent.post('/api/company/auditor-grants', { email: people.auditor.email.toUpperCase(), scope: 'auditor' });
    expect(res.status).toBe(201);
    expect(res.body.grant).toMatchObject({ scope: 'auditor', auditorName: 'Ansel Tremayne', firmName: null, grantedBy: 'Odile Farquharson' });
    const seen = await evidence('auditor').expect(200);
    expect(seen.body.evidence).toMatchObject({
      number, holderName: 'Ysolde Marchetti-Oyelaran', area: 'Particulate sampling', companyName: 'Harrowgate Stack Services',
      exam: { passedAt: '2025-03-14T15:20:00.000Z', scorePct: 91.25, durationSeconds: 3125 },
    });
    expect((await evidence('colleague')).status).toBe(404);
    expect((await evidence('outsider')).status).toBe(404);
    expect(await t.knex('audit_log').where({ action: 'evidence.viewed', actor_user_id: people.auditor.id }).first()).toMatchObject({ company_id: companyA });
    const grants = await people.auditor.agent.get('/api/audit/grants').expect(200);
    expect(grants.body.grants).toEqual([{ companyName: 'Harrowgate Stack Services', scope: 'auditor', grantedAt: expect.any(String) }]);
    expect((await people.admin.agent.post('/api/company/auditor-grants', { email: people.auditor.email, scope: 'auditor' })).status).toBe(409);
  });

  it('a grant to the firm covers every auditor there; withdrawing ends access at once', async () => {
    const firmGrant = await people.admin.agent.post('/api/company/auditor-grants', { email: people.colleague.email, scope: 'firm' });
    expect(firmGrant.status).toBe(201);
    expect(firmGrant.body.grant).toMatchObject({ scope: 'firm', firmName: 'Ashcombe Assessment Group', auditorName: null });
    expect((await evidence('colleague')).status).toBe(200);
    expect((await evidence('outsider')).status).toBe(404);

    const list = await people.admin.agent.get('/api/company/auditor-grants').expect(200);
    expect(list.body.grants).toHaveLength(2);
    // Another company's admin cannot touch this company's grants.
    expect((await people.adminB.agent.send('delete', `/api/company/auditor-grants/${firmGrant.body.grant.id}`)).status).toBe(404);
    expect((await people.admin.agent.send('delete', `/api/company/auditor-grants/${firmGrant.body.grant.id}`)).status).toBe(204);
    expect((await evidence('colleague')).status).toBe(404);
    expect((await evidence('auditor')).status).toBe(200);
    const personal = list.body.grants.find((g: { scope: string }) => g.scope === 'auditor');
    expect((await people.admin.agent.send('delete', `/api/company/auditor-grants/${personal.id}`)).status).toBe(204);
    expect((await evidence('auditor')).status).toBe(404);
    expect(await t.knex('audit_log').where({ action: 'evidence.withdrawn', company_id: companyA }).count('* as n').first()).toEqual({ n: 2 });
  });

  it('names the bad field when the e-mail is not an auditor or not an address', async () => {
    const unknown = await people.admin.agent.post('/api/company/auditor-grants', { email: people.crewB.email, scope: 'auditor' });
    expect(unknown.status).toBe(400);
    expect(unknown.body.error.fields).toEqual([{ field: 'email', message: expect.stringContaining('no auditor account') }]);
    const malformed = await people.admin.agent.post('/api/company/auditor-grants', { email: 'not-an-address', scope: 'everyone' });
    expect(malformed.status).toBe(400);
    expect(malformed.body.error.fields.map((f: { field: string }) => f.field).sort()).toEqual(['email', 'scope']);
    expect((await people.manager.agent.get('/api/company/auditor-grants')).status).toBe(403);
  });
});

describe('look-alike letters', () => {
  it('reads O, I, L and S typed into a number as the digits 0, 1, 1 and 5', async () => {
    const body = '10Q5Z7K3MA';
    const good = formatNumber(body + checkSymbol(body));
    expect((await anonymous().get(`/api/verify/${good}`)).body.status).toBe('not-found');
    expect((await anonymous().get(`/api/verify/${good.replace('10Q5', 'IOQS')}`)).body).toMatchObject({ number: good, status: 'not-found' });
  });
});
