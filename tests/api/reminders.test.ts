import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import pino from 'pino';
import type { Knex } from 'knex';
import { createTestApp, type TestApp } from '../helpers/app';
import { signedIn, TestAgent } from '../helpers/agent';
import { createCompany, createUser } from '../helpers/factory';
import { insertCertificate } from '../helpers/certificates';
import { waitForMail, type CaughtMail } from '../helpers/mail';
import { createApp } from '../../server/app';
import type { AppContext } from '../../server/context';
import { createDb } from '../../server/db';
import { createMailer, type Mailer } from '../../server/mail/mailer';
import { QUEUES, startJobs, type RunningJobs } from '../../server/jobs';
import { syncContent } from '../../server/services/content-sync';
import { MAX_ATTEMPTS, deliverQueuedEmails, queueEmails, withEmailLog } from '../../server/services/email-log';
import { runReadinessScan, runReminders } from '../../server/services/notifications';
import { addDays, todayIn } from '../../server/services/readiness';

/**
 * Reminders and digests: the right day, exactly once, with two app processes on one database.
 * "Two processes" are two app contexts (own connection pools, own mailers) and two pg-boss
 * workers on the same database, running the same scans at the same time.
 */
let t: TestApp;
let ctxB: AppContext;
let appB: ReturnType<typeof createApp>;
const silent = pino({ level: 'silent' });

function secondContext(): AppContext {
  const knex = createDb(t.databaseUrl, { min: 0, max: 10 });
  return { config: t.ctx.config, knex, logger: silent, mailer: withEmailLog(knex, createMailer(t.ctx.config, silent), silent) };
}

async function inbox(address: string, subject?: RegExp): Promise<CaughtMail[]> {
  const res = await fetch(`${process.env.MAIL_API_URL}/email?to.address=${encodeURIComponent(address)}`);
  const mails = (await res.json()) as CaughtMail[];
  return mails.filter((m) => !subject || subject.test(m.subject));
}

/** A customer company with one manager and one crew member holding a particulate certificate. */
async function scenario(label: string, expiresOn: string, timeZone = 'UTC') {
  const company = await createCompany(t.knex, `${label} Stack Testing`);
  await t.knex('companies').where({ id: company.id }).update({ time_zone: timeZone });
  const manager = await createUser(t.knex, { companyId: company.id, roles: ['manager'], name: `${label} Manager` });
  const holder = await createUser(t.knex, { companyId: company.id, roles: ['crew'], name: `${label} Holder` });
  const certificate = await insertCertificate(t.knex, { userId: holder.id, companyId: company.id, area: 'particulate', issuedOn: addDays(expiresOn, -1095), expiresOn });
  return { company, manager, holder, certificate };
}

const reminderKinds = async (knex: Knex, certificateId: string) =>
  (await knex('notifications').where({ certificate_id: certificateId }).orderBy('created_at').pluck('kind')) as string[];

/** Both processes scan at once, as of the same day, for these companies. */
const scanTwice = (asOf: string, companyIds: string[]) =>
  Promise.all([runReminders(t.ctx, { asOf, companyIds }), runReminders(ctxB, { asOf, companyIds })]);

beforeAll(async () => {
  t = await createTestApp();
  await syncContent(t.knex);
  ctxB = secondContext();
  appB = createApp(ctxB);
});
afterAll(async () => {
  await appB?.close();
  ctxB?.mailer.close();
  await ctxB?.knex.destroy();
  await t?.close();
});

