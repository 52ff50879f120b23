/**
 * Journey 5 (PRODUCT.md): a manager sees a certificate running out within 90 days on the readiness
 * matrix, the reminder e-mail arrives (the operator runs the scan), the manager assigns the
 * refresher exam, the member sees it with the in-app notice, renews (an exam pass turned into a
 * certificate by the real issuer), and the matrix cell turns current. Also the job check, saved
 * under a job name. Screenshots and axe-core on the matrix, the job check, assignments and the
 * e-mail log, at desktop and phone widths.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { DESKTOP, PHONE, expectAccessible, launchBrowser, openPage, screenshot } from '../helpers/browser';
import { startTestServer, type RunningTestServer } from '../helpers/server';
import { createCompany, createUser } from '../helpers/factory';
import { insertCertificate, setCrew } from '../helpers/certificates';
import { waitForMail } from '../helpers/mail';
import { syncContent } from '../../server/services/content-sync';
import { issueCertificateForPass } from '../../server/services/certificates';
import { addDays, todayIn } from '../../server/services/readiness';

const WAIT = { timeout: 20_000 };
const ZONE = 'America/Chicago';

let server: RunningTestServer;
let browser: Browser;
let closeBrowser: () => Promise<void>;
let companyId: string;
let today: string;
const people: Record<'manager' | 'member' | 'steady' | 'operator', { id: string; email: string; password: string; name: string }> = {} as never;

beforeAll(async () => {
  server = await startTestServer();
  await syncContent(server.knex);
  ({ browser, close: closeBrowser } = await launchBrowser());
  companyId = (await createCompany(server.knex, 'Larchmont Stack Testing')).id;
  await server.knex('companies').where({ id: companyId }).update({ time_zone: ZONE });
  today = todayIn(ZONE);
  const platform = await createCompany(server.knex, 'Plumewright Operations', 'platform');
  people.manager = await createUser(server.knex, { companyId, roles: ['manager'], seat: true, name: 'Halvard Quist' });
  people.member = await createUser(server.knex, { companyId, roles: ['crew'], seat: true, name: 'Odile Brannock' });
  people.steady = await createUser(server.knex, { companyId, roles: ['crew'], seat: true, name: 'Bertil Ossory' });
  people.operator = await createUser(server.knex, { companyId: platform.id, roles: ['operator'], seat: true, name: 'Ines Operator' });
  await setCrew(server.knex, people.member.id, companyId, 'North crew');
  await setCrew(server.knex, people.steady.id, companyId, 'North crew');
  // Odile's particulate certificate runs out in 45 days; Bertil's flow certificate has years left.
  await insertCertificate(server.knex, { userId: people.member.id, companyId, area: 'particulate', issuedOn: addDays(today, -1050), expiresOn: addDays(today, 45) });
  await insertCertificate(server.knex, { userId: people.member.id, companyId, area: 'flow-moisture', issuedOn: addDays(today, -200), expiresOn: addDays(today, 900) });
  await insertCertificate(server.knex, { userId: people.steady.id, companyId, area: 'flow-moisture', issuedOn: addDays(today, -100), expiresOn: addDays(today, 1000) });
  await insertCertificate(server.knex, { userId: people.steady.id, companyId, area: 'particulate', issuedOn: addDays(today, -1200), expiresOn: addDays(today, -30) });
});
afterAll(async () => {
  await closeBrowser?.();
  await server?.close();
});

async function signIn(page: Page, person: { email: string; password: string }) {
  await page.goto(`${server.url}/sign-in`);
  await page.getByLabel('E-mail address').fill(person.email);
  await page.getByLabel('Password', { exact: true }).fill(person.password);
  await page.getByTestId('sign-in-submit').click();
  await page.waitForURL((url) => !url.pathname.startsWith('/sign-in'), WAIT);
}

const cell = (page: Page, memberId: string, area: string) => page.getByTestId(`cell-${memberId}-${area}`);

describe('journey 5: a certificate running out is caught, refreshed and renewed', () => {
  // One manager and one member session carried through the steps; each step is its own test so a
  // slow machine's timeout repeats one step, not the whole journey.
  let manager: Awaited<ReturnType<typeof openPage>>;
  let member: Awaited<ReturnType<typeof openPage>>;
  const STEP = 150_000;
  afterAll(async () => {
    await member?.context.close();
    await manager?.context.close();
  });

  it('1. the manager sees a certificate running out within 90 days', async () => {
    manager ??= await openPage(browser, DESKTOP);
    await signIn(manager.page, people.manager);
    await manager.page.goto(`${server.url}/crew`);
    await manager.page.getByTestId('readiness-table').waitFor(WAIT);
    const particulate = cell(manager.page, people.member.id, 'particulate');
    await particulate.waitFor(WAIT);
    expect(await particulate.getAttribute('data-status')).toBe('expiring');
    expect(await particulate.innerText()).toMatch(/Renew soon/);
    expect(await cell(manager.page, people.steady.id, 'particulate').innerText()).toMatch(/Lapsed/);
    expect(await manager.page.getByText('Today is').first().innerText()).toMatch(/America\/Chicago/);
    await manager.page.getByTestId('chart-share').waitFor(WAIT);
    await screenshot(manager.page, 'readiness-matrix-desktop');
    await expectAccessible(manager.page, 'readiness matrix');
  }, STEP);

  it('2. the reminder scan runs and the e-mails arrive, once', async () => {
    const operator = await openPage(browser, DESKTOP);
    await signIn(operator.page, people.operator);
    await operator.page.goto(`${server.url}/operate/emails`);
    await operator.page.getByTestId('run-scan').waitFor(WAIT);
    await operator.page.getByTestId('run-scan').click();
    await operator.page.getByTestId('scan-result').waitFor(WAIT);
    expect(await operator.page.getByTestId('scan-result').innerText()).toMatch(/1 company looked at/);
    await operator.page.getByTestId('email-log-table').getByText(people.member.email).first().waitFor(WAIT);
    await screenshot(operator.page, 'email-log-desktop');
    await expectAccessible(operator.page, 'e-mail log');
    expect(operator.problems).toEqual([]);
    await operator.context.close();
    const toManager = await waitForMail(people.manager.email, { subject: /Odile Brannock: Particulate sampling certificate runs out/ });
    expect(toManager.text).toContain('(in 45 days)');
    const toMember = await waitForMail(people.member.email, { subject: /Your Particulate sampling certificate runs out/ });
    expect(toMember.text).toMatch(/renew/i);
    const inbox = await fetch(`${process.env.MAIL_API_URL}/email?to.address=${encodeURIComponent(people.member.email)}`).then((r) => r.json() as Promise<{ subject: string }[]>);
    expect(inbox.filter((m) => /certificate runs out/.test(m.subject))).toHaveLength(1);
  }, STEP);

  it('3. the manager picks the member on the matrix and assigns the refresher exam', async () => {
    await manager.page.goto(`${server.url}/crew`);
    await cell(manager.page, people.member.id, 'particulate').waitFor(WAIT);
    await manager.page.getByRole('row', { name: /Odile Brannock/ }).getByRole('checkbox').check();
    await manager.page.getByTestId('assign-selected').click();
    await manager.page.getByTestId('assignments-heading').waitFor(WAIT);
    await manager.page.getByTestId(`picked-${people.member.id}`).waitFor(WAIT);
    await manager.page.getByRole('button', { name: 'Exam', exact: true }).click();
    await manager.page.getByLabel('Exam in').click();
    await manager.page.getByRole('option', { name: 'Particulate sampling' }).click();
    await manager.page.getByTestId('assign-submit').click();
    await manager.page.getByTestId('assign-done').waitFor(WAIT);
    expect(await manager.page.getByTestId('assign-done').innerText()).toMatch(/Assigned to 1 member/);
    const assignmentRow = manager.page.getByTestId('assignments-table').getByRole('row', { name: /Odile Brannock/ }).first();
    await assignmentRow.waitFor(WAIT);
    expect(await assignmentRow.innerText()).toMatch(/Exam: Particulate sampling[\s\S]*To do/);
    await screenshot(manager.page, 'readiness-assignments-desktop');
    await expectAccessible(manager.page, 'assignments');
  }, STEP);

  it('4. the member sees the assignment and the notice on the dashboard', async () => {
    member ??= await openPage(browser, PHONE);
    await signIn(member.page, people.member);
    const assigned = member.page.getByTestId('assigned-to-you');
    await assigned.waitFor(WAIT);
    await assigned.getByText('Exam: Particulate sampling exam').first().waitFor(WAIT);
    expect(await assigned.innerText()).toMatch(/To do/);
    expect(await member.page.getByTestId('notice-particulate').innerText()).toMatch(/Your Particulate sampling certificate expires on .* \(45 days left\)/);
    await screenshot(member.page, 'readiness-member-dashboard-phone');
    expect(member.problems).toEqual([]);
  }, STEP);

  it('5. the member renews, and the cell turns current for the manager', async () => {
    const [pass] = await server.knex('exam_passes').insert({ user_id: people.member.id, company_id: companyId, area_id: 'particulate', score_pct: 91 }).returning('id');
    const outcome = await issueCertificateForPass(server.ctx, pass.id);
    expect(outcome.outcome).toBe('renewed');

    await manager.page.goto(`${server.url}/crew`);
    const particulate = cell(manager.page, people.member.id, 'particulate');
    await particulate.waitFor(WAIT);
    expect(await particulate.getAttribute('data-status')).toBe('current');
    expect(await particulate.innerText()).toMatch(/Current/);
    await screenshot(manager.page, 'readiness-matrix-renewed-desktop');
    await manager.page.goto(`${server.url}/crew/assignments`);
    await manager.page.getByTestId('assignments-table').getByRole('row', { name: /Odile Brannock/ }).first().getByText('Done', { exact: true }).waitFor(WAIT);
    await member.page.reload();
    await member.page.getByTestId('assigned-to-you').getByText('Done', { exact: true }).first().waitFor(WAIT);
    expect(await member.page.getByTestId('notice-particulate').count()).toBe(0);
    expect(manager.problems).toEqual([]);
  }, STEP);
});

describe('job check', () => {
  for (const [size, viewport] of [['desktop', DESKTOP], ['phone', PHONE]] as const) {
    it(`answers who can go and saves the check (${size})`, async () => {
      const { page, context, problems } = await openPage(browser, viewport, size === 'phone' ? 'dark' : 'light');
      await signIn(page, people.manager);
      await page.goto(`${server.url}/crew/job-check`);
      await page.getByTestId('job-check-heading').waitFor(WAIT);
      await page.getByLabel('Flow and moisture').check();
      await page.getByLabel('Particulate sampling').check();
      await page.getByLabel('Job date').fill(addDays(today, 20));
      await page.getByLabel('Job name (to save the check)').fill(`Quarry kiln survey ${size}`);
      await page.getByTestId('job-check-save').click();
      await page.getByTestId('job-check-notice').waitFor(WAIT);
      const qualified = page.getByTestId('job-group-qualified');
      // Odile renewed in the journey above; Bertil's particulate certificate has lapsed.
      expect(await qualified.innerText()).toMatch(/Odile Brannock/);
      expect(await page.getByTestId('job-group-notQualified').innerText()).toMatch(/Bertil Ossory[\s\S]*Particulate sampling:[\s\S]*Lapsed/);
      await page.getByTestId(`saved-check-Quarry kiln survey ${size}`).waitFor(WAIT);
      await screenshot(page, `readiness-job-check-${size}`);
      await expectAccessible(page, `job check (${size})`);

      // A date in the past is refused with the reason beside the date.
      await page.getByLabel('Job date').fill(addDays(today, -3));
      await page.getByTestId('job-check-run').click();
      await page.getByText(/is in the past/).waitFor(WAIT);
      expect(problems.filter((p) => !/status of 400/.test(p))).toEqual([]);
      await context.close();
    });
  }

  it('keeps the matrix usable at phone width in the dark scheme', async () => {
    const { page, context, problems } = await openPage(browser, PHONE, 'dark');
    await signIn(page, people.manager);
    await page.goto(`${server.url}/crew`);
    await page.getByTestId('readiness-table').waitFor(WAIT);
    await cell(page, people.steady.id, 'flow-moisture').waitFor(WAIT);
    await screenshot(page, 'readiness-matrix-phone-dark');
    await expectAccessible(page, 'readiness matrix (phone, dark)');
    // Filtering by status from the keyboard: the summary figures are buttons.
    await page.getByTestId('summary-expired').focus();
    await page.keyboard.press('Enter');
    await page.getByText('1 member match').waitFor(WAIT);
    expect(problems).toEqual([]);
    await context.close();
  });
});
