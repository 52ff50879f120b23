import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import path from 'node:path';
import { DESKTOP, PHONE, SCREENSHOT_DIR, expectAccessible, launchBrowser, openPage, screenshot } from '../helpers/browser';
import { TestAgent } from '../helpers/agent';
import { createCompany, createUser, uniqueEmail } from '../helpers/factory';
import { eventually, payCheckout, startBillingStack, type BillingStack } from '../helpers/billing';

/**
 * The operator's companies page and payment webhook log in the browser, against the app and the
 * payment fake: a company that signed up and paid shows the seats its billing page shows, its
 * subscription history and its events; a failed event's payload reads as text, markup and all.
 */
let stack: BillingStack;
let browser: Browser;
let closeBrowser: () => Promise<void>;
let operator: { email: string; password: string };
let billing: { seats: { total: number; used: number; queued: number } };
const PAID = 'Quarrymoor Stack Analytics';
const WAIT = { timeout: 20_000 };
const PROBE = '<img src="/nowhere.png" data-probe="payload"> & <b>bold</b>';

beforeAll(async () => {
  stack = await startBillingStack();
  const { knex, app } = stack.server;
  ({ browser, close: closeBrowser } = await launchBrowser());

  const founder = new TestAgent(app);
  const signup = await founder.post('/api/signup', {
    companyName: PAID, adminName: 'Perpetua Hollins-Varga', email: uniqueEmail('quarrymoor'), password: 'quarrymoor-founder-5', seats: 3, interval: 'year',
  });
  expect(signup.status, JSON.stringify(signup.body)).toBe(201);
  const companyId = signup.body.me.activeCompanyId as string;
  await founder.csrfToken(true);
  await payCheckout(signup.body.checkoutUrl);
  await stack.drain();
  await eventually(() => knex('subscriptions').where({ company_id: companyId }).first(), (row) => row?.status === 'active');
  await createUser(knex, { companyId, roles: ['crew'], name: 'Anselm Corrie' });
  billing = (await founder.get('/api/billing').expect(200)).body;

  await createCompany(knex, 'Tidewell Emission Labs');
  await createCompany(knex, 'Larkspur Assessment Group', 'auditing');
  const platform = await createCompany(knex, 'Plumewright Operations', 'platform');
  operator = await createUser(knex, { companyId: platform.id, roles: ['operator'], name: 'Ottoline Braddock' });

  // An event the app could not apply, whose payload carries markup that must never render.
  const { stripe_customer_id: customer } = await knex('subscriptions').where({ company_id: companyId }).first('stripe_customer_id');
  const created = new Date(Date.now() - 60_000);
  await knex('stripe_events').insert({
    id: 'evt_operator_console_failed',
    type: 'customer.subscription.updated',
    event_created: created,
    payload: JSON.stringify({ id: 'evt_operator_console_failed', object: 'event', type: 'customer.subscription.updated', created: Math.floor(created.getTime() / 1000), data: { object: { id: 'sub_gone', object: 'subscription', customer, description: PROBE } } }),
    attempts: 3,
    last_error: 'The payment service did not answer in time.',
  });
});
afterAll(async () => {
  await closeBrowser?.();
  await stack?.close();
});

async function signIn(page: Page) {
  await page.goto(`${stack.server.url}/sign-in`);
  await page.getByLabel('E-mail address').fill(operator.email);
  await page.getByLabel('Password', { exact: true }).fill(operator.password);
  await page.getByTestId('sign-in-submit').click();
  await page.getByTestId('dashboard-operator').waitFor(WAIT);
}

/** A drawer is fixed to the viewport, so it is photographed as the viewport, not the whole page. */
async function drawerShot(page: Page, name: string) {
  await page.screenshot({ path: path.join(SCREENSHOT_DIR, `${name}.png`) });
}

/** Nothing loading, nothing sliding in. */
async function settled(page: Page) {
  await page.waitForFunction(() => document.querySelectorAll('[aria-busy="true"], .p-datatable-mask').length === 0, undefined, WAIT);
  await page.waitForFunction(() => document.getAnimations().every((a) => a.playState !== 'running' || a.effect?.getTiming().iterations === Infinity), undefined, WAIT);
}

