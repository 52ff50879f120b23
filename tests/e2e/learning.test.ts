/**
 * Journey 3 (PRODUCT.md): a crew member reads a lesson, works a drill with one deliberate early
 * mistake and sees carried-forward credit, then passes an exam and downloads the certificate PDF.
 * A second member sits an exam with the keyboard alone. The right answers are worked out here on
 * the server side, from the seeds the server stored, through the drill templates' own solve().
 */
import fs from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { DESKTOP, PHONE, expectAccessible, launchBrowser, openPage, screenshot } from '../helpers/browser';
import { startTestServer, type RunningTestServer } from '../helpers/server';
import { createCompany, createUser } from '../helpers/factory';
import { getDrillTemplate } from '../../server/engine/drills';
import { formatNumber } from '../../src/components/calculators/format';
import { syncContent } from '../../server/services/content-sync';

const WAIT = { timeout: 20_000 };

let server: RunningTestServer;
let browser: Browser;
let closeBrowser: () => Promise<void>;
let companyId: string;

beforeAll(async () => {
  server = await startTestServer();
  await syncContent(server.knex);
  ({ browser, close: closeBrowser } = await launchBrowser());
  companyId = (await createCompany(server.knex, 'Kittiwake Stack Services')).id;
});
afterAll(async () => {
  await closeBrowser?.();
  await server?.close();
});

async function signIn(page: Page, email: string, password: string) {
  await page.goto(`${server.url}/sign-in`);
  await page.getByLabel('E-mail address').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByTestId('sign-in-submit').click();
  await page.getByTestId('dashboard-crew').waitFor(WAIT);
}

/** The member's newest practice attempt of a drill, solved from its stored seed. */
async function latestDrill(userId: string, drillId: string) {
  const row = await server.knex('drill_attempts').where({ user_id: userId, drill_id: drillId, mode: 'practice' }).orderBy('created_at', 'desc').first();
  const template = getDrillTemplate(drillId)!;
  const scenario = template.generate(Number(row.seed));
  return { template, scenario, expected: template.solve(scenario).expected };
}

/** The exact answers of every question of the member's running exam, from the stored snapshot. */
async function examAnswers(attemptId: string) {
  const row = await server.knex('exam_attempts').where({ id: attemptId }).first();
  return (row.blueprint.questions as { index: number; drillId: string; seed: number }[]).map((q) => {
    const template = getDrillTemplate(q.drillId)!;
    const expected = template.solve(template.generate(q.seed)).expected;
    return template.fields.map((f) => ({ key: f.key, text: expected[f.key].toPrecision(6) }));
  });
}

const attemptIdOf = (page: Page) => new URL(page.url()).pathname.split('/').pop()!;

