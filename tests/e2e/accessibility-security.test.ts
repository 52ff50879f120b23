/**
 * Every main page of every role, signed in as that role, at 1280 px: axe-core finds no serious or
 * critical violation in the light scheme and again after the system switches to dark, and no page
 * trips the Content Security Policy. Then the cookie flags: the session and CSRF cookies as the
 * browser holds them after sign-in, and the same app configured for TLS (SECURE_COOKIES=true
 * behind a proxy) marking both Secure.
 */
import crypto from 'node:crypto';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Locator, Page } from 'playwright-core';
import { DESKTOP, expectAccessible, launchBrowser, openPage, type WatchedPage } from '../helpers/browser';
import { TestAgent, signedIn } from '../helpers/agent';
import { createCompany, createUser, uniqueEmail } from '../helpers/factory';
import { insertCertificate, setCrew } from '../helpers/certificates';
import { eventually, payCheckout, startBillingStack, type BillingStack } from '../helpers/billing';
import { createApp } from '../../server/app';
import { loadConfig } from '../../server/config';
import { syncContent } from '../../server/services/content-sync';
import { issueCertificateForPass } from '../../server/services/certificates';
import { addDays, todayIn } from '../../server/services/readiness';

const WAIT = { timeout: 20_000 };

type Person = { id: string; email: string; password: string; name: string };
type RoleName = 'crew' | 'manager' | 'admin' | 'auditor' | 'operator';

let stack: BillingStack;
let browser: Browser;
let closeBrowser: () => Promise<void>;
const people = {} as Record<RoleName, Person>;
let certificateNumber: string;
let lessonId: string;

const url = (path: string) => `${stack.server.url}${path}`;

beforeAll(async () => {
  stack = await startBillingStack();
  const { knex } = stack.server;
  await syncContent(knex);
  ({ browser, close: closeBrowser } = await launchBrowser());

  // A paying company, signed up the way a new customer does, so billing shows a live subscription.
  const founder = new TestAgent(stack.server.app);
  const adminEmail = uniqueEmail('wrenfield-admin');
  const signup = await founder.post('/api/signup', {
    companyName: 'Wrenfield Flue Analytics', adminName: 'Maelis Ortbrand', email: adminEmail, password: 'wrenfield-founder-77', seats: 4, interval: 'month',
  });
  expect(signup.status, JSON.stringify(signup.body)).toBe(201);
  const companyId = signup.body.me.activeCompanyId as string;
  await payCheckout(signup.body.checkoutUrl);
  await stack.drain();
  await eventually(() => knex('subscriptions').where({ company_id: companyId }).first(), (row) => row?.status === 'active');
  const adminRow = await knex('users').where({ email: adminEmail }).first('id', 'name');
  people.admin = { id: adminRow.id, email: adminEmail, password: 'wrenfield-founder-77', name: adminRow.name };

  people.manager = await createUser(knex, { companyId, roles: ['manager'], name: 'Corentin Halloway' });
  people.crew = await createUser(knex, { companyId, roles: ['crew'], name: 'Ysolde Pennarth' });
  const colleague = await createUser(knex, { companyId, roles: ['crew'], name: 'Baptiste Ommaney' });
  const firm = await createCompany(knex, 'Fallowdeep Compliance Review', 'auditing');
  people.auditor = await createUser(knex, { companyId: firm.id, roles: ['auditor'], name: 'Henrike Vasterling' });
  const platform = await createCompany(knex, 'Plumewright Operations', 'platform');
  people.operator = await createUser(knex, { companyId: platform.id, roles: ['operator'], name: 'Auberon Kestle' });
  await setCrew(knex, people.crew.id, companyId, 'Stack crew A');
  await setCrew(knex, colleague.id, companyId, 'Stack crew A');

  // Every readiness status on the matrix: current, expiring, expired and none.
  const today = todayIn('UTC');
  const [pass] = await knex('exam_passes')
    .insert({ user_id: people.crew.id, company_id: companyId, area_id: 'gas-analysis', score_pct: 88, duration_seconds: 2600, passed_at: new Date() })
    .returning('id');
  certificateNumber = (await issueCertificateForPass(stack.server.ctx, pass.id)).certificate!.number;
  await insertCertificate(knex, { userId: people.crew.id, companyId, area: 'particulate', issuedOn: addDays(today, -1040), expiresOn: addDays(today, 40) });
  await insertCertificate(knex, { userId: colleague.id, companyId, area: 'flow-moisture', issuedOn: addDays(today, -1200), expiresOn: addDays(today, -20) });
  lessonId = (await knex('lessons').where({ slug: 'moisture-train' }).first('id')).id;

  // What the roles' pages list: seats, an auditor grant, an invitation, a saved job check, an assignment.
  const admin = await signedIn(stack.server.app, people.admin.email, people.admin.password);
  for (const member of [people.crew, colleague]) {
    const seat = await admin.post(`/api/company/members/${member.id}/seat`, {});
    expect(seat.status, JSON.stringify(seat.body)).toBe(200);
  }
  const grant = await admin.post('/api/company/auditor-grants', { email: people.auditor.email, scope: 'firm' });
  expect(grant.status, JSON.stringify(grant.body)).toBe(201);
  const invited = await admin.post('/api/company/invitations', { name: 'Leofric Dunsany-Hale', email: uniqueEmail('leofric'), roles: ['crew'] });
  expect(invited.status, JSON.stringify(invited.body)).toBe(201);
  const manager = await signedIn(stack.server.app, people.manager.email, people.manager.password);
  const check = await manager.post('/api/job-checks', { name: 'Kiln 3 relative accuracy audit', date: addDays(today, 60), areas: ['gas-analysis', 'particulate'] });
  expect(check.status, JSON.stringify(check.body)).toBeLessThan(300);
  const assigned = await manager.post('/api/assignments', { memberIds: [people.crew.id], kind: 'drill', drillId: 'moisture-train', dueOn: addDays(today, 14), note: 'Before the kiln job' });
  expect(assigned.status, JSON.stringify(assigned.body)).toBeLessThan(300);
});

