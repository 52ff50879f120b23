import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { createApp } from '../../server/app';
import { createTestApp, type TestApp } from '../helpers/app';
import { createCompany, createUser } from '../helpers/factory';

/** Two app instances on two ports against one database, as behind a load balancer. */
let t: TestApp;
let second: ReturnType<typeof createApp>;
const servers: Server[] = [];
const urls: string[] = [];

async function listen(app: TestApp['app']) {
  const server = app.listen(0, '127.0.0.1');
  await new Promise<void>((r) => server.once('listening', r));
  servers.push(server);
  return `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
}

beforeAll(async () => {
  t = await createTestApp();
  second = createApp({ ...t.ctx });
  urls.push(await listen(t.app), await listen(second.app));
});
afterAll(async () => {
  for (const s of servers) {
    s.closeAllConnections();
    await new Promise((r) => s.close(r));
  }
  await second.close();
  await t.close();
});

class Browser {
  private jar = new Map<string, string>();
  private keep(res: Response) {
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';');
      this.jar.set(pair.split('=')[0], pair);
    }
  }
  get cookie() {
    return [...this.jar.values()].join('; ');
  }
  async request(url: string, init: RequestInit = {}) {
    const res = await fetch(url, { ...init, headers: { ...(init.headers as Record<string, string>), cookie: this.cookie } });
    this.keep(res);
    return res;
  }
  async csrf(base: string) {
    return (await (await this.request(`${base}/api/auth/csrf`)).json()).csrfToken as string;
  }
  async post(base: string, path: string, body: unknown, token: string) {
    return this.request(`${base}${path}`, { method: 'POST', headers: { 'content-type': 'application/json', 'x-csrf-token': token }, body: JSON.stringify(body) });
  }
}

describe('two app processes on one database', () => {
  it('signs in on one and continues on the other, CSRF token included', async () => {
    const company = await createCompany(t.knex, 'Kittiwake Stack Testing');
    const user = await createUser(t.knex, { companyId: company.id, roles: ['crew'] });
    const browser = new Browser();
    const [a, b] = urls;
    const loginToken = await browser.csrf(a);
    expect((await browser.post(a, '/api/auth/login', { email: user.email, password: user.password }, loginToken)).status).toBe(200);
    const me = await browser.request(`${b}/api/auth/me`);
    expect(me.status).toBe(200);
    expect((await me.json()).user.email).toBe(user.email);
    // A token issued by one process is honoured by the other: both derive it from the shared secret and session.
    const token = await browser.csrf(a);
    const run = await browser.post(b, '/api/calculations/diluent-correction', { inputs: { concentration: 42, measuredO2_pct: 9, referenceO2_pct: 3 }, save: true }, token);
    expect(run.status).toBe(200);
    expect((await browser.request(`${a}/api/calculation-runs`).then((r) => r.json())).total).toBe(1);
    // Signing out on one ends the session on both.
    expect((await browser.post(b, '/api/auth/logout', {}, token)).status).toBe(204);
    expect((await browser.request(`${a}/api/auth/me`)).status).toBe(401);
  });
});

describe('the cache of sessions and users each process keeps', () => {
  const listeners = async () =>
    Number((await t.knex.raw("select count(*)::int as n from pg_stat_activity where application_name = 'plumewright-read-cache' and datname = current_database()")).rows[0].n);

  async function signedInOnBoth(roles: ('crew' | 'manager')[]) {
    const company = await createCompany(t.knex, 'Guillemot Emission Services');
    const user = await createUser(t.knex, { companyId: company.id, roles });
    const browser = new Browser();
    const [a, b] = urls;
    expect((await browser.post(a, '/api/auth/login', { email: user.email, password: user.password }, await browser.csrf(a))).status).toBe(200);
    // Read the session and the user on both, so both processes hold them.
    for (const base of [a, b]) expect((await browser.request(`${base}/api/auth/me`)).status).toBe(200);
    return { company, user, browser };
  }

  it('listens on both processes', async () => {
    await expect.poll(listeners, { timeout: 5_000 }).toBe(2);
  });

  it('sees a role taken away in the database on both processes', async () => {
    await expect.poll(listeners, { timeout: 5_000 }).toBe(2);
    const { user, browser } = await signedInOnBoth(['crew', 'manager']);
    const readiness = (base: string) => browser.request(`${base}/api/readiness?page=1&pageSize=10`).then((r) => r.status);
    for (const base of urls) expect(await readiness(base)).not.toBe(403);
    await t.knex('memberships').where({ user_id: user.id }).update({ roles: ['crew'] });
    for (const base of urls) await expect.poll(() => readiness(base), { timeout: 2_000, interval: 20 }).toBe(403);
  });

  it('signs a disabled user out on both processes', async () => {
    await expect.poll(listeners, { timeout: 5_000 }).toBe(2);
    const { user, browser } = await signedInOnBoth(['crew']);
    await t.knex('users').where({ id: user.id }).update({ disabled_at: t.knex.fn.now() });
    for (const base of urls) await expect.poll(() => browser.request(`${base}/api/auth/me`).then((r) => r.status), { timeout: 2_000, interval: 20 }).toBe(401);
  });

  it('reads the database again while it cannot listen, so no change is missed', async () => {
    await expect.poll(listeners, { timeout: 5_000 }).toBe(2);
    const { user, browser } = await signedInOnBoth(['crew']);
    await t.knex.raw("select pg_terminate_backend(pid) from pg_stat_activity where application_name = 'plumewright-read-cache' and datname = current_database()");
    await expect.poll(listeners, { timeout: 2_000, interval: 5 }).toBe(0);
    await new Promise((r) => setTimeout(r, 30)); // the processes read the closed connection; they retry after 250 ms
    // Changed while nobody listens: no notice reaches either process, yet both answer from the database.
    await t.knex('users').where({ id: user.id }).update({ name: 'Renamed While Deaf' });
    for (const base of urls) expect((await (await browser.request(`${base}/api/auth/me`)).json()).user.name).toBe('Renamed While Deaf');
    // And both listen again afterwards.
    await expect.poll(listeners, { timeout: 10_000 }).toBe(2);
  });
});

describe('public certificate checks through the cache', () => {
  it('shows a revocation on both processes at once, after both have answered "valid"', async () => {
    const { issueCertificateForPass } = await import('../../server/services/certificates');
    const { syncContent } = await import('../../server/services/content-sync');
    await syncContent(t.knex);
    const company = await createCompany(t.knex, 'Puffin Ridge Sampling');
    const holder = await createUser(t.knex, { companyId: company.id, roles: ['crew'], name: 'Wenna Trethowan' });
    const [pass] = await t.knex('exam_passes').insert({ user_id: holder.id, company_id: company.id, area_id: 'particulate', score_pct: 90, duration_seconds: 2_400, passed_at: new Date() }).returning('id');
    const number = (await issueCertificateForPass({ knex: t.knex, config: t.ctx.config }, pass.id)).certificate!.number;
    const status = (base: string) => fetch(`${base}/api/verify/${number}`).then((r) => r.json()).then((b) => b.status as string);
    for (const base of urls) {
      expect(await status(base)).toBe('valid');
      expect(await status(base)).toBe('valid');
    }
    await t.knex('certificates').where({ number }).update({ status: 'revoked', revoked_at: t.knex.fn.now(), revoked_reason: 'Exam evidence withdrawn by the issuer' });
    for (const base of urls) await expect.poll(() => status(base), { timeout: 2_000, interval: 20 }).toBe('revoked');
    // Every lookup was logged, the ones answered from the cache included.
    const logged = await t.knex('verification_log').where({ number_tried: number }).count<{ count: string }[]>('* as count');
    expect(Number(logged[0].count)).toBeGreaterThanOrEqual(6);
  });
});
