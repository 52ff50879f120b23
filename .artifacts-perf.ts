import path from 'node:path';
import { startCluster, ensureDatabase } from './server/dev/postgres';
import { createDb, migrateLatest } from './server/db';
import { syncContent } from './server/services/content-sync';
import { seedReadinessCompany } from './tests/bench/readiness';
import { readinessPage } from './server/services/readiness';

const cluster = await startCluster({ baseDir: path.resolve('.data/postgres'), port: 54329, log: console.log });
if (!cluster.reused) throw new Error('expected the dev cluster running');
await ensureDatabase(cluster.adminUrl(), 'pw_readiness_perf');
const knex = createDb(cluster.adminUrl('pw_readiness_perf'), { min: 0, max: 2 });
await migrateLatest(knex);
let company = await knex('companies').where({ name: 'Bench Readiness Testing' }).first('id');
if (!company) {
  await syncContent(knex);
  const seeded = await seedReadinessCompany(knex);
  company = { id: seeded.companyId };
}
const q = { page: 1, pageSize: 50, sort: process.argv[2] ?? 'name', order: 'asc' as const };
for (let i = 0; i < 3; i++) await readinessPage(knex, company.id, q);
const times = [];
for (let i = 0; i < 15; i++) { const s = performance.now(); await readinessPage(knex, company.id, q); times.push(performance.now() - s); }
times.sort((a, b) => a - b);
console.log('median ms', times[7].toFixed(1), 'min', times[0].toFixed(1));
console.log(cluster.adminUrl('pw_readiness_perf'), company.id);
await knex.destroy();