afterAll(async () => {
  await closeBrowser?.();
  await stack?.close();
});

/**
 * Records Content Security Policy violations: the securitypolicyviolation event, reported from the
 * page through a binding (bindings and init scripts arrive over the debugging protocol, so the
 * policy under test stays whole), and any console message that names the policy.
 */
async function watchCsp(watched: WatchedPage): Promise<string[]> {
  const violations: string[] = [];
  await watched.context.exposeBinding('pwCspViolation', (_source, text: string) => {
    violations.push(text);
  });
  await watched.context.addInitScript(() => {
    document.addEventListener('securitypolicyviolation', (event) => {
      const report = (window as unknown as { pwCspViolation: (text: string) => void }).pwCspViolation;
      report(`${event.effectiveDirective} blocked ${event.blockedURI || 'an inline source'} at ${event.sourceFile || location.pathname}:${event.lineNumber}`);
    });
  });
  watched.page.on('console', (message) => {
    if (/content.security.policy/i.test(message.text())) violations.push(`console ${message.type()}: ${message.text()}`);
  });
  return violations;
}

interface RoleBrowser extends WatchedPage {
  csp: string[];
}

async function openRole(person?: Person): Promise<RoleBrowser> {
  const watched = await openPage(browser, DESKTOP, 'light');
  const csp = await watchCsp(watched);
  if (person) {
    await watched.page.goto(url('/sign-in'));
    await watched.page.getByLabel('E-mail address').fill(person.email);
    await watched.page.getByLabel('Password', { exact: true }).fill(person.password);
    await watched.page.getByTestId('sign-in-submit').click();
    await watched.page.waitForURL((u) => !u.pathname.startsWith('/sign-in'), WAIT);
  }
  return { ...watched, csp };
}

interface MainPage {
  name: string;
  path: () => string;
  /** Visible once the page shows its content, not its loading state. */
  ready: (page: Page) => Locator;
  /** Brings the page to the state worth checking (a result shown, a notice up). */
  then?: (page: Page) => Promise<void>;
  /** The browser's own log line for an answer the page provokes on purpose. */
  expectedConsole?: RegExp;
}