describe('companies and seats', () => {
  it('lists every company with the seats its billing page shows, sorts, searches, and opens its history', { timeout: 180_000 }, async () => {
    const { page, context, problems } = await openPage(browser, DESKTOP);
    await signIn(page);
    await page.goto(`${stack.server.url}/operate`);
    await page.getByTestId('open-webhooks').waitFor(WAIT);
    await screenshot(page, 'operate-console-desktop-light');
    await page.getByTestId('open-companies').click();
    await page.getByTestId('companies-table').waitFor(WAIT);
    await settled(page);
    const firstColumn = () => page.locator('[data-testid="companies-table"] tbody tr td:first-child button').allTextContents();
    expect((await firstColumn()).map((t) => t.trim())).toEqual(['Larkspur Assessment Group', 'Plumewright Operations', PAID, 'Tidewell Emission Labs']);
    expect(await page.getByTestId(`seats-${PAID}`).textContent()).toBe(`${billing.seats.used} / ${billing.seats.total}`);
    expect(billing.seats.total).toBe(3);
    const paidRow = page.locator('tr', { has: page.getByTestId(`company-${PAID}`) });
    expect(await paidRow.textContent()).toMatch(/Testing company.*Active.*Yearly/);

    // Members, largest first: the paid company has its admin and a crew member.
    const membersHeader = page.getByRole('columnheader', { name: 'Members' });
    await Promise.all([page.waitForResponse((r) => r.url().includes('sort=members&order=asc')), membersHeader.click()]);
    await settled(page);
    await Promise.all([page.waitForResponse((r) => r.url().includes('sort=members&order=desc')), membersHeader.click()]);
    await settled(page);
    expect((await firstColumn())[0].trim()).toBe(PAID);

    await Promise.all([page.waitForResponse((r) => r.url().includes('q=tidewell')), page.getByLabel('Name or payment-service id').fill('tidewell')]);
    await settled(page);
    expect((await firstColumn()).map((t) => t.trim())).toEqual(['Tidewell Emission Labs']);
    await Promise.all([
      page.waitForResponse((r) => r.url().includes('/api/operator/company-subscriptions?') && !r.url().includes('q=')),
      page.getByLabel('Name or payment-service id').fill(''),
    ]);
    await settled(page);
    await screenshot(page, 'operate-companies-desktop-light');

    await page.getByTestId(`company-${PAID}`).click();
    const detail = page.getByTestId('company-detail');
    await detail.waitFor(WAIT);
    await settled(page);
    expect(await page.getByTestId('detail-seats').textContent()).toContain(`${billing.seats.used} of ${billing.seats.total}`);
    expect(await page.getByTestId('company-changes').textContent()).toContain('Signed up asking for 3 seats, yearly');
    expect(await detail.textContent()).toContain('customer.subscription.updated');
    await expectAccessible(page, 'company details drawer');
    await drawerShot(page, 'operate-companies-drawer-desktop-light');

    await page.getByRole('link', { name: `Every payment event for ${PAID}` }).click();
    await page.getByTestId('webhook-company-scope').waitFor(WAIT);
    await settled(page);
    const types = await page.locator('[data-testid="webhook-log-table"] tbody tr td:first-child code').allTextContents();
    expect(types.length).toBeGreaterThan(2);
    expect(types).toContain('invoice.paid');
    expect(problems, 'console errors').toEqual([]);
    await context.close();
  });
});

describe('payment webhooks', () => {
  it('shows a failed event, filters to it, and shows its payload as text', { timeout: 180_000 }, async () => {
    const { page, context, problems } = await openPage(browser, DESKTOP);
    await signIn(page);
    await page.goto(`${stack.server.url}/operate/webhooks`);
    await page.getByTestId('webhook-log-table').waitFor(WAIT);
    await settled(page);
    expect(await page.getByTestId('webhook-failed-note').textContent()).toContain('1 event has not been applied');
    expect(await page.getByTestId('event-state-evt_operator_console_failed').textContent()).toContain('Failed');
    await screenshot(page, 'operate-webhooks-desktop-light');

    await Promise.all([page.waitForResponse((r) => r.url().includes('status=failed')), page.getByRole('button', { name: 'Show failed events' }).click()]);
    await settled(page);
    const rows = page.locator('[data-testid="webhook-log-table"] tbody tr');
    expect(await rows.count()).toBe(1);
    expect(await rows.first().textContent()).toContain(PAID);
    expect(await rows.first().textContent()).toContain('The payment service did not answer in time.');

    await page.getByTestId('view-event-evt_operator_console_failed').click();
    const payload = page.getByTestId('payment-event-payload');
    await payload.waitFor(WAIT);
    await settled(page);
    expect(await payload.textContent()).toContain(JSON.stringify(PROBE).slice(1, -1));
    expect(await page.locator('[data-probe]').count(), 'markup from the payload rendered').toBe(0);
    expect(await page.locator('[data-testid="payment-event-payload"] b').count()).toBe(0);
    await expectAccessible(page, 'payment event drawer');
    await drawerShot(page, 'operate-webhooks-drawer-desktop-light');
    expect(problems, 'console errors').toEqual([]);
    await context.close();
  });
});

describe('both pages at phone width and in the dark scheme', () => {
  for (const [label, viewport, scheme] of [['phone-light', PHONE, 'light'], ['phone-dark', PHONE, 'dark'], ['desktop-dark', DESKTOP, 'dark']] as const) {
    it(`${label}: the tables and drawers show and pass axe`, { timeout: 180_000 }, async () => {
      const { page, context, problems } = await openPage(browser, viewport, scheme);
      await signIn(page);
      await page.goto(`${stack.server.url}/operate`);
      await page.getByTestId('open-webhooks').waitFor(WAIT);
      await screenshot(page, `operate-console-${label}`);
      await page.goto(`${stack.server.url}/operate/companies`);
      await page.getByTestId('companies-table').waitFor(WAIT);
      await settled(page);
      await expectAccessible(page, `companies ${label}`);
      await screenshot(page, `operate-companies-${label}`);
      await page.getByTestId(`company-${PAID}`).click();
      await page.getByTestId('company-detail').waitFor(WAIT);
      await settled(page);
      await drawerShot(page, `operate-companies-drawer-${label}`);

      await page.goto(`${stack.server.url}/operate/webhooks`);
      await page.getByTestId('webhook-log-table').waitFor(WAIT);
      await settled(page);
      await expectAccessible(page, `webhooks ${label}`);
      await screenshot(page, `operate-webhooks-${label}`);
      await page.getByTestId('view-event-evt_operator_console_failed').click();
      await page.getByTestId('payment-event-payload').waitFor(WAIT);
      await settled(page);
      await expectAccessible(page, `payment event drawer ${label}`);
      await drawerShot(page, `operate-webhooks-drawer-${label}`);
      expect(problems, 'console errors').toEqual([]);
      await context.close();
    });
  }
});