describe('expiry reminders', () => {
  it('sends each reminder on its day (expiry − 90, 30, 7) and on no other, once, with both processes scanning', async () => {
    const expiresOn = '2031-06-16';
    const s = await scenario('Calloway', expiresOn);
    const plan: [number, string[]][] = [
      [-92, []],
      [-91, []],
      [-90, ['expiry-90']],
      [-89, ['expiry-90']],
      [-31, ['expiry-90']],
      [-30, ['expiry-90', 'expiry-30']],
      [-29, ['expiry-90', 'expiry-30']],
      [-8, ['expiry-90', 'expiry-30']],
      [-7, ['expiry-90', 'expiry-30', 'expiry-7']],
      [-1, ['expiry-90', 'expiry-30', 'expiry-7']],
      [0, ['expiry-90', 'expiry-30', 'expiry-7']],
      [1, ['expiry-90', 'expiry-30', 'expiry-7']],
    ];
    for (const [offset, expected] of plan) {
      await scanTwice(addDays(expiresOn, offset), [s.company.id]);
      expect(await reminderKinds(t.knex, s.certificate.id), `as of expiry ${offset} days`).toEqual(expected);
    }
    const holderSubject = /Your Particulate sampling certificate runs out on 16 June 2031/;
    const managerSubject = /Calloway Holder: Particulate sampling certificate runs out/;
    await waitForMail(s.holder.email, { subject: holderSubject });
    const forHolder = await inbox(s.holder.email, holderSubject);
    const forManager = await inbox(s.manager.email, managerSubject);
    expect(forHolder).toHaveLength(3);
    expect(forManager).toHaveLength(3);
    expect(forHolder.map((m) => m.text.match(/valid until 16 June 2031 \(([^)]*)\)/)?.[1]).sort()).toEqual(['in 30 days', 'in 7 days', 'in 90 days']);
    const log = await t.knex('email_log').whereIn('notification_id', t.knex('notifications').where({ certificate_id: s.certificate.id }).select('id'));
    expect(log).toHaveLength(6);
    expect(log.every((r) => r.status === 'sent' && r.source === 'outbox' && r.attempts === 1)).toBe(true);
  });

  it('catches up a missed day inside the same window, never with a stale reminder', async () => {
    const expiresOn = '2031-09-30';
    const s = await scenario('Dunmore', expiresOn);
    await scanTwice(addDays(expiresOn, -20), [s.company.id]);
    expect(await reminderKinds(t.knex, s.certificate.id)).toEqual(['expiry-30']);
    await scanTwice(addDays(expiresOn, -10), [s.company.id]);
    expect(await reminderKinds(t.knex, s.certificate.id)).toEqual(['expiry-30']);
    // A scan "as of" an earlier day (a test or a replay) does not send the less urgent one afterwards.
    await scanTwice(addDays(expiresOn, -60), [s.company.id]);
    expect(await reminderKinds(t.knex, s.certificate.id)).toEqual(['expiry-30']);
  });

  it('sends nothing for a certificate already renewed, or revoked', async () => {
    const expiresOn = '2031-11-20';
    const s = await scenario('Eskdale', expiresOn);
    await insertCertificate(t.knex, { userId: s.holder.id, companyId: s.company.id, area: 'particulate', issuedOn: addDays(expiresOn, -30), expiresOn: addDays(expiresOn, 1065) });
    const revoked = await insertCertificate(t.knex, { userId: s.holder.id, companyId: s.company.id, area: 'gas-analysis', issuedOn: addDays(expiresOn, -1000), expiresOn, status: 'revoked' });
    await scanTwice(addDays(expiresOn, -30), [s.company.id]);
    expect(await reminderKinds(t.knex, s.certificate.id)).toEqual([]);
    expect(await reminderKinds(t.knex, revoked.id)).toEqual([]);
  });

  it("waits for the company's morning, counted in its own time zone", async () => {
    const s = await scenario('Fellbrook', '2032-06-08', 'America/Chicago');
    // 10:00 UTC on 10 March 2032 is 04:00 in Chicago: too early, the company is left for a later run.
    const early = await runReadinessScan(t.ctx, { now: new Date('2032-03-10T10:00:00Z'), companyIds: [s.company.id] });
    expect(early.companies).toBe(0);
    expect(await reminderKinds(t.knex, s.certificate.id)).toEqual([]);
    // 04:30 UTC on 11 March is 22:30 on 10 March in Chicago: the local day is still the 10th, 90 days out.
    const late = await runReadinessScan(t.ctx, { now: new Date('2032-03-11T04:30:00Z'), companyIds: [s.company.id] });
    expect(late.companies).toBe(1);
    const row = await t.knex('notifications').where({ certificate_id: s.certificate.id }).first();
    expect(row).toMatchObject({ kind: 'expiry-90', for_date: '2032-03-10' });
  });
});

describe('weekly digest', () => {
  it('goes to each manager once per ISO week, however many scans run', async () => {
    const company = await createCompany(t.knex, 'Glenhaven Source Testing');
    const managers = [
      await createUser(t.knex, { companyId: company.id, roles: ['manager'], name: 'Gwen Digest' }),
      await createUser(t.knex, { companyId: company.id, roles: ['manager', 'crew'], name: 'Gideon Digest' }),
    ];
    await createUser(t.knex, { companyId: company.id, roles: ['admin'], name: 'Greer Admin' });
    const count = async () => Number((await t.knex('notifications').where({ company_id: company.id, kind: 'digest' }).count('* as n').first())?.n);
    await scanTwice('2033-01-03', [company.id]); // Monday, week 1
    expect(await count()).toBe(2);
    await scanTwice('2033-01-05', [company.id]); // Wednesday
    await scanTwice('2033-01-09', [company.id]); // Sunday, still week 1
    expect(await count()).toBe(2);
    await scanTwice('2033-01-10', [company.id]); // Monday, week 2
    expect(await count()).toBe(4);
    for (const m of managers) {
      await waitForMail(m.email, { subject: /Crew readiness for Glenhaven/ });
      expect(await inbox(m.email, /Crew readiness for Glenhaven Source Testing, week 01/)).toHaveLength(1);
      expect(await inbox(m.email, /Crew readiness for Glenhaven Source Testing, week 02/)).toHaveLength(1);
    }
    const digest = (await inbox(managers[0].email, /week 02/))[0];
    expect(digest.text).toMatch(/Crew readiness on 10 January 2033 \(UTC\)/);
  });
});

