import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { DESKTOP, PHONE, expectAccessible, launchBrowser, openPage, screenshot } from '../helpers/browser';
import { TestAgent } from '../helpers/agent';
import { uniqueEmail } from '../helpers/factory';
import { linkIn, waitForMail } from '../helpers/mail';
import { eventually, startBillingStack, type BillingStack } from '../helpers/billing';

/**
 * Journeys 1, 2 and 6 of the product brief, in a real browser against the app and the payment fake:
 * sign up and pay; upload a roster, accept an invitation and land with a seat; try to go below the
 * seats in use, cancel, and keep access until the paid period ends.
 */
let stack: BillingStack;
let browser: Browser;
let closeBrowser: () => Promise<void>;
let admin: { page: Page; context: BrowserContext; problems: string[] };
const adminEmail = uniqueEmail('thistlegate-admin');
const crewEmails = [uniqueEmail('odile'), uniqueEmail('bram'), uniqueEmail('cass')];
let crewPage: Page;

const WAIT = { timeout: 20_000 };

beforeAll(async () => {
  stack = await startBillingStack();
  ({ browser, close: closeBrowser } = await launchBrowser());
  admin = await openPage(browser, DESKTOP);
});
afterAll(async () => {
  await closeBrowser?.();
  await stack?.close();
});

async function payOnFakePage(page: Page, card: string) {
  await page.getByLabel('Card number').waitFor(WAIT);
  await page.getByLabel('Card number').fill(card);
  await page.getByLabel('Expiry (MM / YY)').fill('12 / 39');
  await page.getByLabel('CVC').fill('123');
  await page.getByLabel('Name on card').fill('Marguerite Osei-Lindqvist');
  await page.getByRole('button', { name: /^Pay .* and subscribe$/ }).click();
}

describe('journey 1: a new company signs up, pays, and sees its seats', () => {
  it('signs up, is declined once, pays, and returns to its seats', { timeout: 300_000 }, async () => {
    const { page } = admin;
    await page.goto(`${stack.server.url}/signup`);
    await page.getByTestId('order-total').waitFor(WAIT);
    await expectAccessible(page, 'sign-up');
    await page.getByLabel('Company name').fill('Thistlegate Emissions Lab');
    await page.getByLabel('Your name').fill('Marguerite Osei-Lindqvist');
    await page.getByLabel('Work e-mail address').fill(adminEmail);
    await page.getByLabel('Password').fill('thistlegate-founder-1');
    await page.locator('#signup-seats').fill('3');
    await page.getByRole('button', { name: 'Monthly' }).click();
    await page.getByLabel('Company name').click();
    expect(await page.getByTestId('order-total').textContent()).toContain('$54.00');
    await screenshot(page, 'billing-signup-desktop');
    await page.getByTestId('signup-submit').click();

    await page.waitForURL(/\/pay\/cs_/, WAIT);
    expect(await page.locator('#total').textContent()).toBe('$54.00');
    await payOnFakePage(page, '4000 0000 0000 0002');
    await page.getByText('Your card was declined.').waitFor(WAIT);
    await screenshot(page, 'billing-payment-declined');
    await payOnFakePage(page, '4242 4242 4242 4242');

    await page.waitForURL(/\/billing\/return\?session_id=cs_/, WAIT);
    await page.getByTestId('billing-return-ready').waitFor(WAIT);
    expect(await page.getByTestId('seats-total').textContent()).toBe('3');
    await screenshot(page, 'billing-return-ready');
    await expectAccessible(page, 'billing return');
    expect(admin.problems.filter((p) => !/status of 40[0-9]/.test(p)), 'console errors').toEqual([]);
  });
});