describe('journey 3: lesson, drill with carried-forward credit, exam pass, certificate', () => {
  it('takes a crew member from a lesson to a downloaded certificate', async () => {
    const member = await createUser(server.knex, { companyId, roles: ['crew'], seat: true, name: 'Ines Marrowby' });
    const { page, context, problems } = await openPage(browser, DESKTOP);
    await signIn(page, member.email, member.password);

    // Read a lesson and finish it
    await page.getByTestId('nav-learn').click();
    await page.getByTestId('lesson-link-moisture-train').click();
    await page.getByTestId('lesson-title').waitFor(WAIT);
    expect(await page.getByTestId('lesson-body').textContent()).toMatch(/moisture/i);
    await page.getByTestId('finish-lesson').click();
    await page.getByTestId('lesson-finished').waitFor(WAIT);

    // Its drill, with one deliberate early mistake and the right method after it
    await page.getByTestId('drill-link-moisture-train').click();
    await page.getByTestId('drill-submit').waitFor(WAIT);
    await screenshot(page, 'drill-runner-desktop');
    await expectAccessible(page, 'drill runner');
    const { template, scenario, expected } = await latestDrill(member.id, 'moisture-train');
    const [first, second, third] = template.fields.map((f) => f.key);
    const wrong = Number((expected[first] * 1.3).toPrecision(6));
    const right = Number(expected[second].toPrecision(6));
    const carried = template.recompute(third, { [first]: wrong, [second]: right }, scenario)!;
    // a malformed number first: refused beside its field, the typed text kept
    await page.getByTestId(`answer-${first}`).fill('12..5');
    await page.getByTestId('drill-submit').click();
    await page.getByTestId(`answer-error-${first}`).waitFor(WAIT);
    expect(await page.getByTestId(`answer-${first}`).inputValue()).toBe('12..5');
    await page.getByTestId(`answer-${first}`).fill(String(wrong));
    await page.getByTestId(`answer-${second}`).fill(String(right));
    await page.getByTestId(`answer-${third}`).fill(carried.toPrecision(6));
    await page.getByTestId('drill-submit').click();
    await page.getByTestId('drill-result').waitFor(WAIT);
    expect(await page.getByTestId(`verdict-${first}`).getAttribute('data-verdict')).toBe('incorrect');
    expect(await page.getByTestId(`verdict-${second}`).getAttribute('data-verdict')).toBe('correct');
    expect(await page.getByTestId(`verdict-${third}`).getAttribute('data-verdict')).toBe('carried-forward');
    expect(await page.getByTestId(`verdict-${third}`).textContent()).toMatch(/method credit/i);
    // the expected value of the early step shows once marked, and the worked solution with it
    expect(await page.getByTestId(`expected-${first}`).textContent()).toContain(formatNumber(expected[first]).text);
    expect(await page.locator('[data-step]').count()).toBeGreaterThan(2);
    await screenshot(page, 'drill-result-desktop');
    await expectAccessible(page, 'drill result');

    // An exam, passed with the right answers typed through the page
    await page.getByTestId('nav-exams').click();
    await page.getByTestId('start-exam-ambient-conversions').click();
    await page.getByTestId('confirm-start-exam').click();
    await page.getByTestId('exam-countdown').waitFor(WAIT);
    const answers = await examAnswers(attemptIdOf(page));
    await screenshot(page, 'exam-runner-desktop');
    await expectAccessible(page, 'exam runner');
    for (const [index, fields] of answers.entries()) {
      await page.getByTestId(`exam-question-${index + 1}`).waitFor(WAIT);
      for (const field of fields) await page.getByTestId(`answer-${field.key}`).fill(field.text);
      if (index < answers.length - 1) await page.getByTestId('exam-next').click();
    }
    await page.locator('[data-testid="exam-save-state"][data-state="saved"]').waitFor(WAIT);
    await page.getByTestId('exam-review-last').click();
    await page.getByTestId('exam-submit').click();
    await page.getByTestId('exam-results').waitFor(WAIT);
    expect(await page.getByTestId('exam-outcome').textContent()).toMatch(/passed/i);
    expect(await page.getByTestId('exam-outcome').textContent()).not.toMatch(/not passed/i);
    await screenshot(page, 'exam-results-desktop');
    await expectAccessible(page, 'exam results');

    // The certificate PDF
    const number = (await page.getByTestId('certificate-number').textContent())!.trim();
    const stored = await server.knex('certificates').where({ user_id: member.id, area_id: 'ambient-conversions' }).first();
    expect(number).toBe(stored.number);
    const [download] = await Promise.all([page.waitForEvent('download', WAIT), page.getByTestId('download-certificate').click()]);
    const file = await download.path();
    const bytes = fs.readFileSync(file!);
    expect(bytes.subarray(0, 5).toString()).toBe('%PDF-');
    expect(bytes.equals(stored.pdf)).toBe(true);

    // and the progress page charts it all
    await page.goto(`${server.url}/progress`);
    await page.getByTestId('progress-drills').waitFor(WAIT);
    expect(await page.getByTestId('progress-drill-count').textContent()).toBe('1');
    expect(await page.getByTestId('progress-exams').textContent()).toMatch(/Passed/);
    await screenshot(page, 'progress-desktop');
    await expectAccessible(page, 'progress');
    expect(problems.filter((p) => !/status of 400/.test(p)), 'console errors or CSP violations').toEqual([]);
    await context.close();
  });

  it('keeps an exam through a reload and says so when the time runs out (phone size)', async () => {
    const member = await createUser(server.knex, { companyId, roles: ['crew'], seat: true });
    const { page, context } = await openPage(browser, PHONE, 'dark');
    await signIn(page, member.email, member.password);
    await page.goto(`${server.url}/exams`);
    await page.getByTestId('start-exam-emission-rates').click();
    await page.getByTestId('confirm-start-exam').click();
    await page.getByTestId('exam-countdown').waitFor(WAIT);
    const attemptId = attemptIdOf(page);
    const field = page.locator('[data-testid^="answer-"]').first();
    await field.fill('1.2e-7');
    await page.locator('[data-testid="exam-save-state"][data-state="saved"]').waitFor(WAIT);
    await page.getByTestId('exam-goto-3').click();
    await page.getByTestId('exam-question-3').waitFor(WAIT);

    // a crash and a fresh start: same question, the answer typed before is there
    await page.reload();
    await page.getByTestId('exam-question-3').waitFor(WAIT);
    await page.getByTestId('exam-goto-1').click();
    await page.getByTestId('exam-question-1').waitFor(WAIT);
    expect(await page.locator('[data-testid^="answer-"]').first().inputValue()).toBe('1.2e-7');
    await screenshot(page, 'exam-runner-phone-dark');

    // the server's deadline passes (moved into the past in the database): the page says so and shows the marking
    await server.knex('exam_attempts').where({ id: attemptId }).update({
      started_at: server.knex.raw("clock_timestamp() - interval '2 hours'"),
      deadline_at: server.knex.raw("clock_timestamp() + interval '2 seconds'"),
    });
    await page.reload();
    await page.getByTestId('exam-results').waitFor(WAIT);
    expect(await page.getByTestId('exam-results').textContent()).toMatch(/time ran out/i);
    expect((await server.knex('exam_attempts').where({ id: attemptId }).first()).status).toBe('expired');
    await screenshot(page, 'exam-time-up-phone-dark');
    await context.close();
  });
});