describe('two pg-boss workers on one database', () => {
  let jobsA: RunningJobs;
  let jobsB: RunningJobs;
  beforeAll(async () => {
    [jobsA, jobsB] = await Promise.all([
      startJobs(t.ctx, { schedule: false, pollingIntervalSeconds: 0.5 }),
      startJobs(ctxB, { schedule: false, pollingIntervalSeconds: 0.5 }),
    ]);
  });
  afterAll(async () => {
    await Promise.all([jobsA?.stop(), jobsB?.stop()]);
  });

  it('sends a reminder and a digest exactly once when both run the scan job repeatedly', async () => {
    const expiresOn = '2035-04-12';
    const asOf = addDays(expiresOn, -7);
    const s = await scenario('Hartwell', expiresOn);
    const sent: { boss: RunningJobs; id: string }[] = [];
    for (let i = 0; i < 3; i++) {
      for (const jobs of [jobsA, jobsB]) {
        const id = await jobs.boss.send(QUEUES.scan, { asOf });
        expect(id).toBeTruthy();
        sent.push({ boss: jobs, id: id! });
      }
    }
    const until = Date.now() + 60_000;
    for (;;) {
      const states = await Promise.all(sent.map(({ boss, id }) => boss.boss.getJobById(QUEUES.scan, id).then((j) => j?.state)));
      if (states.every((state) => state === 'completed')) break;
      expect(states.filter((state) => state === 'failed'), 'no scan job fails').toEqual([]);
      if (Date.now() > until) throw new Error(`scan jobs did not finish: ${states.join(', ')}`);
      await new Promise((r) => setTimeout(r, 250));
    }
    expect(await reminderKinds(t.knex, s.certificate.id)).toEqual(['expiry-7']);
    await waitForMail(s.holder.email, { subject: /Particulate sampling certificate runs out/ });
    await waitForMail(s.manager.email, { subject: /Crew readiness for Hartwell/ });
    expect(await inbox(s.holder.email, /Particulate sampling certificate runs out/)).toHaveLength(1);
    expect(await inbox(s.manager.email, /Hartwell Holder: Particulate sampling/)).toHaveLength(1);
    expect(await inbox(s.manager.email, /Crew readiness for Hartwell/)).toHaveLength(1);
    const outbox = await t.knex('email_log').where({ company_id: s.company.id, source: 'outbox' });
    expect(outbox.map((r) => r.status)).toEqual(['sent', 'sent', 'sent']);
  });
});

describe('delivery', () => {
  it('retries a failed send later and never re-sends one interrupted mid-delivery', async () => {
    let calls = 0;
    const real = createMailer(t.ctx.config, silent);
    const flaky: Mailer = {
      async send(mail) {
        calls++;
        if (calls === 1) throw new Error('451 try again later');
        await real.send(mail);
      },
      close: () => real.close(),
    };
    const retryTo = 'retry-check@tests.plumewright.example';
    const stuckTo = 'stuck-check@tests.plumewright.example';
    await t.knex.transaction((trx) => queueEmails(trx, [{ to: retryTo, subject: 'Retry check', text: 'body', kind: 'test' }]));
    await t.knex('email_log').insert({ source: 'outbox', kind: 'test', to_address: stuckTo, subject: 'Stuck check', body_text: 'body', status: 'sending', attempts: 1, claimed_at: t.knex.raw("now() - interval '20 minutes'") });

    const first = await deliverQueuedEmails(t.knex, flaky, silent);
    expect(first).toEqual({ sent: 0, failed: 1 });
    let retry = await t.knex('email_log').where({ to_address: retryTo }).first();
    expect(retry).toMatchObject({ status: 'failed', attempts: 1, last_error: '451 try again later' });
    const stuck = await t.knex('email_log').where({ to_address: stuckTo }).first();
    expect(stuck).toMatchObject({ status: 'failed', attempts: MAX_ATTEMPTS });
    // Not due yet: the retry waits.
    expect(await deliverQueuedEmails(t.knex, flaky, silent)).toEqual({ sent: 0, failed: 0 });
    await t.knex('email_log').where({ to_address: retryTo }).update({ next_attempt_at: t.knex.raw("now() - interval '1 second'") });
    expect(await deliverQueuedEmails(t.knex, flaky, silent)).toEqual({ sent: 1, failed: 0 });
    retry = await t.knex('email_log').where({ to_address: retryTo }).first();
    expect(retry).toMatchObject({ status: 'sent', attempts: 2 });
    await waitForMail(retryTo, { subject: /Retry check/ });
    expect(await inbox(stuckTo)).toEqual([]);
    real.close();
  });

  it('logs mail sent directly through ctx.mailer', async () => {
    const to = 'direct-log@tests.plumewright.example';
    await t.ctx.mailer.send({ to, subject: 'Reset your Plumewright password', text: 'link' });
    const row = await t.knex('email_log').where({ to_address: to }).first();
    expect(row).toMatchObject({ source: 'direct', kind: 'password-reset', status: 'sent' });
  });
});

