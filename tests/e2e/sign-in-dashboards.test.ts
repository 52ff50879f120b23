import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { DESKTOP, PHONE, expectAccessible, launchBrowser, openPage, screenshot } from '../helpers/browser';
import { startTestServer, type RunningTestServer } from '../helpers/server';
import { createCompany, createUser } from '../helpers/factory';
import { linkIn, waitForMail } from '../helpers/mail';
import type { Role } from '../../shared/roles';

let server: RunningTestServer;
let browser: Browser;
let closeBrowser: () => Promise<void>;
const people = new Map<Role, { email: string; password: string; name: string }>();

beforeAll(async () => {
  server = await startTestServer();
  ({ browser, close: closeBrowser } = await launchBrowser());
  const company = await createCompany(server.knex, 'Ospreyfield Stack Testing');
  const firm = await createCompany(server.knex, 'Tern Hollow Assessors', 'auditing');
  const platform = await createCompany(server.knex, 'Plumewright Operations', 'platform');
  const where: Record<Role, string> = { admin: company.id, manager: company.id, crew: company.id, auditor: firm.id, operator: platform.id };
  for (const role of Object.keys(where) as Role[]) {
    people.set(role, await createUser(server.knex, { companyId: where[role], roles: [role], name: `Tess ${role[0].toUpperCase()}${role.slice(1)}wright` }));
  }
});
afterAll(async () => {
  await closeBrowser?.();
  await server?.close();
});

async function signIn(page: import('playwright-core').Page, email: string, password: string) {
  await page.goto(`${server.url}/sign-in`);
  await page.getByLabel('E-mail address').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByTestId('sign-in-submit').click();
}

describe('journey: each role signs in and sees its own dashboard', () => {
  for (const role of ['crew', 'manager', 'admin', 'auditor', 'operator'] as Role[]) {
    it(`${role}`, async () => {
      const person = people.get(role)!;
      for (const [size, viewport] of [['desktop', DESKTOP], ['phone', PHONE]] as const) {
        const { page, context, problems } = await openPage(browser, viewport);
        await signIn(page, person.email, person.password);
        await page.getByTestId(`dashboard-${role}`).waitFor({ timeout: 20_000 });
        for (const other of ['crew', 'manager', 'admin', 'auditor', 'operator'].filter((r) => r !== role)) {
          expect(await page.getByTestId(`dashboard-${other}`).count(), `${role} sees no ${other} dashboard`).toBe(0);
        }
        expect(await page.getByTestId('footer-disclaimer').textContent()).toMatch(/does not replace the method text/);
        await screenshot(page, `dashboard-${role}-${size}`);
        if (size === 'desktop') await expectAccessible(page, `${role} dashboard`);
        expect(problems, 'console errors or CSP violations').toEqual([]);
        await context.close();
      }
    });
  }

  it('refuses a wrong password without saying which part was wrong', async () => {
    const { page, context } = await openPage(browser);
    await signIn(page, people.get('crew')!.email, 'not the right one');
    const error = page.getByTestId('sign-in-error');
    await error.waitFor({ timeout: 20_000 });
    expect(await error.textContent()).not.toMatch(/password is wrong|no such e-?mail|unknown e-?mail/i);
    await screenshot(page, 'sign-in-refused-desktop');
    await expectAccessible(page, 'sign-in');
    await context.close();
  });

  it('resets a forgotten password through the e-mailed link', async () => {
    const person = await createUser(server.knex, { companyId: (await createCompany(server.knex)).id, roles: ['crew'] });
    const { page, context } = await openPage(browser, PHONE);
    await page.goto(`${server.url}/forgot-password`);
    await page.getByLabel('E-mail address').fill(person.email);
    await page.getByRole('button', { name: /send|link/i }).click();
    await page.getByTestId('reset-requested').waitFor({ timeout: 20_000 });
    const link = linkIn(await waitForMail(person.email, { subject: /reset/i }), /http:\/\/\S+\/reset-password\/[A-Za-z0-9_-]+/);
    await page.goto(link.replace(/^http:\/\/[^/]+/, server.url));
    await page.getByLabel('New password', { exact: true }).fill('a-fresh-password-42');
    await page.getByLabel('Repeat new password').fill('a-fresh-password-42');
    await page.getByRole('button', { name: 'Set new password' }).click();
    await page.getByTestId('reset-done').waitFor({ timeout: 20_000 });
    await screenshot(page, 'password-reset-done-phone');
    await signIn(page, person.email, 'a-fresh-password-42');
    await page.getByTestId('dashboard-crew').waitFor({ timeout: 20_000 });
    await context.close();
  });
});