describe('the exam runner by keyboard alone', () => {
  /** Presses Tab until the element with this test id has focus; fails if it is not reachable. */
  async function tabTo(page: Page, testId: string, limit = 80) {
    for (let i = 0; i < limit; i++) {
      if (await page.evaluate((id) => document.activeElement?.getAttribute('data-testid') === id, testId)) return;
      await page.keyboard.press('Tab');
    }
    throw new Error(`${testId} was not reached with Tab`);
  }

  it('signs in, starts, answers every question, submits and reads the result without a pointer', async () => {
    const member = await createUser(server.knex, { companyId, roles: ['crew'], seat: true });
    const { page, context } = await openPage(browser, DESKTOP);
    await page.goto(`${server.url}/sign-in`);
    await page.getByLabel('E-mail address').waitFor(WAIT);
    await page.keyboard.press('Tab');
    for (let i = 0; i < 20 && !(await page.evaluate(() => (document.activeElement as HTMLInputElement | null)?.type === 'email')); i++) await page.keyboard.press('Tab');
    await page.keyboard.type(member.email);
    for (let i = 0; i < 5 && !(await page.evaluate(() => (document.activeElement as HTMLInputElement | null)?.type === 'password')); i++) await page.keyboard.press('Tab');
    await page.keyboard.type(member.password);
    await page.keyboard.press('Enter');
    await page.getByTestId('dashboard-crew').waitFor(WAIT);

    await tabTo(page, 'nav-exams');
    await page.keyboard.press('Enter');
    await page.getByTestId('start-exam-monitor-audits').waitFor(WAIT);
    await tabTo(page, 'start-exam-monitor-audits');
    await page.keyboard.press('Enter');
    // the dialog puts focus on its confirming button
    await page.getByTestId('confirm-start-exam').waitFor(WAIT);
    await page.waitForFunction(() => document.activeElement?.getAttribute('data-testid') === 'confirm-start-exam', null, WAIT);
    await page.keyboard.press('Enter');
    await page.getByTestId('exam-countdown').waitFor(WAIT);
    await expectAccessible(page, 'exam runner (keyboard)');

    const answers = await examAnswers(attemptIdOf(page));
    for (const [index, fields] of answers.entries()) {
      await page.getByTestId(`exam-question-${index + 1}`).waitFor(WAIT);
      for (const field of fields) {
        await tabTo(page, `answer-${field.key}`);
        await page.keyboard.type(field.text);
      }
      // Enter in an answer box moves on to the next question
      if (index < answers.length - 1) await page.keyboard.press('Enter');
    }
    await page.locator('[data-testid="exam-save-state"][data-state="saved"]').waitFor(WAIT);
    await tabTo(page, 'exam-review-last');
    await page.keyboard.press('Enter');
    await page.waitForFunction(() => document.activeElement?.getAttribute('data-testid') === 'exam-submit', null, WAIT);
    await page.keyboard.press('Enter');
    await page.getByTestId('exam-results').waitFor(WAIT);
    // focus lands on the outcome, so a screen reader hears it first
    await page.waitForFunction(() => document.activeElement?.id === 'exam-results-title', null, WAIT);
    expect(await page.getByTestId('exam-outcome').textContent()).toMatch(/^\s*Passed/);
    // the per-question feedback opens from the keyboard too
    await page.keyboard.press('Tab');
    await screenshot(page, 'exam-results-keyboard-desktop');
    expect(await server.knex('exam_passes').where({ user_id: member.id })).toHaveLength(1);
    await context.close();
  });
});