/** Loading panels and busy regions have gone, fonts are in, and no colour is mid-transition. */
async function settled(page: Page) {
  await page.waitForFunction(() => document.querySelectorAll('[aria-busy="true"]').length === 0, undefined, WAIT);
  await page.evaluate(() => document.fonts.ready.then(() => undefined));
  await page.waitForFunction(() => document.getAnimations().every((a) => !(a instanceof CSSTransition) || a.playState !== 'running'), undefined, WAIT);
}

/**
 * Segmented choices (PrimeVue's SelectButton): axe checks the labels' text contrast but not whether
 * the picked option can be told apart. Each picked chip must stand 3:1 from its track (WCAG 1.4.11)
 * and every label 4.5:1 from what is behind it, picked or not.
 */
async function expectSegmentedChoicesReadable(page: Page, label: string) {
  const problems = await page.evaluate(() => {
    const parse = (value: string) => {
      const m = value.match(/^rgba?\((\d+(?:\.\d+)?),? (\d+(?:\.\d+)?),? (\d+(?:\.\d+)?)(?:,? \/? ?(\d*\.?\d+))?\)$/);
      if (!m) throw new Error(`unreadable colour ${value}`);
      return { rgb: [Number(m[1]), Number(m[2]), Number(m[3])], alpha: m[4] === undefined ? 1 : Number(m[4]) };
    };
    /** The colour actually painted behind an element: its own background over its ancestors'. */
    const ground = (el: Element | null): number[] => {
      const layers: { rgb: number[]; alpha: number }[] = [];
      for (let at = el; at; at = at.parentElement) {
        const layer = parse(getComputedStyle(at).backgroundColor);
        if (layer.alpha > 0) layers.push(layer);
        if (layer.alpha >= 1) break;
      }
      return layers.reverse().reduce((below, layer) => below.map((c, i) => layer.rgb[i] * layer.alpha + c * (1 - layer.alpha)), [255, 255, 255]);
    };
    const luminance = (rgb: number[]) => {
      const [r, g, b] = rgb.map((c) => {
        const s = c / 255;
        return s <= 0.03928 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
      });
      return 0.2126 * r + 0.7152 * g + 0.0722 * b;
    };
    const ratio = (a: number[], b: number[]) => {
      const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
      return (hi + 0.05) / (lo + 0.05);
    };
    const found: string[] = [];
    for (const option of Array.from(document.querySelectorAll('.p-togglebutton'))) {
      const content = option.querySelector('.p-togglebutton-content') ?? option;
      const name = (option.textContent ?? '').trim();
      const text = parse(getComputedStyle(content.querySelector('.p-togglebutton-label') ?? content).color).rgb;
      const behind = ground(content);
      const textRatio = ratio(text, behind);
      if (textRatio < 4.5) found.push(`"${name}" label ${textRatio.toFixed(2)}:1`);
      if (option.classList.contains('p-togglebutton-checked')) {
        const chipRatio = ratio(behind, ground(option));
        if (chipRatio < 3) found.push(`picked "${name}" stands ${chipRatio.toFixed(2)}:1 from its track`);
      }
    }
    return found;
  });
  expect(problems, `segmented choices on ${label}`).toEqual([]);
}

async function setScheme(page: Page, scheme: 'light' | 'dark') {
  await page.emulateMedia({ colorScheme: scheme });
  // The app follows the system scheme until a person picks one, by the class on <html>.
  await page.waitForFunction((dark) => document.documentElement.classList.contains('pw-dark') === dark, scheme === 'dark', WAIT);
}

