/**
 * `npm test`: starts a throwaway PostgreSQL cluster and mail catcher on loopback, migrates a template
 * database (each test file copies it), builds the client and makes sure Chromium is there for E2E,
 * runs vitest, then stops and removes everything it started. Extra arguments go to vitest.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { spawn } from 'node:child_process';
import { aptInstall, freePort } from '../server/dev/exec';
import { dropDatabase, ensureDatabase, startCluster, withAdminClient } from '../server/dev/postgres';
import { startMailCatcher } from '../server/dev/services';
import { buildClientIfNeeded } from '../server/dev/client-build';
import { createDb, migrateLatest } from '../server/db';

const ROOT = path.resolve(import.meta.dirname, '..');
const args = process.argv.slice(2);
const projectArg = args.indexOf('--project');
const onlyProject = projectArg >= 0 ? args[projectArg + 1] : undefined;
const wantsE2e = !onlyProject || onlyProject === 'e2e';
const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';

/** Removes clusters left by test runs whose process is gone (a crash or a kill -9). */
function sweepAbandonedClusters() {
  const dataDir = path.join(ROOT, '.data');
  if (!fs.existsSync(dataDir)) return;
  for (const entry of fs.readdirSync(dataDir)) {
    const pid = Number(entry.match(/^postgres-(?:test|fault)-(\d+)$/)?.[1]);
    if (!pid || pid === process.pid) continue;
    try {
      process.kill(pid, 0);
    } catch {
      const dir = path.join(dataDir, entry);
      const postmaster = path.join(dir, 'data/postmaster.pid');
      if (fs.existsSync(postmaster)) {
        const serverPid = Number(fs.readFileSync(postmaster, 'utf8').split('\n')[0]);
        try { process.kill(serverPid, 'SIGINT'); } catch { /* already gone */ }
      }
      fs.rmSync(dir, { recursive: true, force: true });
    }
  }
}

async function main() {
  const started = Date.now();
  const cleanups: (() => Promise<void> | void)[] = [];
  const cleanup = async () => {
    for (const step of cleanups.reverse()) {
      try {
        await step();
      } catch (error) {
        console.error(`[test] cleanup: ${(error as Error).message}`);
      }
    }
  };
  process.once('SIGINT', () => void cleanup().finally(() => process.exit(130)));

  let exitCode = 1;
  try {
    if (wantsE2e && !fs.existsSync(CHROMIUM)) aptInstall(['chromium'], 'Chromium (for the browser tests)');

    // A cluster of this run's own, so runs side by side never stop each other's database.
    const clusterDir = path.join(ROOT, `.data/postgres-test-${process.pid}`);
    sweepAbandonedClusters();
    const cluster = await startCluster({ baseDir: clusterDir, port: await freePort(), throwaway: true, log: (m) => console.log(`[test] postgres: ${m}`) });
    cleanups.push(() => fs.rmSync(clusterDir, { recursive: true, force: true }));
    cleanups.push(() => cluster.stop());
    const template = `pw_template_${process.pid}`;
    await ensureDatabase(cluster.adminUrl(), template);
    cleanups.push(() => dropDatabase(cluster.adminUrl(), template));
    const knex = createDb(cluster.adminUrl(template), { min: 0, max: 1 });
    await migrateLatest(knex);
    await knex.destroy();
    // A template must have no open connections while test files copy it.
    await withAdminClient(cluster.adminUrl(), (c) => c.query(`select pg_terminate_backend(pid) from pg_stat_activity where datname = $1 and pid <> pg_backend_pid()`, [template]));

    const mailDir = fs.mkdtempSync(path.join(os.tmpdir(), 'pw-test-mail-'));
    cleanups.push(() => fs.rmSync(mailDir, { recursive: true, force: true }));
    const mail = await startMailCatcher({ smtpPort: await freePort(), webPort: await freePort(), mailDir, quiet: true });
    cleanups.push(mail.stop);

    if (wantsE2e) buildClientIfNeeded();
    console.log(`[test] services ready in ${((Date.now() - started) / 1000).toFixed(1)} s`);

    exitCode = await new Promise<number>((resolve) => {
      const child = spawn(process.execPath, [path.join(ROOT, 'node_modules/vitest/vitest.mjs'), 'run', ...args], {
        cwd: ROOT,
        stdio: 'inherit',
        env: {
          ...process.env,
          NODE_ENV: 'test',
          TEST_ADMIN_URL: cluster.adminUrl(),
          TEST_TEMPLATE_DB: template,
          MAIL_API_URL: mail.apiUrl,
          SMTP_PORT: String(mail.smtpPort),
          CHROMIUM_PATH: CHROMIUM,
        },
      });
      child.on('exit', (code) => resolve(code ?? 1));
    });
    // Test files drop their own databases; this sweeps any left by a crashed file.
    await withAdminClient(cluster.adminUrl(), async (c) => {
      const left = await c.query("select datname from pg_database where datname like 'pw_t_%'");
      for (const row of left.rows) await c.query(`drop database if exists "${row.datname}" with (force)`);
    });
  } catch (error) {
    console.error(error);
    exitCode = 1;
  } finally {
    await cleanup();
  }
  console.log(`[test] finished in ${((Date.now() - started) / 1000).toFixed(1)} s`);
  process.exit(exitCode);
}

void main();
