import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { createServer, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { Knex } from 'knex';
import Stripe from 'stripe';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createDb } from '../../server/db';
import { freePort } from '../../server/dev/exec';
import { startMailCatcher } from '../../server/dev/services';
import { createStripeFake, type StripeFake } from '../../server/fakes/stripe';
import { QUEUES, startJobs } from '../../server/jobs';
import { issueCertificate } from '../../server/services/exams';
import { MAX_ATTEMPTS } from '../../server/services/email-log';
import { syncContent } from '../../server/services/content-sync';
import { createTestApp } from '../helpers/app';
import { signedIn, TestAgent } from '../helpers/agent';
import { HttpClient, startAppProcess, type AppProcess } from '../helpers/app-process';
import { payCheckout } from '../helpers/billing';
import { createTestDatabase } from '../helpers/db';
import { expectedFor } from '../helpers/expected-leaks';
import { createCompany, createUser, uniqueEmail } from '../helpers/factory';
import { linkIn, waitForMail, type CaughtMail } from '../helpers/mail';

/**
 * Faults with real processes: the app (server/index.ts) runs as its own operating-system process
 * and is killed with SIGKILL in the middle of its work, then started again on the same port and
 * database; the mail server goes away and comes back; two app processes share one database.
 *
 * That a scheduled job runs once with two job workers on one database (each reminder and digest
 * sent once) is shown in tests/api/reminders.test.ts, "two pg-boss workers on one database".
 */

const WEBHOOK_SECRET = 'whsec_plumewright_process_faults';
const APP_KEY = 'sk_test_plumewright_app_process';
const CHECK_KEY = 'sk_test_plumewright_process_checks';

let db: Awaited<ReturnType<typeof createTestDatabase>>;
let knex: Knex;
let appPort: number;
let app: AppProcess;
const apps = new Set<AppProcess>();

let fake: StripeFake;
let fakeServer: Server;
let fakeUrl: string;
/** Stripe as the tests see it (another key than the app's, so the two are told apart). */
let stripe: Stripe;
/** When set, runs once instead of the fake's answer the next time the app asks for a subscription. */
let onAppSubscriptionFetch: ((res: ServerResponse) => Promise<void>) | null = null;

/**
 * Between the payment fake and the app: hands each delivery to every target at once, `copies`
 * times each, and answers the fake with the first failure, or 200 when every copy succeeded.
 */
const gate = { targets: [] as string[], copies: 1, answers: [] as { target: string; status: number }[] };
let gateServer: Server;