/** Loads the page, then runs axe in light and in dark, and asserts no CSP violation or console error on the way. */
function checkPages(role: string, person: () => Person | undefined, pages: MainPage[]) {
  describe(`${role} pages`, () => {
    let view: RoleBrowser;
    beforeAll(async () => {
      view = await openRole(person());
    });
    afterAll(async () => {
      await view?.context.close();
    });

    for (const main of pages) {
      it(`${main.name}: no serious or critical axe violation, light and dark; no CSP violation`, async () => {
        const { page } = view;
        view.csp.length = 0;
        view.problems.length = 0;
        await setScheme(page, 'light');
        await page.goto(url(main.path()));
        await main.ready(page).first().waitFor(WAIT);
        await main.then?.(page);
        await settled(page);
        await expectAccessible(page, `${role} ${main.name} (light)`);
        await expectSegmentedChoicesReadable(page, `${role} ${main.name} (light)`);
        await setScheme(page, 'dark');
        await settled(page);
        await expectAccessible(page, `${role} ${main.name} (dark)`);
        await expectSegmentedChoicesReadable(page, `${role} ${main.name} (dark)`);
        await setScheme(page, 'light');
        expect(view.csp, `CSP violations on ${role} ${main.name}`).toEqual([]);
        expect(view.problems.filter((p) => !main.expectedConsole?.test(p)), `console errors on ${role} ${main.name}`).toEqual([]);
      });
    }
  });
}

const byTestId = (id: string) => (page: Page) => page.getByTestId(id);

checkPages('crew member', () => people.crew, [
  { name: 'dashboard', path: () => '/', ready: byTestId('dashboard-crew') },
  { name: 'courses', path: () => '/learn', ready: byTestId('lesson-link-moisture-train') },
  { name: 'a lesson', path: () => `/learn/${lessonId}`, ready: byTestId('lesson-body') },
  { name: 'drills', path: () => '/drills', ready: byTestId('start-drill-moisture-train') },
  { name: 'a drill', path: () => '/drills/moisture-train', ready: byTestId('drill-submit') },
  { name: 'exams', path: () => '/exams', ready: byTestId('exam-gas-analysis') },
  { name: 'progress', path: () => '/progress', ready: byTestId('area-progress') },
  { name: 'calculators', path: () => '/calculators', ready: byTestId('area-calculators') },
  { name: 'a calculator', path: () => '/calculators/stack-flow', ready: byTestId('calculate') },
  { name: 'my certificates', path: () => '/certificates', ready: (page) => page.getByTestId(`certificate-${certificateNumber}`) },
  { name: 'account', path: () => '/account', ready: byTestId('account-name') },
]);

checkPages('manager', () => people.manager, [
  { name: 'dashboard', path: () => '/', ready: byTestId('dashboard-manager') },
  { name: 'readiness matrix', path: () => '/crew', ready: byTestId('readiness-table') },
  {
    name: 'job check',
    path: () => '/crew/job-check',
    ready: byTestId('saved-check-Kiln 3 relative accuracy audit'),
    then: async (page) => {
      await page.getByRole('button', { name: 'Run again: Kiln 3 relative accuracy audit' }).click();
      await page.locator('[data-testid^="job-group-"]').first().waitFor(WAIT);
    },
  },
  { name: 'assignments', path: () => '/crew/assignments', ready: byTestId('assignments-table') },
]);

checkPages('company admin', () => people.admin, [
  { name: 'dashboard', path: () => '/', ready: byTestId('dashboard-admin') },
  { name: 'company members', path: () => '/company', ready: byTestId('members-table') },
  { name: 'invitations', path: () => '/company?tab=invitations', ready: byTestId('invitations-table') },
  { name: 'roster upload', path: () => '/company?tab=add', ready: byTestId('roster-upload') },
  { name: 'billing', path: () => '/company/billing', ready: byTestId('billing-seats') },
  { name: 'auditor access', path: () => '/company/auditors', ready: byTestId('company-auditors-heading') },
]);

checkPages('auditor', () => people.auditor, [
  { name: 'dashboard', path: () => '/', ready: byTestId('dashboard-auditor') },
  {
    name: 'number check with a result',
    path: () => '/audit',
    ready: byTestId('verify-input'),
    then: async (page) => {
      await page.getByTestId('verify-input').fill(certificateNumber);
      await page.getByTestId('verify-submit').click();
      await page.getByTestId('verify-result').waitFor(WAIT);
    },
  },
  { name: 'batch check', path: () => '/audit/batch', ready: byTestId('batch-input') },
  { name: 'PDF check', path: () => '/audit/file', ready: byTestId('pdf-input') },
  { name: 'exam evidence', path: () => `/audit/evidence/${certificateNumber}`, ready: byTestId('evidence-result') },
  { name: 'lookups log', path: () => '/audit/lookups', ready: byTestId('lookups-table') },
]);

