/**
 * `npm run bench`: seeds what it needs on a throwaway database, measures each row on loopback, prints
 * one table and writes bench-results.json. HTTP rows are ratios to a bare Express hello-world server
 * measured in the same run; a bare node:http server is measured beside it for reference.
 */
import fs from 'node:fs';
import path from 'node:path';
import zlib from 'node:zlib';
import { randomUUID } from 'node:crypto';
import os from 'node:os';
import { fork, spawnSync, type ChildProcess } from 'node:child_process';
import { freePort } from '../../server/dev/exec';
import { dropDatabase, ensureDatabase, startCluster } from '../../server/dev/postgres';
import { buildClientIfNeeded } from '../../server/dev/client-build';
import { createDb, migrateLatest } from '../../server/db';
import { syncOnStart } from '../../server/dev/sync';
import { hashPassword } from '../../server/services/passwords';
import { calculate } from '../../server/engine';
import { issueCertificateForPass } from '../../server/services/certificates';
import { renderCertificatePdf, sampleCertificateInput, sha256Hex } from '../../server/pdf/certificate';
import { generateCertificateNumber } from '../../server/services/certificate-number';
import { drillTemplates } from '../../server/engine/drills';
import { measureAgainst, measureHttp, type HttpFigures, type HttpTarget } from './measure';
import { READINESS_MANAGER, READINESS_MEMBERS, seedReadinessCompany, timeReadiness } from './readiness';

const ROOT = path.resolve(import.meta.dirname, '../..');
const DURATION = Number(process.env.BENCH_SECONDS ?? 8);
/** Seconds of unmeasured load before each HTTP row (BENCH_WARMUP_SECONDS). */
const WARMUP = Number(process.env.BENCH_WARMUP_SECONDS ?? 6);
/** BENCH_ONLY=calc,verify runs only those groups (engine, calc, drill, verify, pdf, readiness, bundle) while working on one. */
const ONLY = process.env.BENCH_ONLY?.split(',').map((s) => s.trim());
const wanted = (group: string) => !ONLY || ONLY.includes(group);

interface Row { name: string; value: number; unit: string; target: string; pass: boolean; note?: string }
const rows: Row[] = [];
const atLeast = (name: string, value: number, unit: string, min: number, note?: string) => rows.push({ name, value, unit, target: `>= ${min}`, pass: value >= min, note });
const atMost = (name: string, value: number, unit: string, max: number, note?: string) => rows.push({ name, value, unit, target: `<= ${max}`, pass: value <= max, note });

/**
 * On a machine with two or more cores the servers under test share one core and the load generator
 * (this process) another, so each HTTP row measures its server alone, in the same conditions, instead
 * of wherever the scheduler put it that second. BENCH_PIN=off leaves placement to the scheduler.
 */
const CPUS = os.availableParallelism();
const PIN = process.env.BENCH_PIN !== 'off' && CPUS >= 2 && spawnSync('taskset', ['-V']).status === 0;
function pin(pid: number | undefined, cpus: string) {
  if (PIN && pid) spawnSync('taskset', ['-p', '-c', cpus, String(pid)], { stdio: 'ignore' });
}
/**
 * PostgreSQL is not the server under test (in production it is a managed service on its own host):
 * its postmaster and every backend (forked later, they inherit the placement) stay off the servers'
 * core, with the load generator. Left unplaced, a backend woken by the app's query is run on the app's
 * core and pre-empts it, and the app's rows measure the database's CPU as well as their own.
 */
function pinDatabase(dataDir: string, cpus: string) {
  if (!PIN) return;
  const postmaster = Number(fs.readFileSync(path.join(dataDir, 'postmaster.pid'), 'utf8').split('\n')[0]);
  if (!postmaster) return;
  const children = spawnSync('pgrep', ['-P', String(postmaster)], { encoding: 'utf8' }).stdout.split('\n').filter(Boolean);
  for (const pid of [String(postmaster), ...children]) spawnSync('taskset', ['-a', '-p', '-c', cpus, pid], { stdio: 'ignore' });
}