async function listenOnLoopback(server: Server) {
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', () => resolve()));
  return `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
}

async function startApp(port = appPort) {
  const started = await startAppProcess({
    databaseUrl: db.url,
    port,
    env: { STRIPE_API_URL: fakeUrl, STRIPE_SECRET_KEY: APP_KEY, STRIPE_WEBHOOK_SECRET: WEBHOOK_SECRET },
  });
  apps.add(started);
  return started;
}

beforeAll(async () => {
  db = await createTestDatabase();
  knex = createDb(db.url, { min: 0, max: 4 });
  await syncContent(knex);

  gateServer = createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on('data', (c: Buffer) => chunks.push(c));
    req.on('end', async () => {
      const body = Buffer.concat(chunks);
      const signature = String(req.headers['stripe-signature'] ?? '');
      const copies = gate.targets.flatMap((target) => Array.from({ length: gate.copies }, () => target));
      const answers = await Promise.all(
        copies.map((target) =>
          fetch(`${target}/api/webhooks/stripe`, { method: 'POST', headers: { 'content-type': 'application/json', 'stripe-signature': signature }, body })
            .then(async (r) => (await r.arrayBuffer(), r.status), () => 502)
            .then((status) => ({ target, status })),
        ),
      );
      gate.answers.push(...answers);
      res.statusCode = answers.find((a) => a.status < 200 || a.status >= 300)?.status ?? (answers.length ? 200 : 502);
      res.end();
    });
  });
  const gateUrl = await listenOnLoopback(gateServer);

  // Retries come quickly here (Stripe spreads its own over days), and keep coming long enough for a restart.
  fake = createStripeFake({ webhookSecret: WEBHOOK_SECRET, webhookUrl: gateUrl, retry: { initialDelayMs: 300, maxDelayMs: 2_000, maxAttempts: 40 } });
  fakeServer = createServer((req, res) => {
    const fromApp = req.headers.authorization === `Bearer ${APP_KEY}`;
    if (onAppSubscriptionFetch && fromApp && req.method === 'GET' && req.url?.startsWith('/v1/subscriptions/sub_')) {
      const act = onAppSubscriptionFetch;
      onAppSubscriptionFetch = null;
      void act(res);
      return;
    }
    fake.app(req, res);
  });
  fakeUrl = await listenOnLoopback(fakeServer);
  fake.publicBaseUrl = fakeUrl;
  stripe = new Stripe(CHECK_KEY, { host: '127.0.0.1', port: Number(new URL(fakeUrl).port), protocol: 'http', maxNetworkRetries: 0 });

  appPort = await freePort();
  app = await startApp();
  gate.targets = [app.url];
}, 90_000);

afterAll(async () => {
  await Promise.all([...apps].map((a) => a.stop()));
  fake?.stop();
  for (const server of [fakeServer, gateServer]) {
    if (!server) continue;
    server.closeAllConnections();
    await new Promise((r) => server.close(r));
  }
  await knex?.destroy();
  await db?.drop();
});

const mirror = (companyId: string) => knex('subscriptions').where({ company_id: companyId }).first();
const eventsOf = (subscriptionId: string, since: number) =>
  [...fake.state.events.values()].filter((r, i) => i >= since && JSON.stringify(r.event.data.object).includes(subscriptionId));

async function inbox(address: string, subject?: RegExp, api = process.env.MAIL_API_URL): Promise<CaughtMail[]> {
  const res = await fetch(`${api}/email?to.address=${encodeURIComponent(address)}`);
  return ((await res.json()) as CaughtMail[]).filter((m) => !subject || subject.test(m.subject));
}

/** Waits for a message in the given catcher's inbox. */
async function mailAt(api: string, address: string, subject: RegExp) {
  let found: CaughtMail | undefined;
  await waitUntil(`a mail to ${address} matching ${subject}`, async () => Boolean((found = (await inbox(address, subject, api)).at(-1))));
  return found!;
}

async function waitUntil(what: string, check: () => Promise<boolean>, timeoutMs = 20_000) {
  const until = Date.now() + timeoutMs;
  while (!(await check())) {
    if (Date.now() > until) throw new Error(`${what} did not happen within ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

/** A company that signed up on the app process and paid for `seats`; its webhooks have landed. */
async function paidCompany(seats: number) {
  const admin = new HttpClient(app.url);
  const adminEmail = uniqueEmail('founder');
  const signup = await admin.post('/api/signup', { companyName: 'Thornbury Flue Gas Testing', adminName: 'Maren Ashgrove', email: adminEmail, password: 'a-long-founder-password', seats, interval: 'month' });
  expect(signup.status, JSON.stringify(signup.body)).toBe(201);
  await admin.csrf();
  await payCheckout(signup.body.checkoutUrl);
  expect(await fake.webhooks.whenIdle(30_000)).toBe(true);
  const companyId = signup.body.me.activeCompanyId as string;
  expect(await mirror(companyId)).toMatchObject({ status: 'active', quantity: seats });
  await waitForMail(adminEmail, { subject: /Payment received/ });
  return { admin, adminEmail, companyId, subscriptionId: (await mirror(companyId)).stripe_subscription_id as string };
}

/** Changes the seat count on the payment service, invoiced at once: subscription updated, invoice paid. */
async function changeSeats(subscriptionId: string, quantity: number) {
  const item = (await stripe.subscriptions.retrieve(subscriptionId)).items.data[0];
  await stripe.subscriptions.update(subscriptionId, { items: [{ id: item.id, quantity }], proration_behavior: 'always_invoice' });
}

/** Each event stored once, processed once, by whichever delivery got there first. */
async function expectProcessedOnce(eventIds: string[]) {
  for (const id of eventIds) {
    const rows = await knex('stripe_events').where({ id });
    expect(rows, id).toHaveLength(1);
    expect(rows[0].processed_at, id).not.toBeNull();
    expect(rows[0].attempts, id).toBe(1);
    expect(rows[0].last_error, id).toBeNull();
  }
}

let company: Awaited<ReturnType<typeof paidCompany>>;

describe('the app process killed while it handles a webhook', () => {
  it("rolls the half-handled event back, and the payment service's retry completes it once on a new process", async () => {
    company = await paidCompany(3);
    const since = fake.state.events.size;

    // The app asks the payment service for the subscription inside the event's transaction: it dies there.
    const killed = new Promise<void>((resolve) => {
      onAppSubscriptionFetch = async (res) => {
        await app.kill();
        res.destroy();
        resolve();
      };
    });
    await changeSeats(company.subscriptionId, 7);
    await Promise.race([killed, new Promise((_, reject) => setTimeout(() => reject(new Error('the app never asked for the subscription')), 20_000))]);

    const events = eventsOf(company.subscriptionId, since);
    const updated = events.find((r) => r.event.type === 'customer.subscription.updated')!;
    const paid = events.find((r) => r.event.type === 'invoice.paid')!;
    expect(updated && paid).toBeTruthy();
    // Stored when it arrived, but nothing of its effect committed.
    await waitUntil('the killed delivery to fail', async () => updated.attempts.length >= 1);
    expect(updated.attempts[0].statusCode).toBe(502);
    expect(await knex('stripe_events').where({ id: updated.event.id }).first()).toMatchObject({ processed_at: null, attempts: 0 });
    expect(await mirror(company.companyId)).toMatchObject({ quantity: 3 });

    app = await startApp();
    gate.targets = [app.url];
    expect(await fake.webhooks.whenIdle(40_000)).toBe(true);

    expect(updated.status).toBe('delivered');
    expect(updated.attempts.length).toBeGreaterThanOrEqual(2);
    expect(updated.attempts.at(-1)!.statusCode).toBe(200);
    await expectProcessedOnce(events.map((r) => r.event.id));
    expect(await mirror(company.companyId)).toMatchObject({ status: 'active', quantity: 7 });
    const synced = await knex('audit_log').where({ company_id: company.companyId, action: 'billing.subscription-synced' });
    expect(synced.filter((a) => a.details.seatsAfter === 7)).toHaveLength(1);

    // One receipt for the seat change, though its event also met a dead process first.
    const invoice = paid.event.data.object as Stripe.Invoice;
    expect(invoice.amount_paid).toBeGreaterThan(0);
    expect(await knex('stripe_invoices').where({ id: invoice.id })).toHaveLength(1);
    await waitForMail(company.adminEmail, { subject: new RegExp(invoice.number!) });
    await new Promise((r) => setTimeout(r, 500));
    expect(await inbox(company.adminEmail, new RegExp(invoice.number!))).toHaveLength(1);

    // The admin's session lives in the database: the new process knows them.
    const billing = await company.admin.get('/api/billing');
    expect(billing.status).toBe(200);
    expect(billing.body.seats.total).toBe(7);
  }, 90_000);
});

describe('the app process killed during a timed exam', () => {
  it('resumes the attempt on a new process with the same deadline and drafts, then grades it', async () => {
    // A crew member holding one of the paid company's seats.
    const member = await createUser(knex, { companyId: company.companyId, roles: ['crew'], name: 'Ivo Pendlebury' });
    await knex('memberships').where({ user_id: member.id, company_id: company.companyId }).update({ seat_status: 'assigned', seat_assigned_at: knex.fn.now() });
    const browser = new HttpClient(app.url);
    await browser.signIn(member.email, member.password);

    const started = await browser.post('/api/exams/flow-moisture/attempts');
    expect(started.status, JSON.stringify(started.body)).toBe(200);
    const attempt = started.body.attempt;
    const drafts = [
      { questionIndex: 0, answers: { [attempt.questions[0].fields[0].key]: '14.2' } },
      { questionIndex: 2, answers: { [attempt.questions[2].fields[0].key]: '0.81' } },
    ];
    for (const d of drafts) expect((await browser.put(`/api/exam-attempts/${attempt.id}/answers`, d)).status).toBe(200);
    const before = await knex('exam_attempts').where({ id: attempt.id }).first();

    await app.kill();
    app = await startApp();
    gate.targets = [app.url];

    // The same cookie on the new process: the session and the attempt are in the database.
    const resumed = await browser.get(`/api/exam-attempts/${attempt.id}`);
    expect(resumed.status).toBe(200);
    expect(resumed.body.attempt).toMatchObject({ status: 'active', startedAt: attempt.startedAt, deadline: attempt.deadline });
    expect(Date.parse(resumed.body.attempt.deadline) - Date.parse(resumed.body.attempt.startedAt)).toBeCloseTo(attempt.timeLimitMinutes * 60_000, -1);
    expect(Date.parse(resumed.body.attempt.serverNow)).toBeGreaterThan(Date.parse(attempt.startedAt));
    expect(resumed.body.attempt.questions.map((q: { answers: unknown }) => q.answers)).toEqual(
      attempt.questions.map((_: unknown, i: number) => drafts.find((d) => d.questionIndex === i)?.answers ?? {}),
    );
    // Starting again does not begin a fresh attempt with a fresh clock: it points at this one.
    const again = await browser.post('/api/exams/flow-moisture/attempts');
    expect(again.status).toBe(409);
    expect(again.body.error).toMatchObject({ code: 'exam_in_progress', activeAttemptId: attempt.id });

    // Finished on the new process with the right answers, worked out from the seeds the server stored.
    for (const q of before.blueprint.questions as { index: number; drillId: string; seed: number }[]) {
      const answers = Object.fromEntries(Object.entries(expectedFor(q.drillId, q.seed)).map(([key, value]) => [key, value.toPrecision(4)]));
      expect((await browser.put(`/api/exam-attempts/${attempt.id}/answers`, { questionIndex: q.index, answers })).status).toBe(200);
    }
    const submitted = await browser.post(`/api/exam-attempts/${attempt.id}/submission`);
    expect(submitted.status, JSON.stringify(submitted.body)).toBe(200);
    expect(submitted.body.attempt).toMatchObject({ status: 'submitted', passed: true, closedBy: 'submission' });
    const after = await knex('exam_attempts').where({ id: attempt.id }).first();
    expect(after.deadline_at.getTime()).toBe(before.deadline_at.getTime());
    expect(after.started_at.getTime()).toBe(before.started_at.getTime());
    expect(await knex('exam_attempts').where({ user_id: member.id })).toHaveLength(1);
    expect(await knex('exam_passes').where({ user_id: member.id })).toHaveLength(1);
  }, 90_000);
});

describe('two app processes on one database', () => {
  it('processes a webhook delivered to both, twice each at the same moment, once', async () => {
    const a = app;
    const b = await startApp(await freePort());
    gate.targets = [a.url, b.url];
    gate.copies = 2;
    gate.answers = [];
    const since = fake.state.events.size;

    await changeSeats(company.subscriptionId, 9);
    expect(await fake.webhooks.whenIdle(30_000)).toBe(true);

    const events = eventsOf(company.subscriptionId, since);
    expect(events.map((r) => r.event.type).sort()).toEqual(['customer.subscription.updated', 'invoice.paid', 'invoice.payment_succeeded']);
    // Every copy was answered 200 (a repeat is acknowledged, not refused), by both processes.
    expect(gate.answers).toHaveLength(events.length * 4);
    expect(gate.answers.every((x) => x.status === 200)).toBe(true);
    expect(new Set(gate.answers.map((x) => x.target))).toEqual(new Set([a.url, b.url]));
    for (const r of events) expect(r.attempts).toHaveLength(1);

    await expectProcessedOnce(events.map((r) => r.event.id));
    expect(await mirror(company.companyId)).toMatchObject({ status: 'active', quantity: 9 });
    const synced = await knex('audit_log').where({ company_id: company.companyId, action: 'billing.subscription-synced' });
    expect(synced.filter((x) => x.details.seatsAfter === 9)).toHaveLength(1);
    const invoice = events.find((r) => r.event.type === 'invoice.paid')!.event.data.object as Stripe.Invoice;
    expect(await knex('stripe_invoices').where({ id: invoice.id })).toHaveLength(1);
    await waitForMail(company.adminEmail, { subject: new RegExp(invoice.number!) });
    await new Promise((r) => setTimeout(r, 500));
    expect(await inbox(company.adminEmail, new RegExp(invoice.number!))).toHaveLength(1);
    for (const p of [a, b]) expect((await fetch(`${p.url}/api/health`)).status).toBe(200);
  }, 90_000);
});

describe('the mail server down', () => {
  it('keeps requests, payments and certificates working, then sends what was waiting once the mail server is back, each message once', async () => {
    const smtpPort = await freePort(); // nothing listens here yet
    const t = await createTestApp({}, { SMTP_PORT: String(smtpPort), STRIPE_API_URL: fakeUrl, STRIPE_SECRET_KEY: 'sk_test_plumewright_mail_down', STRIPE_WEBHOOK_SECRET: WEBHOOK_SECRET });
    const listening = t.app.listen(0, '127.0.0.1');
    await new Promise<void>((resolve) => listening.once('listening', () => resolve()));
    const base = `http://127.0.0.1:${(listening.address() as AddressInfo).port}`;
    const mailDir = fs.mkdtempSync(path.join(os.tmpdir(), 'pw-fault-mail-'));
    let catcher: Awaited<ReturnType<typeof startMailCatcher>> | undefined;
    let jobs: Awaited<ReturnType<typeof startJobs>> | undefined;
    try {
      await syncContent(t.knex);
      const team = await createCompany(t.knex, 'Harrowgate Emission Monitoring');
      const admin = await createUser(t.knex, { companyId: team.id, roles: ['admin', 'manager'] });
      const member = await createUser(t.knex, { companyId: team.id, roles: ['crew'] });
      const adminAgent = await signedIn(t.app, admin.email, admin.password);

      // Asked twice while the mail server is down: only the newer link may ever go out.
      for (let ask = 0; ask < 2; ask++) {
        const reset = await new TestAgent(t.app).post('/api/auth/password-reset', { email: member.email });
        expect(reset.status, JSON.stringify(reset.body)).toBe(202);
      }
      const inviteeEmail = uniqueEmail('invitee');
      const invited = await adminAgent.post('/api/company/invitations', { name: 'Tamsin Roedean', email: inviteeEmail, roles: ['crew'] });
      expect(invited.status, JSON.stringify(invited.body)).toBe(201);
      // The admin is told the invitation did not go out, and can send it again.
      expect(invited.body.invitation).toMatchObject({ state: 'failed', sendError: expect.stringMatching(/ECONNREFUSED/) });

      const [replaced, resetRow] = await t.knex('email_log').where({ to_address: member.email }).orderBy('id');
      expect(replaced).toMatchObject({ source: 'outbox', kind: 'password-reset', status: 'failed', attempts: MAX_ATTEMPTS, last_error: expect.stringMatching(/newer reset link/) });
      expect(resetRow).toMatchObject({ source: 'outbox', kind: 'password-reset', status: 'failed', attempts: 1 });
      expect(resetRow.last_error).toMatch(/ECONNREFUSED/);
      expect(await t.knex('email_log').where({ to_address: inviteeEmail })).toMatchObject([{ kind: 'invitation', status: 'failed' }]);

      // A company with two admins pays; the payment service hands each event to the app twice at once.
      const founder = new HttpClient(base);
      const founderEmail = uniqueEmail('founder');
      const signup = await founder.post('/api/signup', { companyName: 'Saltmarsh Stack Sampling', adminName: 'Perpetua Quillfeather', email: founderEmail, password: 'a-long-founder-password', seats: 2, interval: 'month' });
      expect(signup.status, JSON.stringify(signup.body)).toBe(201);
      const payingId = signup.body.me.activeCompanyId as string;
      const coAdmin = await createUser(t.knex, { companyId: payingId, roles: ['admin'] });
      gate.targets = [base];
      gate.copies = 2;
      gate.answers = [];
      await payCheckout(signup.body.checkoutUrl);
      expect(await fake.webhooks.whenIdle(30_000)).toBe(true);
      // Every delivery was answered 200: the payment went through, whatever the mail server does.
      expect(gate.answers.length).toBeGreaterThanOrEqual(4);
      expect(gate.answers.every((a) => a.status === 200)).toBe(true);
      expect(await t.knex('subscriptions').where({ company_id: payingId }).first()).toMatchObject({ status: 'active', quantity: 2 });
      const invoice = await t.knex('stripe_invoices').where({ company_id: payingId }).first();
      expect(invoice.amount_paid).toBeGreaterThan(0);
      // One receipt per admin waits in the outbox, though its event came twice.
      const receipts = await t.knex('email_log').where({ kind: 'receipt', company_id: payingId }).orderBy('to_address');
      expect(receipts.map((r) => r.to_address)).toEqual([founderEmail, coAdmin.email].sort());
      for (const r of receipts) {
        expect(r).toMatchObject({ source: 'outbox', status: 'failed', attempts: 1, last_error: expect.stringMatching(/ECONNREFUSED/) });
        expect(r.subject).toContain(invoice.number);
      }

      // A crew member's pass becomes a certificate; its e-mail waits in the outbox too.
      const holder = await createUser(t.knex, { companyId: team.id, roles: ['crew'], name: 'Odalys Fenwick-Hale' });
      const [passRow] = await t.knex('exam_passes')
        .insert({ user_id: holder.id, company_id: team.id, area_id: 'gas-analysis', score_pct: 87.5, duration_seconds: 2460, passed_at: new Date() })
        .returning('id');
      const issued = await issueCertificate(t.ctx, passRow.id);
      expect(issued).toMatchObject({ status: 'issued', outcome: 'issued' });
      expect(await t.knex('certificates').where({ number: issued.number }).first()).toMatchObject({ status: 'valid', user_id: holder.id });
      const [certificateMail] = await t.knex('email_log').where({ kind: 'certificate', to_address: holder.email });
      expect(certificateMail).toMatchObject({ source: 'outbox', status: 'failed', attempts: 1, last_error: expect.stringMatching(/ECONNREFUSED/) });
      expect(await t.knex('email_log').where({ kind: 'certificate', to_address: holder.email })).toHaveLength(1);

      catcher = await startMailCatcher({ smtpPort, webPort: await freePort(), mailDir, quiet: true });
      // The retries fall due (five minutes later in real time); the delivery job runs, twice.
      await t.knex('email_log')
        .where({ source: 'outbox', status: 'failed' })
        .where('attempts', '<', MAX_ATTEMPTS)
        .update({ next_attempt_at: t.knex.raw("now() - interval '1 second'") });
      jobs = await startJobs(t.ctx, { schedule: false, pollingIntervalSeconds: 0.5 });
      for (let run = 0; run < 2; run++) {
        const id = (await jobs.boss.send(QUEUES.deliver, {}))!;
        await waitUntil('the delivery job', async () => (await jobs!.boss.getJobById(QUEUES.deliver, id))?.state === 'completed');
      }

      const resetMail = await mailAt(catcher.apiUrl, member.email, /password/i);
      await new Promise((r) => setTimeout(r, 300));
      expect(await inbox(member.email, undefined, catcher.apiUrl)).toHaveLength(1);
      expect(await t.knex('email_log').where({ id: resetRow.id }).first()).toMatchObject({ status: 'sent', attempts: 2, last_error: null });
      expect(await t.knex('email_log').where({ id: replaced.id }).first()).toMatchObject({ status: 'failed', sent_at: null });

      // Each admin's receipt and the holder's certificate notice, once each.
      for (const to of [founderEmail, coAdmin.email]) {
        const receipt = await mailAt(catcher.apiUrl, to, new RegExp(`Payment received.*${invoice.number}`));
        expect(receipt.text).toMatch(/paid up to/);
      }
      const notice = await mailAt(catcher.apiUrl, holder.email, /certificate/i);
      expect(notice.text).toContain(issued.number);
      await new Promise((r) => setTimeout(r, 300));
      for (const to of [founderEmail, coAdmin.email, holder.email]) expect(await inbox(to, undefined, catcher.apiUrl), to).toHaveLength(1);
      for (const row of [...receipts, certificateMail]) {
        expect(await t.knex('email_log').where({ id: row.id }).first(), row.to_address).toMatchObject({ status: 'sent', attempts: 2, last_error: null });
      }
      const token = linkIn(resetMail, /\/reset-password\/[A-Za-z0-9_-]+/).split('/').pop()!;
      expect((await new TestAgent(t.app).post('/api/auth/password-reset/confirm', { token, password: 'a-fresh-password-after-outage' })).status).toBe(204);

      // A failed invitation is not sent late by the sweep: the admin's resend issues a fresh link instead.
      expect(await inbox(inviteeEmail, undefined, catcher.apiUrl)).toEqual([]);
      const resent = await adminAgent.post(`/api/company/invitations/${invited.body.invitation.id}/resend`);
      expect(resent.status).toBe(200);
      expect(resent.body.invitation).toMatchObject({ state: 'pending', sendError: null });
      const invitation = await mailAt(catcher.apiUrl, inviteeEmail, /invited you/);
      const inviteToken = linkIn(invitation, /\/invitations\/[A-Za-z0-9_-]+/).split('/').pop()!;
      expect((await new TestAgent(t.app).post('/api/invitations/lookup', { token: inviteToken })).status).toBe(200);
      await new Promise((r) => setTimeout(r, 300));
      expect(await inbox(inviteeEmail, undefined, catcher.apiUrl)).toHaveLength(1);
    } finally {
      gate.targets = [app.url];
      gate.copies = 1;
      await jobs?.stop();
      await catcher?.stop();
      fs.rmSync(mailDir, { recursive: true, force: true });
      listening.closeAllConnections();
      await new Promise((r) => listening.close(r));
      await t.close();
    }
  }, 90_000);
});
