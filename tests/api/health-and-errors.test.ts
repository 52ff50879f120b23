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

  it('sends a CSP that allows no inline script, and the usual protective headers', async () => {
    const res = await request(t.app).get('/api/health');
    const csp = res.headers['content-security-policy'];
    expect(csp).toMatch(/script-src 'self'(;|$)/);
    expect(csp).not.toMatch(/script-src[^;]*unsafe-inline/);
    expect(csp).toMatch(/frame-ancestors 'none'/);
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['x-powered-by']).toBeUndefined();
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