checkPages('operator', () => people.operator, [
  { name: 'dashboard', path: () => '/', ready: byTestId('dashboard-operator') },
  { name: 'operator console', path: () => '/operate', ready: byTestId('open-content-settings') },
  { name: 'courses and exam blueprints', path: () => '/operate/content', ready: byTestId('blueprint-form-gas-analysis') },
  { name: 'certificates', path: () => '/operate/certificates', ready: (page) => page.getByTestId(`revoke-${certificateNumber}`) },
  { name: 'e-mail log', path: () => '/operate/emails', ready: byTestId('email-log-table') },
  { name: 'companies and seats', path: () => '/operate/companies', ready: byTestId('companies-table') },
  { name: 'payment webhooks', path: () => '/operate/webhooks', ready: byTestId('webhook-log-table') },
  { name: 'drill preview', path: () => '/operate/drills', ready: byTestId('area-operate-drills') },
]);

checkPages('public', () => undefined, [
  { name: 'sign-in', path: () => '/sign-in', ready: byTestId('sign-in-submit') },
  { name: 'company sign-up', path: () => '/signup', ready: byTestId('order-total') },
  { name: 'forgot password', path: () => '/forgot-password', ready: (page) => page.getByLabel('E-mail address') },
  { name: 'certificate verification', path: () => `/verify/${certificateNumber}`, ready: byTestId('verify-result') },
  {
    name: 'reset password with a spent link',
    path: () => `/reset-password/${crypto.randomBytes(24).toString('base64url')}`,
    ready: (page) => page.getByLabel('New password', { exact: true }),
    expectedConsole: /status of 400 \(Bad Request\)/,
    then: async (page) => {
      await page.getByLabel('New password', { exact: true }).fill('a-fresh-password-42');
      await page.getByLabel('Repeat new password').fill('a-fresh-password-42');
      await page.getByRole('button', { name: 'Set new password' }).click();
      await page.getByTestId('reset-link-problem').waitFor(WAIT);
    },
  },
]);

describe('Content Security Policy', () => {
  it('blocks an inline script, and the violation is seen', async () => {
    const view = await openRole();
    try {
      await view.page.goto(url('/sign-in'));
      await view.page.getByTestId('sign-in-submit').waitFor(WAIT);
      const ran = await view.page.evaluate(() => {
        const flag = window as unknown as { pwInlineRan?: boolean };
        const script = document.createElement('script');
        script.textContent = 'window.pwInlineRan = true;';
        document.head.append(script);
        return Boolean(flag.pwInlineRan);
      });
      expect(ran, 'an inline script ran').toBe(false);
      await expect.poll(() => view.csp.some((v) => /script-src/.test(v)), WAIT).toBe(true);
    } finally {
      await view.context.close();
    }
  });

  it('allows no inline script and no other origin in the header', async () => {
    const res = await request(stack.server.app).get('/sign-in').expect(200);
    const policy = String(res.headers['content-security-policy']);
    const scriptSrc = policy.split(';').map((d) => d.trim()).find((d) => d.startsWith('script-src'));
    expect(scriptSrc).toBe("script-src 'self'");
    expect(policy).toContain("object-src 'none'");
    expect(policy).toContain("frame-ancestors 'none'");
  });
});

/** One Set-Cookie line split into its name, value and attributes (lower-cased names). */
function parseSetCookie(line: string) {
  const [pair, ...attrs] = line.split(';').map((part) => part.trim());
  const eq = pair.indexOf('=');
  const flags = new Map(attrs.map((a) => {
    const i = a.indexOf('=');
    return i < 0 ? [a.toLowerCase(), ''] as const : [a.slice(0, i).toLowerCase(), a.slice(i + 1)] as const;
  }));
  return { name: pair.slice(0, eq), value: pair.slice(eq + 1), flags };
}
const setCookies = (res: request.Response) => ([] as string[]).concat(res.headers['set-cookie'] ?? []).map(parseSetCookie);

