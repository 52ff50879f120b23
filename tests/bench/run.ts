/**
 * `npm run bench`: seeds what it needs on a throwaway database, measures each row on loopback, prints
 * one table and writes bench-results.json. HTTP rows are ratios to a bare Express hello-world server
 * measured in the same run; a bare node:http server is measured beside it for reference.
 */
import fs from 'node:fs';
import path from 'node:path';
import zlib from 'node:zlib';
import { fork, type ChildProcess } from 'node:child_process';
import { freePort } from '../../server/dev/exec';
import { dropDatabase, ensureDatabase, startCluster } from '../../server/dev/postgres';
import { buildClientIfNeeded } from '../../server/dev/client-build';
import { createDb, migrateLatest } from '../../server/db';
import { syncOnStart } from '../../server/dev/sync';
import { hashPassword } from '../../server/services/passwords';
import { calculate } from '../../server/engine';
import { measureHttp } from './measure';

const ROOT = path.resolve(import.meta.dirname, '../..');
const DURATION = Number(process.env.BENCH_SECONDS ?? 8);

interface Row { name: string; value: number; unit: string; target: string; pass: boolean; note?: string }
const rows: Row[] = [];
const atLeast = (name: string, value: number, unit: string, min: number, note?: string) => rows.push({ name, value, unit, target: `>= ${min}`, pass: value >= min, note });
const atMost = (name: string, value: number, unit: string, max: number, note?: string) => rows.push({ name, value, unit, target: `<= ${max}`, pass: value <= max, note });

function startChild(script: string, env: NodeJS.ProcessEnv): Promise<ChildProcess> {
  return new Promise((resolve, reject) => {
    const child = fork(path.join(import.meta.dirname, script), [], { env: { ...process.env, ...env }, execArgv: ['--import', 'tsx'], stdio: ['ignore', 'ignore', 'inherit', 'ipc'] });
    child.once('message', () => resolve(child));
    child.once('exit', (code) => reject(new Error(`${script} exited with ${code}`)));
  });
}

const stackFlowInputs = {
  deltaP_inH2O: [0.52, 0.61, 0.7, 0.44, 0.58, 0.66, 0.49, 0.57, 0.63, 0.55, 0.6, 0.51],
  stackTemp_F: 352,
  barometric_inHg: 29.62,
  staticPressure_inH2O: -0.45,
  dryMolecularWeight: 29.86,
  moistureFraction: 0.104,
  stackDiameter_in: 60,
};

function engineCallsPerSecond() {
  for (let i = 0; i < 5_000; i++) calculate('stack-flow', stackFlowInputs);
  let calls = 0;
  const until = performance.now() + 2_000;
  const started = performance.now();
  while (performance.now() < until) {
    for (let i = 0; i < 500; i++) calculate('stack-flow', stackFlowInputs);
    calls += 500;
  }
  return calls / ((performance.now() - started) / 1000);
}

function entryJsGzipKb() {
  buildClientIfNeeded();
  const dist = path.join(ROOT, 'dist/client');
  const html = fs.readFileSync(path.join(dist, 'index.html'), 'utf8');
  // What the browser must fetch before the first screen: the entry script and its preloaded chunks.
  const files = [...html.matchAll(/(?:src|href)="(\/assets\/[^"]+\.js)"/g)].map((m) => m[1]);
  return files.reduce((sum, f) => sum + zlib.gzipSync(fs.readFileSync(path.join(dist, f))).length, 0) / 1024;
}

