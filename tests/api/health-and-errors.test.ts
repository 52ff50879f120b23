import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { createTestApp, type TestApp } from '../helpers/app';
import { createApp } from '../../server/app';
import { createDb } from '../../server/db';

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp();
});
afterAll(() => t.close());

describe('health and the error shape', () => {
  it('reports the app and database as up', async () => {
    const res = await request(t.app).get('/api/health').expect(200);
    expect(res.body).toEqual({ status: 'ok', db: 'ok' });
  });

  it('answers unknown API routes with a JSON 404 in the error shape', async () => {
    const res = await request(t.app).get('/api/no-such-thing').expect(404);
    expect(res.body.error.code).toBe('not_found');
    expect(res.body.error.message).toMatch(/no-such-thing/);
  });

  it('matches API routes as Express does: trailing slash, any letter case, HEAD as GET, parameters decoded', async () => {
    expect((await request(t.app).get('/api/health/')).body).toEqual({ status: 'ok', db: 'ok' });
    expect((await request(t.app).get('/API/Health')).body).toEqual({ status: 'ok', db: 'ok' });
    const head = await request(t.app).head('/api/health').expect(200);
    expect(head.text ?? '').toBe('');
    expect(head.headers['content-type']).toMatch(/application\/json/);
    // The number reaches the route decoded: "not a number" is refused for what it says, not for "%20".
    const spaced = await request(t.app).get('/api/verify/not%20a%20number').expect(400);
    expect(spaced.body.error.fields[0].field).toBe('number');
    expect((await request(t.app).get('/api/no-such-thing/')).status).toBe(404);
  });

  it('answers a method a path does not have with a 404, and OPTIONS with the methods it has', async () => {
    const wrong = await request(t.app).get('/api/calculations/stack-flow').expect(404);
    expect(wrong.body.error.message).toBe('No API route for GET /api/calculations/stack-flow.');
    expect((await request(t.app).options('/api/calculations/stack-flow').expect(200)).headers.allow).toBe('POST');
    const options = await request(t.app).options('/api/verify/PW-2026-ABCD').expect(200);
    expect(options.headers.allow).toBe('GET, HEAD');
    expect((await request(t.app).options('/api/no-such-thing')).status).toBe(404);
  });

  it('answers a broken percent-escape in the address with a 400 that says so', async () => {
    const res = await request(t.app).get('/api/verify/PW%E0%A4%A').expect(400);
    expect(res.body.error.code).toBe('bad_request');
    expect(res.body.error.message).toMatch(/not valid percent-encoding/);
    expect(res.body.error.fields).toEqual([{ field: 'params', message: 'Malformed percent-encoding in the address.' }]);
  });

  it('sends a CSP that allows no inline script, and the usual protective headers', async () => {
    const res = await request(t.app).get('/api/health');
    const csp = res.headers['content-security-policy'];
    expect(csp).toMatch(/script-src 'self'(;|$)/);
    expect(csp).not.toMatch(/script-src[^;]*unsafe-inline/);
    expect(csp).toMatch(/frame-ancestors 'none'/);
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['x-powered-by']).toBeUndefined();
  });

  it("sends exactly the headers helmet itself would, on every answer (they are computed once and replayed)", async () => {
    const { default: express } = await import('express');
    const { default: helmet } = await import('helmet');
    // The same options as server/app.ts, applied the ordinary way, for comparison.
    const reference = express();
    reference.disable('x-powered-by');
    reference.use(helmet({ contentSecurityPolicy: { useDefaults: false, directives: {
      defaultSrc: ["'self'"], scriptSrc: ["'self'"], styleSrc: ["'self'", "'unsafe-inline'"], imgSrc: ["'self'", 'data:', 'blob:'],
      fontSrc: ["'self'", 'data:'], connectSrc: ["'self'"], objectSrc: ["'none'"], baseUri: ["'self'"], frameAncestors: ["'none'"], formAction: ["'self'"],
    } } }));
    reference.get('/api/health', (_req, res) => { res.json({}); });
    const expected = (await request(reference).get('/api/health')).headers;
    const helmetNames = Object.keys(expected).filter((name) => !['content-type', 'content-length', 'date', 'connection', 'etag', 'keep-alive'].includes(name));
    expect(helmetNames.length).toBeGreaterThan(8);
    for (const path of ['/api/health', '/api/no-such-thing', '/api/verify/PW-0000-0000-000']) {
      const got = (await request(t.app).get(path)).headers;
      for (const name of helmetNames) expect(got[name], `${path}: ${name}`).toBe(expected[name]);
    }
  });

  it('reports 503 from health when the database cannot be reached', async () => {
    const broken = createDb('postgres://nobody:x@127.0.0.1:1/none', { min: 0, max: 1 });
    const created = createApp({ ...t.ctx, knex: broken });
    try {
      const res = await request(created.app).get('/api/health');
      expect(res.status).toBe(503);
      expect(res.body).toEqual({ status: 'degraded', db: 'down' });
    } finally {
      await created.close();
      await broken.destroy();
    }
  });
});
