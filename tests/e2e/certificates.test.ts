import fs from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { DESKTOP, PHONE, expectAccessible, launchBrowser, openPage, screenshot } from '../helpers/browser';
import { startTestServer, type RunningTestServer } from '../helpers/server';
import { createCompany, createUser } from '../helpers/factory';
import { syncContent } from '../../server/services/content-sync';
import { issueCertificateForPass } from '../../server/services/certificates';

/**
 * Journey 4 of PRODUCT.md: an auditor types a certificate number and sees it is valid; uploads the
 * PDF and sees it is authentic; uploads a modified copy and sees it is not. The PDF is the one the
 * crew member downloads from their certificates page.
 */
let server: RunningTestServer;
let browser: Browser;
let closeBrowser: () => Promise<void>;
let holder: { email: string; password: string; name: string };
let auditor: { email: string; password: string; name: string };
let number: string;

beforeAll(async () => {
  server = await startTestServer();
  ({ browser, close: closeBrowser } = await launchBrowser());
  await syncContent(server.knex);
  const company = await createCompany(server.knex, 'Corvid Ridge Stack Testing');
  const firm = await createCompany(server.knex, 'Sallowmere Assessors', 'auditing');
  holder = await createUser(server.knex, { companyId: company.id, roles: ['crew'], name: 'Elowen Darrach-Okafor' });
  auditor = await createUser(server.knex, { companyId: firm.id, roles: ['auditor'], name: 'Thaddeus Pennick' });
  const [pass] = await server.knex('exam_passes')
    .insert({ user_id: (await server.knex('users').where({ email: holder.email }).first()).id, company_id: company.id, area_id: 'gas-analysis', score_pct: 90, duration_seconds: 2400, passed_at: new Date() })
    .returning('id');
  number = (await issueCertificateForPass(server.ctx, pass.id)).certificate!.number;
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
  await page.getByRole('heading', { level: 2 }).first().waitFor({ timeout: 20_000 });
}

describe('journey 4: an auditor checks a certificate number and its PDF', () => {
  let pdf: Buffer;

  it('the holder downloads the certificate PDF from their certificates page', async () => {
    const { page, context, problems } = await openPage(browser, DESKTOP);
    await signIn(page, holder.email, holder.password);
    await page.goto(`${server.url}/certificates`);
    const card = page.getByTestId(`certificate-${number}`);
    await card.waitFor({ timeout: 20_000 });
    expect(await card.textContent()).toContain('Instrumental gas analysis');
    await screenshot(page, 'certificates-mine-desktop');
    await expectAccessible(page, 'my certificates');
    const [download] = await Promise.all([page.waitForEvent('download', { timeout: 20_000 }), card.getByRole('link', { name: /^Download PDF: / }).click()]);
    pdf = fs.readFileSync((await download.path())!);
    expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    expect(download.suggestedFilename()).toBe(`plumewright-certificate-${number}.pdf`);
    expect(problems, 'console errors or CSP violations').toEqual([]);
    await context.close();
  });

  it('types the number (as read over the phone) and sees it is valid', async () => {
    const { page, context, problems } = await openPage(browser, DESKTOP);
    await signIn(page, auditor.email, auditor.password);
    await page.goto(`${server.url}/audit`);
    await page.getByTestId('verify-input').waitFor({ timeout: 20_000 });
    await page.getByTestId('verify-input').fill(number.toLowerCase().replaceAll('-', ' '));
    await page.getByTestId('verify-submit').click();
    const result = page.getByTestId('verify-result');
    await result.waitFor({ timeout: 20_000 });
    expect(await result.getAttribute('data-status')).toBe('valid');
    expect(await result.textContent()).toContain('Valid');
    expect(await page.getByTestId('verify-holder').textContent()).toBe('Elowen Darrach-Okafor');
    expect(await result.textContent()).not.toMatch(/@|Corvid Ridge/);
    await screenshot(page, 'audit-check-valid-desktop');
    await expectAccessible(page, 'audit single check');
    expect(problems, 'console errors or CSP violations').toEqual([]);
    await context.close();
  });

  it('uploads the PDF and sees it is authentic, then a copy with one byte changed and sees it is not', async () => {
    const { page, context, problems } = await openPage(browser, DESKTOP);
    await signIn(page, auditor.email, auditor.password);
    await page.goto(`${server.url}/audit/file`);
    const input = page.getByTestId('pdf-input');
    await input.waitFor({ state: 'attached', timeout: 20_000 });

    await input.setInputFiles({ name: 'certificate.pdf', mimeType: 'application/pdf', buffer: pdf });
    const verdict = page.getByTestId('pdf-result');
    await verdict.waitFor({ timeout: 20_000 });
    expect(await verdict.getAttribute('data-authentic')).toBe('true');
    expect(await verdict.textContent()).toContain('Authentic');
    expect(await verdict.textContent()).toContain(number);
    await screenshot(page, 'audit-pdf-authentic-desktop');
    await expectAccessible(page, 'audit PDF authenticity');

    const modified = Buffer.from(pdf);
    modified[Math.floor(modified.length / 2)] ^= 0x20;
    await input.setInputFiles({ name: 'certificate-edited.pdf', mimeType: 'application/pdf', buffer: modified });
    await page.locator('[data-testid=pdf-result][data-authentic=false]').waitFor({ timeout: 20_000 });
    expect(await verdict.textContent()).toContain('Not authentic');
    expect(await verdict.textContent()).not.toContain(number);
    await screenshot(page, 'audit-pdf-not-authentic-desktop');
    expect(problems, 'console errors or CSP violations').toEqual([]);
    await context.close();
  });

  it('anyone can check the number on the public page, on a phone, without signing in', async () => {
    const { page, context, problems } = await openPage(browser, PHONE, 'dark');
    await page.goto(`${server.url}/verify/${number}`);
    const result = page.getByTestId('verify-result');
    await result.waitFor({ timeout: 20_000 });
    expect(await result.getAttribute('data-status')).toBe('valid');
    expect(await page.getByTestId('verify-caution').textContent()).toContain(
      'This page confirms a training record on Plumewright; it does not replace the method text, agency requirements, accreditation or licensed professional judgement.',
    );
    await screenshot(page, 'verify-public-phone-dark');
    await expectAccessible(page, 'public verification');
    expect(problems, 'console errors or CSP violations').toEqual([]);
    await context.close();
  });
});