async function signIn(baseUrl: string, email: string, password: string) {
  const jar: string[] = [];
  const keep = (res: Response) => {
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';');
      const name = pair.split('=')[0];
      const i = jar.findIndex((x) => x.startsWith(`${name}=`));
      if (i >= 0) jar[i] = pair;
      else jar.push(pair);
    }
  };
  let res = await fetch(`${baseUrl}/api/auth/csrf`);
  keep(res);
  let token = ((await res.json()) as { csrfToken: string }).csrfToken;
  res = await fetch(`${baseUrl}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json', 'x-csrf-token': token, cookie: jar.join('; ') }, body: JSON.stringify({ email, password }) });
  keep(res);
  if (res.status !== 200) throw new Error(`bench sign-in failed: ${res.status}`);
  res = await fetch(`${baseUrl}/api/auth/csrf`, { headers: { cookie: jar.join('; ') } });
  keep(res);
  token = ((await res.json()) as { csrfToken: string }).csrfToken;
  return { cookie: jar.join('; '), csrf: token };
}

async function main() {
  const children: ChildProcess[] = [];
  const cluster = await startCluster({ baseDir: path.join(ROOT, '.data/postgres-bench'), port: await freePort(), throwaway: true, log: (m) => console.log(`[bench] postgres: ${m}`) });
  const dbName = `pw_bench_${process.pid}`;
  try {
    await ensureDatabase(cluster.adminUrl(), dbName);
    const databaseUrl = cluster.adminUrl(dbName);
    const knex = createDb(databaseUrl, { min: 0, max: 4 });
    await migrateLatest(knex);
    await syncOnStart(knex);
    const [company] = await knex('companies').insert({ name: 'Bench Stack Testing' }).returning('id');
    const [user] = await knex('users').insert({ email: 'bench@bench.plumewright.example', name: 'Bench Crew', password_hash: await hashPassword('bench-password-1') }).returning('id');
    await knex('memberships').insert({ user_id: user.id, company_id: company.id, roles: ['crew'] });

    console.log('[bench] engine micro-benchmark…');
    atLeast('engine-calls-per-s', Math.round(engineCallsPerSecond()), 'calls/s', 50_000);

    const [nodePort, expressPort, appPort] = [await freePort(), await freePort(), await freePort()];
    children.push(await startChild('bare-node.ts', { PORT: String(nodePort) }));
    children.push(await startChild('bare-express.ts', { PORT: String(expressPort) }));
    children.push(await startChild('app-server.ts', {
      NODE_ENV: 'production', DATABASE_URL: databaseUrl, PORT: String(appPort), LOG_LEVEL: 'warn', SERVE_CLIENT: 'false',
      SESSION_SECRET: 'bench-session-secret', LOGIN_RATE_MAX: '100000', MIGRATE_ON_START: 'false', SMTP_PORT: '9',
    }));
    const appUrl = `http://127.0.0.1:${appPort}`;

    console.log(`[bench] HTTP rows, ${DURATION} s each at 50 connections…`);
    const bareNode = await measureHttp({ url: `http://127.0.0.1:${nodePort}/`, durationSeconds: DURATION });
    const bareExpress = await measureHttp({ url: `http://127.0.0.1:${expressPort}/`, durationSeconds: DURATION });
    rows.push({ name: 'bare-node-http-rps', value: Math.round(bareNode.requestsPerSecond), unit: 'req/s', target: 'reference', pass: true });
    rows.push({ name: 'bare-express-rps', value: Math.round(bareExpress.requestsPerSecond), unit: 'req/s', target: 'reference', pass: true, note: `${(bareExpress.requestsPerSecond / bareNode.requestsPerSecond).toFixed(2)} of node:http` });

    const session = await signIn(appUrl, 'bench@bench.plumewright.example', 'bench-password-1');
    const calc = await measureHttp({
      url: `${appUrl}/api/calculations/stack-flow`, method: 'POST', durationSeconds: DURATION,
      headers: { 'content-type': 'application/json', cookie: session.cookie, 'x-csrf-token': session.csrf },
      body: JSON.stringify({ inputs: stackFlowInputs }),
    });
    if (calc.non2xx || calc.errors) throw new Error(`calculation route answered ${calc.non2xx} non-2xx and ${calc.errors} errors`);
    atLeast('calc-route-ratio', +(calc.requestsPerSecond / bareExpress.requestsPerSecond).toFixed(3), 'x bare Express', 0.5, `${Math.round(calc.requestsPerSecond)} req/s`);
    atMost('calc-route-p99-ms', calc.p99Ms, 'ms', 50);

    atMost('entry-js-gzip-kb', +entryJsGzipKb().toFixed(1), 'KB', 150);
    await knex.destroy();
  } finally {
    for (const child of children) child.kill('SIGTERM');
    await dropDatabase(cluster.adminUrl(), dbName).catch(() => undefined);
    cluster.stop();
  }

  const widths = [26, 14, 16, 12, 6];
  const line = (cells: string[]) => cells.map((c, i) => c.padEnd(widths[i])).join(' ');
  console.log(`\n${line(['name', 'value', 'unit', 'target', 'pass'])}  note`);
  for (const r of rows) console.log(`${line([r.name, String(r.value), r.unit, r.target, r.pass ? 'yes' : 'NO'])}  ${r.note ?? ''}`);
  fs.writeFileSync(path.join(ROOT, 'bench-results.json'), `${JSON.stringify({ rows: rows.map(({ name, value, unit, target, pass }) => ({ name, value, unit, target, pass })) }, null, 2)}\n`);
  console.log('\nWrote bench-results.json');
}

main().catch((error) => {
  console.error(error);
  process.exit(1);
});