describe('session and CSRF cookies', () => {
  it('after sign-in in the browser: HttpOnly, SameSite=Lax, Path=/', async () => {
    const view = await openRole(people.crew);
    try {
      await view.page.getByTestId('dashboard-crew').waitFor(WAIT);
      const cookies = await view.context.cookies(stack.server.url);
      const sessionCookie = cookies.find((c) => c.name === 'pw.sid');
      const csrfCookie = cookies.find((c) => c.name === 'pw.csrf');
      expect(sessionCookie, 'session cookie').toBeDefined();
      expect(csrfCookie, 'CSRF cookie').toBeDefined();
      for (const cookie of [sessionCookie!, csrfCookie!]) {
        expect({ name: cookie.name, httpOnly: cookie.httpOnly, sameSite: cookie.sameSite, path: cookie.path }).toEqual({
          name: cookie.name, httpOnly: true, sameSite: 'Lax', path: '/',
        });
      }
      // Script on the page cannot read either of them.
      expect(await view.page.evaluate(() => document.cookie)).not.toMatch(/pw\.(sid|csrf)/);
    } finally {
      await view.context.close();
    }
  });

  describe('configured for TLS behind a proxy (SECURE_COOKIES=true)', () => {
    let secure: ReturnType<typeof createApp>;
    beforeAll(() => {
      const config = loadConfig({ ...process.env, NODE_ENV: 'test', DATABASE_URL: stack.server.databaseUrl, LOGIN_RATE_MAX: '1000', SECURE_COOKIES: 'true' });
      expect(config.secureCookies).toBe(true);
      // The same database and services as the running server; only the cookie setting differs.
      secure = createApp({ ...stack.server.ctx, config });
    });
    afterAll(async () => {
      await secure?.close();
    });

    it('marks the session and CSRF cookies Secure, HttpOnly, SameSite=Lax, Path=/ through sign-in', async () => {
      const viaTls = (req: request.Test) => req.set('X-Forwarded-Proto', 'https');
      const first = await viaTls(request(secure.app).get('/api/auth/csrf')).expect(200);
      const before = setCookies(first);
      expect(before.map((c) => c.name).sort()).toEqual(['__Host-pw.csrf', 'pw.sid']);

      const jar = before.map((c) => `${c.name}=${c.value}`).join('; ');
      const login = await viaTls(request(secure.app).post('/api/auth/login'))
        .set('Cookie', jar)
        .set('x-csrf-token', first.body.csrfToken)
        .send({ email: people.crew.email, password: people.crew.password });
      expect(login.status, JSON.stringify(login.body)).toBe(200);
      const after = setCookies(login);
      const session = after.find((c) => c.name === 'pw.sid');
      expect(session, 'a new session cookie at sign-in').toBeDefined();
      expect(session!.value).not.toBe(before.find((c) => c.name === 'pw.sid')!.value);

      for (const cookie of [...before, ...after]) {
        expect({ name: cookie.name, secure: cookie.flags.has('secure'), httpOnly: cookie.flags.has('httponly'), sameSite: cookie.flags.get('samesite'), path: cookie.flags.get('path') }).toEqual({
          name: cookie.name, secure: true, httpOnly: true, sameSite: 'Lax', path: '/',
        });
      }
      // The __Host- prefix: no Domain attribute, so only this exact host receives it.
      expect(before.find((c) => c.name === '__Host-pw.csrf')!.flags.has('domain')).toBe(false);
    });

    it('never sends the session cookie over plain http', async () => {
      const plain = await request(secure.app).get('/api/auth/csrf').expect(200);
      const cookies = setCookies(plain);
      expect(cookies.find((c) => c.name === 'pw.sid'), 'session cookie over http').toBeUndefined();
      for (const cookie of cookies) expect(cookie.flags.has('secure'), `${cookie.name} is Secure`).toBe(true);
      const res = await request(secure.app).get('/api/health').set('X-Forwarded-Proto', 'https');
      expect(String(res.headers['content-security-policy'])).toContain('upgrade-insecure-requests');
    });
  });
});
