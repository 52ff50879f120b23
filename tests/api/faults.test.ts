import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import pino from 'pino';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { Knex } from 'knex';
import { createApp } from '../../server/app';
import { loadConfig } from '../../server/config';
import { bindModels, createDb, migrateLatest } from '../../server/db';
import { createMailer } from '../../server/mail/mailer';
import { freePort } from '../../server/dev/exec';
import { ensureDatabase, startCluster, type Cluster } from '../../server/dev/postgres';
import { createCompany, createUser } from '../helpers/factory';

/**
 * PostgreSQL stopped for 10 s under load. This file runs its own cluster, so stopping it never
 * disturbs the other test files.
 */
let cluster: Cluster;
let knex: Knex;
let server: Server;
let baseUrl: string;
let closeApp: () => Promise<void>;
const clusterDir = path.resolve(import.meta.dirname, `../../.data/postgres-fault-${process.pid}`);

const inputs = { deltaP_inH2O: [0.5, 0.6, 0.55, 0.62], stackTemp_F: 340, barometric_inHg: 29.7, staticPressure_inH2O: -0.3, dryMolecularWeight: 29.9, moistureFraction: 0.09, stackDiameter_in: 48 };

beforeAll(async () => {
  cluster = await startCluster({ baseDir: clusterDir, port: await freePort(), throwaway: true, log: () => undefined });
  await ensureDatabase(cluster.adminUrl(), 'faults');
  const url = cluster.adminUrl('faults');
  const config = { ...loadConfig({ ...process.env, NODE_ENV: 'test', DATABASE_URL: url, LOGIN_RATE_MAX: '1000' }) };
  const logger = pino({ level: 'silent' });
  knex = createDb(url, { min: 0, max: 10 });
  bindModels(knex);
  await migrateLatest(knex);
  const mailer = createMailer(config, logger);
  const created = createApp({ config, knex, logger, mailer });
  server = created.app.listen(0, '127.0.0.1');
  await new Promise<void>((r) => server.once('listening', r));
  baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  closeApp = async () => {
    server.closeAllConnections();
    await new Promise((r) => server.close(r));
    mailer.close();
    await created.close();
    await knex.destroy();
  };
}, 120_000);

afterAll(async () => {
  await closeApp?.();
  cluster?.stop();
  fs.rmSync(clusterDir, { recursive: true, force: true });
});

async function session(email: string, password: string) {
  const jar = new Map<string, string>();
  const keep = (res: Response) => res.headers.getSetCookie().forEach((c) => { const [pair] = c.split(';'); jar.set(pair.split('=')[0], pair); });
  const cookie = () => [...jar.values()].join('; ');
  let res = await fetch(`${baseUrl}/api/auth/csrf`);
  keep(res);
  let token = (await res.json()).csrfToken;
  res = await fetch(`${baseUrl}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json', 'x-csrf-token': token, cookie: cookie() }, body: JSON.stringify({ email, password }) });
  keep(res);
  expect(res.status).toBe(200);
  res = await fetch(`${baseUrl}/api/auth/csrf`, { headers: { cookie: cookie() } });
  keep(res);
  token = (await res.json()).csrfToken;
  return { cookie: cookie(), token };
}

describe('database outage under load', () => {
  it('answers 503 while PostgreSQL is down, recovers without a restart, and writes nothing by halves', async () => {
    const company = await createCompany(knex, 'Gallowglass Emission Services');
    const user = await createUser(knex, { companyId: company.id, roles: ['crew'] });
    const s = await session(user.email, user.password);

    const statuses: { phase: string; status: number; saved?: string; code?: string; at?: number }[] = [];
    let phase = 'before';
    let running = true;
    const worker = async () => {
      while (running) {
        // Labelled when sent: a request sent before the stop may legitimately commit.
        const sentIn = phase;
        try {
          const res = await fetch(`${baseUrl}/api/calculations/stack-flow`, {
            method: 'POST', headers: { 'content-type': 'application/json', cookie: s.cookie, 'x-csrf-token': s.token },
            body: JSON.stringify({ inputs, save: true, label: 'fault drill' }), signal: AbortSignal.timeout(15_000),
          });
          const body = await res.json();
          statuses.push({ phase: sentIn, status: res.status, saved: body.run?.id, code: body.error?.code, at: Date.now() });
        } catch (error) {
          statuses.push({ phase: sentIn, status: -1, code: (error as Error).name });
        }
        await new Promise((r) => setTimeout(r, 20));
      }
    };
    const workers = Array.from({ length: 8 }, worker);

    await new Promise((r) => setTimeout(r, 1_500));
    phase = 'stopping';
    cluster.stop();
    phase = 'down';
    await new Promise((r) => setTimeout(r, 10_000));
    const health = await fetch(`${baseUrl}/api/health`);
    expect(health.status).toBe(503);
    phase = 'restarting';
    const restartAt = Date.now();
    cluster.start();
    const recoveredBy = Date.now() + 20_000;
    let recovered = false;
    while (Date.now() < recoveredBy && !recovered) {
      recovered = (await fetch(`${baseUrl}/api/health`)).status === 200;
      if (!recovered) await new Promise((r) => setTimeout(r, 250));
    }
    expect(recovered, 'health recovers without restarting the app').toBe(true);
    phase = 'after';
    await new Promise((r) => setTimeout(r, 2_000));
    running = false;
    await Promise.all(workers);

    // Sent and answered while the database was down (a request still waiting for a connection at the restart may succeed).
    const during = statuses.filter((x) => x.phase === 'down' && (x.at ?? 0) < restartAt);
    expect(statuses.filter((x) => x.phase === 'before' && x.status === 200).length).toBeGreaterThan(5);
    expect(during.length).toBeGreaterThan(5);
    // Every answer while the database is down is a clean 503 in the error shape: never a 500, never a hang.
    expect(during.filter((x) => x.status !== 503), JSON.stringify(during.filter((x) => x.status !== 503).slice(0, 5))).toEqual([]);
    expect(new Set(during.map((x) => x.code))).toEqual(new Set(['unavailable']));
    expect(statuses.filter((x) => x.phase === 'after' && x.status === 200).length).toBeGreaterThan(5);
    expect(statuses.filter((x) => x.status === 500)).toEqual([]);

    // Every run the API said it saved is in the database, and nothing else is.
    const acknowledged = new Set(statuses.filter((x) => x.saved).map((x) => x.saved));
    const stored = await knex('calculation_runs').where({ user_id: user.id }).pluck('id');
    for (const id of acknowledged) expect(stored).toContain(id);
    const orphans = stored.filter((id: string) => !acknowledged.has(id));
    // A request cut off mid-flight may have committed without its answer reaching us; it is whole, never partial.
    expect(orphans.length).toBeLessThanOrEqual(8);
    for (const row of await knex('calculation_runs').whereIn('id', orphans)) expect(row.results.velocity_fps).toBeGreaterThan(0);
  }, 90_000);
});