describe('journey 2: roster upload, invitation e-mail, acceptance with a seat', () => {
  it('shows every bad row, imports a good roster, and the invited crew member lands with a seat', { timeout: 300_000 }, async () => {
    const { page } = admin;
    await page.goto(`${stack.server.url}/company?tab=add`);
    await page.getByTestId('roster-upload').waitFor(WAIT);
    await expectAccessible(page, 'company: add people');
    expect(await page.getByTestId('roster-template').getAttribute('href')).toBe('/api/company/roster/template');

    const bad = ['name,email,roles,crew', 'Odile Farrant,odile-at-nowhere,crew,North', 'Bram Ketteridge,bram@x.example,pilot,North', ''].join('\n');
    await page.getByTestId('roster-input').setInputFiles({ name: 'first-try.csv', mimeType: 'text/csv', buffer: Buffer.from(bad) });
    await page.getByTestId('roster-errors').waitFor(WAIT);
    const errors = await page.getByTestId('roster-errors').textContent();
    expect(errors).toMatch(/Row 2: email/);
    expect(errors).toMatch(/Row 3: roles has "pilot"/);
    expect(await page.getByTestId('roster-import').isDisabled()).toBe(true);
    await screenshot(page, 'billing-roster-errors');

    const good = [
      'name,email,roles,crew',
      `Odile Farrant,${crewEmails[0]},crew,North crew`,
      `Bram Ketteridge,${crewEmails[1]},crew; manager,North crew`,
      `Cass Ybarra-Lowe,${crewEmails[2]},crew,South crew`,
    ].join('\r\n');
    await page.getByTestId('roster-input').setInputFiles({ name: 'crew.csv', mimeType: 'text/csv', buffer: Buffer.from(good) });
    await page.getByTestId('roster-summary').getByText('3 to invite').waitFor(WAIT);
    await page.getByTestId('roster-import').click();
    await page.getByTestId('roster-done').waitFor(WAIT);
    expect(await page.getByTestId('roster-done').textContent()).toContain('3 invitations sent');
    await screenshot(page, 'billing-roster-imported');

    // The crew member reads the e-mail and opens the link on a phone.
    const mail = await waitForMail(crewEmails[0], { subject: /invited you/, timeoutMs: 20_000 });
    const link = linkIn(mail, /http:\/\/\S+\/invitations\/[A-Za-z0-9_-]+/);
    const phone = await openPage(browser, PHONE);
    crewPage = phone.page;
    await crewPage.goto(link.replace(/^http:\/\/[^/]+/, stack.server.url));
    await crewPage.getByTestId('accept-form').waitFor(WAIT);
    expect(await crewPage.getByTestId('accept-email').textContent()).toBe(crewEmails[0]);
    expect(await crewPage.getByLabel('Your name').inputValue()).toBe('Odile Farrant');
    await expectAccessible(crewPage, 'accept invitation');
    await crewPage.getByLabel('Password', { exact: true }).fill('odile-on-the-stack-1');
    await crewPage.getByLabel('Repeat password').fill('odile-on-the-stack-1');
    await screenshot(crewPage, 'billing-accept-phone');
    await crewPage.getByTestId('accept-submit').click();
    await crewPage.getByTestId('dashboard-crew').waitFor(WAIT);
    const seat = crewPage.getByTestId('my-seat');
    await seat.waitFor(WAIT);
    expect(await seat.getAttribute('data-seat')).toBe('assigned');
    expect(await seat.textContent()).toContain('You hold a seat at Thistlegate Emissions Lab');
    await screenshot(crewPage, 'billing-crew-dashboard-seat-phone');

    // The same link cannot be used twice, and says what to do instead.
    const again = await openPage(browser, PHONE);
    await again.page.goto(link.replace(/^http:\/\/[^/]+/, stack.server.url));
    await again.page.getByTestId('accept-problem').waitFor(WAIT);
    expect(await again.page.getByTestId('accept-problem').textContent()).toMatch(/already used[\s\S]*ask your company admin to resend/i);
    await again.context.close();

    // A second crew member accepts through the same public API the page uses.
    const second = await waitForMail(crewEmails[1], { subject: /invited you/, timeoutMs: 20_000 });
    const token = linkIn(second, /\/invitations\/[A-Za-z0-9_-]+/).split('/').pop()!;
    const res = await new TestAgent(stack.server.app).post('/api/invitations/accept', { token, password: 'bram-on-the-stack-1' });
    expect(res.body.seat).toBe('assigned');

    await page.goto(`${stack.server.url}/company`);
    await page.getByTestId(`seat-${crewEmails[0]}`).waitFor(WAIT);
    expect(await page.getByTestId('seats-used').first().textContent()).toBe('2');
    await expectAccessible(page, 'company: members');
    await screenshot(page, 'billing-company-members');
  });
});

describe('journey 6: below the seats in use is refused; cancelling keeps access to the period end', () => {
  it('refuses 1 seat with 2 in use, cancels at period end, and ends the seats when the period is over', { timeout: 300_000 }, async () => {
    const { page } = admin;
    await page.goto(`${stack.server.url}/company/billing`);
    await page.getByTestId('seats-input').waitFor(WAIT);
    await page.getByTestId('invoices-table').getByText('Paid').first().waitFor(WAIT);
    await expectAccessible(page, 'billing');

    await page.locator('#billing-seats-input').fill('1');
    await page.getByTestId('seats-save').click();
    const refusal = page.getByTestId('seats-error');
    await refusal.waitFor(WAIT);
    expect(await refusal.textContent()).toContain('2 seats are in use; choose 2 or more');
    await screenshot(page, 'billing-seats-refused');

    await page.getByTestId('cancel-button').click();
    await page.getByTestId('cancel-confirm').click();
    await page.getByTestId('plan-notice').waitFor(WAIT);
    expect(await page.getByTestId('plan-status').textContent()).toMatch(/^Ends /);
    expect(await page.getByTestId('plan-period').textContent()).toMatch(/keeps its seats until/);
    expect(await page.getByTestId('seats-paid').textContent()).toBe('3');
    await screenshot(page, 'billing-cancelled-pending');

    // Until the period ends, the crew keep training with their seats.
    await crewPage.reload();
    await crewPage.getByTestId('my-seat').waitFor(WAIT);
    expect(await crewPage.getByTestId('my-seat').getAttribute('data-seat')).toBe('assigned');

    // A month later the payment service ends the subscription.
    await stack.advanceClock(32 * 86_400);
    // On a busy machine the "subscription ended" webhook can take a while; the page shows it once it has landed.
    const ended = await eventually(
      async () => (await stack.server.knex('subscriptions as s').join('companies as c', 'c.id', 's.company_id').where('c.name', 'Thistlegate Emissions Lab').first('s.status'))?.status,
      (status) => status === 'canceled',
      60_000,
    );
    expect(ended).toBe('canceled');
    await page.reload();
    await page.getByRole('heading', { name: 'Your plan has ended' }).waitFor(WAIT);
    await screenshot(page, 'billing-plan-ended');
    await crewPage.reload();
    await crewPage.getByTestId('my-seat').waitFor(WAIT);
    expect(await crewPage.getByTestId('my-seat').getAttribute('data-seat')).toBe('queued');
    expect(await crewPage.getByTestId('my-seat').textContent()).toMatch(/number \d in line/);
  });
});