function startChild(script: string, env: NodeJS.ProcessEnv): Promise<ChildProcess> {
  return new Promise((resolve, reject) => {
    // BENCH_PROFILE=1 writes a CPU profile of the app's process to .artifacts-profile/ when it stops.
    const profile = process.env.BENCH_PROFILE && script === 'app-server.ts' ? (process.env.BENCH_PROFILE === 'heap' ? ['--heap-prof', `--heap-prof-dir=${path.join(ROOT, '.artifacts-profile')}`] : ['--cpu-prof', `--cpu-prof-dir=${path.join(ROOT, '.artifacts-profile')}`]) : [];
    const child = fork(path.join(import.meta.dirname, script), [], { env: { ...process.env, ...env }, execArgv: ['--import', 'tsx', ...profile, ...(script === 'app-server.ts' && process.env.BENCH_APP_FLAGS ? process.env.BENCH_APP_FLAGS.split(' ') : [])], stdio: ['ignore', script === 'app-server.ts' && process.env.BENCH_APP_FLAGS ? 'inherit' : 'ignore', 'inherit', 'ipc'] });
    child.once('message', () => {
      pin(child.pid, String(CPUS - 1));
      resolve(child);
    });
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

/** Certificate PDFs rendered one after another (pdfkit is single-threaded), each with its own holder and number. */
async function pdfTimings(count: number) {
  const names = ['Juniper Vasquez-Holm', 'Oskar Thistlewood', 'Marisol Quenby', 'Tobiah Ferncastle', 'Ines Halloran-Pike'];
  const areas = [['Particulate sampling', ['Method 5']], ['Flow and moisture', ['Method 1', 'Method 2', 'Method 3', 'Method 4']], ['Instrumental gas analysis', ['Method 3A', 'Method 6C', 'Method 7E', 'Method 10']]] as const;
  const times: number[] = [];
  const hashes = new Set<string>();
  const started = performance.now();
  for (let i = 0; i < count; i++) {
    const [areaName, methods] = areas[i % areas.length];
    const number = generateCertificateNumber();
    const t0 = performance.now();
    const pdf = await renderCertificatePdf(sampleCertificateInput({ number, holderName: `${names[i % names.length]} ${i}`, areaName, methods: [...methods], verifyUrl: `http://127.0.0.1:3000/verify/${number}` }));
    hashes.add(sha256Hex(pdf));
    times.push(performance.now() - t0);
  }
  if (hashes.size !== count) throw new Error(`certificate PDFs: ${count - hashes.size} duplicates among ${count}`);
  times.sort((a, b) => a - b);
  return { medianMs: times[Math.floor(times.length / 2)], totalSeconds: (performance.now() - started) / 1000 };
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

/**
 * Practice attempts of every drill, in turn, with their right answers: each is submitted exactly
 * once during the run, so every request grades a fresh attempt and stores its result.
 */
async function seedDrillAttempts(knex: ReturnType<typeof createDb>, userId: string, companyId: string, count: number) {
  const pool: { id: string; body: string }[] = [];
  const rows: Record<string, unknown>[] = [];
  for (let i = 0; i < count; i++) {
    const template = drillTemplates[i % drillTemplates.length];
    const seed = Math.imul(i + 1, 2654435761) >>> 0;
    const expected = template.solve(template.generate(seed)).expected;
    const id = randomUUID();
    rows.push({ id, user_id: userId, company_id: companyId, drill_id: template.id, seed, mode: 'practice' });
    pool.push({ id, body: JSON.stringify({ answers: Object.fromEntries(template.fields.map((f) => [f.key, expected[f.key].toPrecision(6)])) }) });
  }
  for (let i = 0; i < rows.length; i += 1000) await knex('drill_attempts').insert(rows.slice(i, i + 1000));
  return pool;
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
    if (wanted('readiness')) console.log(`[bench] seeding a company of ${READINESS_MEMBERS} crew members for the readiness matrix…`);
    const readinessSeed = wanted('readiness') ? await seedReadinessCompany(knex) : { certificates: 0 };

    if (wanted('engine')) {
      console.log('[bench] engine micro-benchmark…');
      atLeast('engine-calls-per-s', Math.round(engineCallsPerSecond()), 'calls/s', 50_000);
    }

    const [nodePort, expressPort, appPort] = [await freePort(), await freePort(), await freePort()];
    const nodeChild = await startChild('bare-node.ts', { PORT: String(nodePort) });
    const expressChild = await startChild('bare-express.ts', { PORT: String(expressPort) });
    children.push(nodeChild, expressChild);
    const appChild = await startChild('app-server.ts', {
      NODE_ENV: 'production', DATABASE_URL: databaseUrl, PORT: String(appPort), LOG_LEVEL: 'warn', SERVE_CLIENT: 'false',
      SESSION_SECRET: 'bench-session-secret', LOGIN_RATE_MAX: '100000', VERIFY_RATE_MAX: '100000000', MIGRATE_ON_START: 'false', SMTP_PORT: '9', JOBS: 'off',
    });
    children.push(appChild);
    const cpuNote = (f: { cpuMsPerRequest?: number }) => (f.cpuMsPerRequest === undefined ? '' : `, ${f.cpuMsPerRequest} ms CPU/request`);
    const appUrl = `http://127.0.0.1:${appPort}`;

    console.log(`[bench] HTTP rows, ${DURATION} s each at 50 connections${PIN ? `; servers on CPU ${CPUS - 1}, load generator and PostgreSQL on CPU 0-${CPUS - 2}` : ''}…`);
    pin(process.pid, CPUS > 2 ? `0-${CPUS - 2}` : '0');
    pinDatabase(cluster.dataDir, CPUS > 2 ? `0-${CPUS - 2}` : '0');
    const bareNode = await measureHttp({ url: `http://127.0.0.1:${nodePort}/`, durationSeconds: DURATION, warmupSeconds: WARMUP, serverPid: nodeChild.pid });
    rows.push({ name: 'bare-node-http-rps', value: Math.round(bareNode.requestsPerSecond), unit: 'req/s', target: 'reference', pass: true, note: cpuNote(bareNode).slice(2) });
    // Each route row is measured between two runs of the bare Express reference and its ratio is to
    // those two; the reference row reports all of its runs together.
    const bareExpress: HttpTarget = { url: `http://127.0.0.1:${expressPort}/`, serverPid: expressChild.pid };
    const referenceRuns: HttpFigures[] = [];
    const referenceRow = rows.length;
    const againstReference = async (subject: HttpTarget, atMeasureStart?: () => Promise<void>) => {
      const { subject: measured, reference } = await measureAgainst(subject, bareExpress, { durationSeconds: DURATION, warmupSeconds: WARMUP, atMeasureStart });
      referenceRuns.push(reference);
      const referenceRps = reference.requestsPerSecond;
      return { ...measured, referenceRps, ratio: +(measured.requestsPerSecond / referenceRps).toFixed(3), against: `against ${Math.round(referenceRps)} of bare Express` };
    };
    const session = await signIn(appUrl, 'bench@bench.plumewright.example', 'bench-password-1');
    let calcRps = 2_000;
    if (wanted('calc')) {
      const calc = await againstReference({
        url: `${appUrl}/api/calculations/stack-flow`, method: 'POST',
        headers: { 'content-type': 'application/json', cookie: session.cookie, 'x-csrf-token': session.csrf },
        body: JSON.stringify({ inputs: stackFlowInputs }), serverPid: appChild.pid,
      });
      if (calc.non2xx || calc.errors) throw new Error(`calculation route answered ${calc.non2xx} non-2xx and ${calc.errors} errors`);
      atLeast('calc-route-ratio', calc.ratio, 'x bare Express', 0.5, `${Math.round(calc.requestsPerSecond)} req/s ${calc.against}${cpuNote(calc)}`);
      atMost('calc-route-p99-ms', calc.p99Ms, 'ms', 50);
      calcRps = calc.requestsPerSecond;
    }

    if (wanted('drill')) {
      // Drill submission: grade + store. Enough attempts for the run at the calculation route's pace
      // (a submission does more work than a calculation); one that fails or runs short fails the row.
      const poolSize = Math.min(80_000, Math.ceil(calcRps * (DURATION + WARMUP) * 1.3) + 1_000);
      console.log(`[bench] drill submission: seeding ${poolSize} attempts with their right answers…`);
      const pool = await seedDrillAttempts(knex, user.id, company.id, poolSize);
      let next = 0;
      // The bench member has no other practice attempts: what is stored came from this run, and every
      // stored one must have been graded right (the answers are the exact ones).
      const storedSoFar = async () => (await knex('drill_attempts').where({ user_id: user.id, mode: 'practice' }).whereNotNull('submitted_at')
        .select<{ stored: number; perfect: number }[]>(knex.raw('count(*)::int as stored'), knex.raw('(count(*) filter (where score = 100))::int as perfect')))[0];
      let storedBefore = 0;
      const drill = await againstReference({
        url: appUrl, method: 'POST', serverPid: appChild.pid,
        headers: { 'content-type': 'application/json', cookie: session.cookie, 'x-csrf-token': session.csrf },
        requests: [{
          method: 'POST',
          setupRequest: (req) => {
            // Past the end of the pool the request names no attempt, answers 404, and fails the row.
            const attempt = pool[next++] ?? { id: '00000000-0000-4000-8000-000000000000', body: '{"answers":{}}' };
            return { ...req, path: `/api/drill-attempts/${attempt.id}/submission`, body: attempt.body };
          },
        }],
      }, async () => {
        storedBefore = (await storedSoFar()).stored;
      });
      const { stored: storedInAll, perfect } = await storedSoFar();
      const stored = storedInAll - storedBefore;
      const drillOk = drill.non2xx === 0 && drill.errors === 0 && perfect === storedInAll && next <= pool.length;
      // Only stored submissions count: the lower of autocannon's rate and the rows the measured run stored over its time.
      const drillRps = Math.min(drill.requestsPerSecond, stored / drill.seconds);
      const drillRatio = +(drillRps / drill.referenceRps).toFixed(3);
      const drillNote = `${Math.round(drillRps)} graded and stored/s ${drill.against}, ${storedInAll} of ${pool.length} seeded (${storedBefore} in the warm-up)${cpuNote(drill)}` + (drillOk ? '' : `; ${drill.non2xx} non-2xx, ${drill.errors} errors, ${storedInAll - perfect} below 100`);
      rows.push({ name: 'drill-submit-ratio', value: drillRatio, unit: 'x bare Express', target: '>= 0.1', pass: drillOk && drillRatio >= 0.1, note: drillNote });
      atMost('drill-submit-p99-ms', drill.p99Ms, 'ms', 100);
    }

    if (wanted('verify')) {
      // Public verification of one issued certificate: lookup, status and the lookup log, no session.
      const [pass] = await knex('exam_passes').insert({ user_id: user.id, company_id: company.id, area_id: 'particulate', score_pct: 88, duration_seconds: 2_700, passed_at: new Date() }).returning('id');
      const issued = await issueCertificateForPass({ knex, config: { appUrl } }, pass.id);
      const number = issued.certificate?.number;
      if (!number) throw new Error('bench certificate was not issued');
      const logBefore = Number((await knex('verification_log').count<{ count: string }[]>('* as count'))[0].count);
      const verify = await againstReference({ url: `${appUrl}/api/verify/${encodeURIComponent(number.toLowerCase().replaceAll('-', ' '))}`, serverPid: appChild.pid });
      if (verify.non2xx || verify.errors) throw new Error(`verification route answered ${verify.non2xx} non-2xx and ${verify.errors} errors`);
      // Every lookup is logged: wait for the log to hold them all (it is written in batches).
      const deadline = Date.now() + 10_000;
      let logged = 0;
      while (Date.now() < deadline) {
        logged = Number((await knex('verification_log').count<{ count: string }[]>('* as count'))[0].count) - logBefore;
        if (logged >= verify.allRequests) break;
        await new Promise((r) => setTimeout(r, 200));
      }
      rows.push({ name: 'verify-route-ratio', value: verify.ratio, unit: 'x bare Express', target: '>= 0.6', pass: verify.ratio >= 0.6 && logged >= verify.allRequests, note: `${Math.round(verify.requestsPerSecond)} req/s ${verify.against}, ${logged} of ${verify.allRequests} lookups logged (warm-up included)${cpuNote(verify)}` });
      atMost('verify-route-p99-ms', verify.p99Ms, 'ms', 50);
    }

    // The reference row: every bare Express run beside the route rows (measured alone when no route row ran).
    const references = referenceRuns.length ? referenceRuns : [await measureHttp({ ...bareExpress, durationSeconds: DURATION, warmupSeconds: WARMUP })];
    const referenceRps = references.reduce((sum, r) => sum + r.requestsPerSecond, 0) / references.length;
    const referenceCpu = references.every((r) => r.cpuMsPerRequest !== undefined) ? +(references.reduce((sum, r) => sum + (r.cpuMsPerRequest ?? 0), 0) / references.length).toFixed(3) : undefined;
    rows.splice(referenceRow, 0, {
      name: 'bare-express-rps', value: Math.round(referenceRps), unit: 'req/s', target: 'reference', pass: true,
      note: `${(referenceRps / bareNode.requestsPerSecond).toFixed(2)} of node:http${cpuNote({ cpuMsPerRequest: referenceCpu })}` + (referenceRuns.length ? `; beside each route row: ${referenceRuns.map((r) => Math.round(r.requestsPerSecond)).join(' / ')}` : ''),
    });

    if (wanted('pdf')) {
      console.log('[bench] certificate PDFs…');
      const single = await pdfTimings(60);
      atMost('pdf-median-ms', +single.medianMs.toFixed(1), 'ms', 80, 'median of 60 renders, embedded font and QR code');
      const batch = await pdfTimings(1000);
      atMost('pdf-batch-1000-s', +batch.totalSeconds.toFixed(1), 's', 60, '1,000 distinct certificates rendered and hashed in one process');
    }

    if (wanted('readiness')) {
      console.log('[bench] readiness matrix, 50 sequential requests per variant…');
      const manager = await signIn(appUrl, READINESS_MANAGER.email, READINESS_MANAGER.password);
      const plain = await timeReadiness(`${appUrl}/api/readiness?page=1&pageSize=50`, manager.cookie);
      if (plain.total !== READINESS_MEMBERS) throw new Error(`readiness listed ${plain.total} members, expected ${READINESS_MEMBERS}`);
      atMost('readiness-5000-median-ms', plain.medianMs, 'ms', 150, `${READINESS_MEMBERS} members × 6 areas, ${readinessSeed.certificates} certificates`);
      const sorted = await timeReadiness(`${appUrl}/api/readiness?page=3&pageSize=50&sort=particulate&order=asc`, manager.cookie);
      atMost('readiness-5000-sorted-ms', sorted.medianMs, 'ms', 150, 'sorted by particulate expiry, page 3');
      const filtered = await timeReadiness(`${appUrl}/api/readiness?page=1&pageSize=50&status=expiring&crew=Crew%203`, manager.cookie);
      atMost('readiness-5000-filter-ms', filtered.medianMs, 'ms', 150, `status=expiring, one crew: ${filtered.total} rows`);
    }

    if (wanted('bundle')) {
      atMost('entry-js-gzip-kb', +entryJsGzipKb().toFixed(1), 'KB', 150);
    }
    await knex.destroy();
  } finally {
    // Let each child stop on its own (a CPU profile is written on exit), SIGKILL after 10 s.
    await Promise.all(children.map((child) => new Promise<void>((resolve) => {
      if (child.exitCode !== null) return resolve();
      const force = setTimeout(() => child.kill('SIGKILL'), 10_000);
      child.once('exit', () => { clearTimeout(force); resolve(); });
      child.kill('SIGTERM');
    })));
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
