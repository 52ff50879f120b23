import http from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { createTestApp, type TestApp } from '../helpers/app';
import { TestAgent, signedIn } from '../helpers/agent';
import { createCompany, createUser } from '../helpers/factory';
import { linkIn, waitForMail } from '../helpers/mail';

let t: TestApp;
let companyId: string;

beforeAll(async () => {
  t = await createTestApp();
  companyId = (await createCompany(t.knex, 'Fernhollow Stack Testing')).id;
});
afterAll(() => t.close());

describe('sign-in', () => {
  it('signs in, regenerates the session id, reports the user and memberships, and signs out', async () => {
    const user = await createUser(t.knex, { companyId, roles: ['crew', 'manager'], name: 'Odile Marchetti' });
    const agent = new TestAgent(t.app);
    const before = await agent.get('/api/auth/csrf');
    const cookieBefore = String(before.headers['set-cookie']).match(/pw\.sid=([^;]+)/)?.[1];
    const res = await agent.login(user.email, user.password);
    expect(res.status).toBe(200);
    const cookieAfter = String(res.headers['set-cookie']).match(/pw\.sid=([^;]+)/)?.[1];
    expect(cookieAfter).toBeTruthy();
    expect(cookieAfter).not.toBe(cookieBefore);
    expect(String(res.headers['set-cookie'])).toMatch(/HttpOnly/i);
    expect(String(res.headers['set-cookie'])).toMatch(/SameSite=Lax/i);

    const me = await agent.get('/api/auth/me').expect(200);
    expect(me.body.user).toEqual({ id: user.id, email: user.email, name: 'Odile Marchetti' });
    expect(me.body.memberships).toEqual([{ companyId, companyName: 'Fernhollow Stack Testing', companyKind: 'customer', roles: ['crew', 'manager'], seat: false }]);
    expect(JSON.stringify(me.body)).not.toMatch(/password|argon2/i);

    expect((await agent.post('/api/auth/logout')).status).toBe(204);
    await agent.get('/api/auth/me').expect(401);
  });

  it('answers a wrong password or unknown e-mail with the same 401 that names neither', async () => {
    const user = await createUser(t.knex, { companyId });
    const agent = new TestAgent(t.app);
    const wrong = await agent.post('/api/auth/login', { email: user.email, password: 'not the password' });
    const unknown = await agent.post('/api/auth/login', { email: 'nobody@tests.plumewright.example', password: 'whatever123' });
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(401);
    expect(wrong.body).toEqual(unknown.body);
    expect(wrong.body.error.code).toBe('bad_credentials');
  });

  it('lists each bad field of a malformed sign-in', async () => {
    const agent = new TestAgent(t.app);
    const res = await agent.post('/api/auth/login', { email: 'not-an-address', password: '' });
    expect(res.status).toBe(400);
    expect(res.body.error.fields.map((f: { field: string }) => f.field).sort()).toEqual(['email', 'password']);
  });

  it('refuses a state-changing request without the CSRF token', async () => {
    const res = await request(t.app).post('/api/auth/login').send({ email: 'a@b.example', password: 'x' });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('csrf_invalid');
  });

  it('rejects malformed JSON with 400, an over-size body with 413 and a non-UTF-8 body with 415, in the error shape', async () => {
    const agent = new TestAgent(t.app);
    const token = await agent.csrfToken();
    const bad = await agent.agent.post('/api/auth/login').set('x-csrf-token', token).set('content-type', 'application/json').send('{"email":');
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe('malformed_json');
    const big = await agent.agent.post('/api/auth/login').set('x-csrf-token', token).send({ email: 'a@b.example', password: 'x'.repeat(200_000) });
    expect(big.status).toBe(413);
    expect(big.body.error.code).toBe('too_large');
    const latin = await agent.agent.post('/api/auth/login').set('x-csrf-token', token).set('content-type', 'application/json; charset=latin1').send('{"email":"a@b.example"}');
    expect(latin.status).toBe(415);
    expect(latin.body.error.code).toBe('unsupported_body');
  });

  it('reads JSON bodies by body-parser\'s rules on either path: strict, empty as {}, byte-order mark dropped, gzip and chunked accepted, a corrupt gzip body refused', async () => {
    const { gzipSync } = await import('node:zlib');
    const agent = new TestAgent(t.app);
    const token = await agent.csrfToken();
    const post = () => agent.agent.post('/api/auth/login').set('x-csrf-token', token).set('content-type', 'application/json');
    const login = JSON.stringify({ email: 'nobody@plumewright.example', password: 'not-the-password' });
    // A bare JSON value is not an object or array: refused as body-parser's strict mode refuses it.
    expect((await post().send('"text"')).body.error.code).toBe('malformed_json');
    // An empty body is {}: the route then names the missing fields.
    const empty = await post().send('');
    expect(empty.status).toBe(400);
    expect(empty.body.error.fields.map((f: { field: string }) => f.field).sort()).toEqual(['email', 'password']);
    // Read as sent, the same credentials are refused for what they are (401), whatever the framing.
    expect((await post().send(`\uFEFF${login}`)).status).toBe(401);
    // Chunked (no Content-Length), sent in two writes: body-parser's path.
    const server = t.app.listen(0, '127.0.0.1');
    await new Promise((resolve) => server.once('listening', resolve));
    const base = `http://127.0.0.1:${(server.address() as { port: number }).port}`;
    const csrf = await fetch(`${base}/api/auth/csrf`);
    const cookie = csrf.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
    const csrfToken = ((await csrf.json()) as { csrfToken: string }).csrfToken;
    const chunked = await new Promise<number>((resolve, reject) => {
      const req = http.request(`${base}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken, cookie } }, (res) => {
        res.resume();
        res.on('end', () => resolve(res.statusCode ?? 0));
      });
      req.on('error', reject);
      req.write(login.slice(0, 10));
      setTimeout(() => req.end(login.slice(10)), 20);
    });
    // Compressed: body-parser's path inflates it; a body that is not what its encoding says is a 400.
    const send = (body: Buffer) => fetch(`${base}/api/auth/login`, { method: 'POST', body: new Uint8Array(body), headers: { 'content-type': 'application/json', 'content-encoding': 'gzip', 'x-csrf-token': csrfToken, cookie } });
    expect((await send(gzipSync(login))).status).toBe(401);
    const corrupt = await send(Buffer.from(login));
    expect(corrupt.status).toBe(400);
    expect(((await corrupt.json()) as { error: { code: string } }).error.code).toBe('malformed_body');
    await new Promise((resolve) => server.close(resolve));
    expect(chunked).toBe(401);
  });

  it('rate-limits repeated failures with 429', async () => {
    const limited = await createTestApp({}, { LOGIN_RATE_MAX: '3' });
    try {
      const agent = new TestAgent(limited.app);
      const statuses: number[] = [];
      for (let i = 0; i < 5; i++) statuses.push((await agent.post('/api/auth/login', { email: 'target@tests.plumewright.example', password: `guess-${i}` })).status);
      expect(statuses).toEqual([401, 401, 401, 429, 429]);
      const last = await agent.post('/api/auth/login', { email: 'target@tests.plumewright.example', password: 'again' });
      expect(last.body.error.code).toBe('too_many_attempts');
    } finally {
      await limited.close();
    }
  });
});

describe('passwords', () => {
  it('changes the password only with the current one', async () => {
    const user = await createUser(t.knex, { companyId });
    const agent = await signedIn(t.app, user.email, user.password);
    const wrong = await agent.post('/api/auth/password', { currentPassword: 'nope', newPassword: 'a-new-long-password' });
    expect(wrong.status).toBe(400);
    expect(wrong.body.error.fields[0].field).toBe('currentPassword');
    const short = await agent.post('/api/auth/password', { currentPassword: user.password, newPassword: 'short' });
    expect(short.status).toBe(400);
    expect(short.body.error.fields[0].field).toBe('newPassword');
    expect((await agent.post('/api/auth/password', { currentPassword: user.password, newPassword: 'a-new-long-password' })).status).toBe(204);
    expect((await new TestAgent(t.app).login(user.email, user.password)).status).toBe(401);
    expect((await new TestAgent(t.app).login(user.email, 'a-new-long-password')).status).toBe(200);
  });

  it('resets a password through an e-mailed link that works once', async () => {
    const user = await createUser(t.knex, { companyId });
    const agent = new TestAgent(t.app);
    expect((await agent.post('/api/auth/password-reset', { email: user.email.toUpperCase() })).status).toBe(202);
    const mail = await waitForMail(user.email, { subject: /reset/i });
    const link = linkIn(mail, /\/reset-password\/[A-Za-z0-9_-]+/);
    const token = link.split('/').pop()!;
    expect((await agent.post('/api/auth/password-reset/confirm', { token, password: 'brand-new-password-1' })).status).toBe(204);
    const again = await agent.post('/api/auth/password-reset/confirm', { token, password: 'another-password-22' });
    expect(again.status).toBe(400);
    expect(again.body.error.fields[0].field).toBe('token');
    expect((await new TestAgent(t.app).login(user.email, 'brand-new-password-1')).status).toBe(200);
  });

  it('refuses an expired reset link', async () => {
    const user = await createUser(t.knex, { companyId });
    const agent = new TestAgent(t.app);
    expect((await agent.post('/api/auth/password-reset', { email: user.email })).status).toBe(202);
    const token = linkIn(await waitForMail(user.email), /\/reset-password\/[A-Za-z0-9_-]+/).split('/').pop()!;
    await t.knex('password_reset_tokens').where({ user_id: user.id }).update({ expires_at: new Date(Date.now() - 1000) });
    const res = await agent.post('/api/auth/password-reset/confirm', { token, password: 'brand-new-password-1' });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/expired/);
  });

  it('answers a reset request for an unknown address exactly like a known one', async () => {
    const agent = new TestAgent(t.app);
    const res = await agent.post('/api/auth/password-reset', { email: 'ghost@tests.plumewright.example' });
    expect(res.status).toBe(202);
  });
});

describe('companies', () => {
  it('switches the active company only to one the user belongs to', async () => {
    const other = await createCompany(t.knex, 'Larchmont Flue Services');
    const user = await createUser(t.knex, { companyId, roles: ['crew'] });
    await t.knex('memberships').insert({ user_id: user.id, company_id: other.id, roles: ['manager'] });
    const stranger = await createCompany(t.knex);
    const agent = await signedIn(t.app, user.email, user.password);
    const switched = await agent.post('/api/auth/active-company', { companyId: other.id });
    expect(switched.status).toBe(200);
    expect(switched.body.activeCompanyId).toBe(other.id);
    expect((await agent.post('/api/auth/active-company', { companyId: stranger.id })).status).toBe(404);
  });
});