describe('routes', () => {
  let operator: TestAgent;
  let operatorB: TestAgent;
  let crew: TestAgent;
  let holderEmail: string;
  beforeAll(async () => {
    const platform = await createCompany(t.knex, 'Plumewright Operations', 'platform');
    const op = await createUser(t.knex, { companyId: platform.id, roles: ['operator'] });
    operator = await signedIn(t.app, op.email, op.password);
    operatorB = await signedIn(appB.app, op.email, op.password);
    const today = todayIn('UTC');
    const s = await scenario('Inverleigh', addDays(today, 30));
    holderEmail = s.holder.email;
    crew = await signedIn(t.app, s.holder.email, s.holder.password);
  });

  it('runs the scan on demand from both apps at once, for operators only', async () => {
    const asOf = todayIn('UTC');
    expect((await crew.post('/api/operator/jobs/run-reminders', { asOf })).status).toBe(403);
    const bad = await operator.post('/api/operator/jobs/run-reminders', { asOf: '30/02/2031' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields.map((f: { field: string }) => f.field)).toEqual(['asOf']);
    const [a, b] = await Promise.all([operator.post('/api/operator/jobs/run-reminders', { asOf }), operatorB.post('/api/operator/jobs/run-reminders', { asOf })]);
    expect([a.status, b.status]).toEqual([200, 200]);
    expect(a.body.reminders + b.body.reminders).toBeGreaterThanOrEqual(1);
    await waitForMail(holderEmail, { subject: /Particulate sampling certificate runs out/ });
    expect(await inbox(holderEmail, /Particulate sampling certificate runs out/)).toHaveLength(1);
  });

  it('shows the member the same reminder in the app, until dismissed', async () => {
    const notices = (await crew.get('/api/notices/mine').expect(200)).body.notices;
    expect(notices).toHaveLength(1);
    expect(notices[0]).toMatchObject({ kind: 'expiry-30', areaId: 'particulate', daysLeft: 30 });
    expect(notices[0].message).toMatch(/^Your Particulate sampling certificate expires on \d{1,2} \w+ \d{4} \(30 days left\)/);
    expect((await operator.post(`/api/notices/${notices[0].id}/dismiss`)).status).toBe(403);
    expect((await crew.post(`/api/notices/${notices[0].id}/dismiss`)).status).toBe(204);
    expect((await crew.get('/api/notices/mine').expect(200)).body.notices).toEqual([]);
  });

  it('lists the e-mail log for operators, paged and filtered', async () => {
    expect((await crew.get('/api/operator/emails')).status).toBe(403);
    const page = (await operator.get('/api/operator/emails?pageSize=5').expect(200)).body;
    expect(page.emails).toHaveLength(5);
    expect(page.total).toBeGreaterThan(5);
    expect(Object.keys(page.emails[0]).sort()).toEqual(['attempts', 'createdAt', 'id', 'kind', 'lastError', 'sentAt', 'status', 'subject', 'to'].sort());
    expect(page.emails[0].id).toBeGreaterThan(page.emails[4].id);
    const mine = (await operator.get(`/api/operator/emails?search=${encodeURIComponent(holderEmail)}`).expect(200)).body;
    expect(mine.emails.map((e: { to: string }) => e.to)).toEqual([holderEmail]);
    expect(mine.emails[0]).toMatchObject({ kind: 'reminder-30', status: 'sent' });
    const failed = (await operator.get('/api/operator/emails?status=failed').expect(200)).body;
    expect(failed.emails.every((e: { status: string }) => e.status === 'failed')).toBe(true);
    expect(failed.total).toBeGreaterThanOrEqual(1);
    expect(page.kinds).toEqual(expect.arrayContaining(['digest', 'reminder-30', 'reminder-7', 'reminder-90']));
    const bad = await operator.get('/api/operator/emails?status=lost');
    expect(bad.status).toBe(400);
  });
});
