import { createDb } from './server/db';
const [url, companyId] = [process.argv[2], process.argv[3]];
const knex = createDb(url, { min: 0, max: 2 });
const areas = (await knex('areas').orderBy('sort_order').pluck('id')) as string[];
const today = new Date().toISOString().slice(0, 10);
knex.on('query', () => {});
const mod = await import('./server/services/readiness');
// Reach the internal SQL through a query listener.
let captured: { sql: string; bindings: unknown[] } | undefined;
knex.on('query', (q: { sql: string; bindings: unknown[] }) => { if (q.sql.includes('paged as')) captured ??= q; });
await mod.readinessPage(knex, companyId, { page: 1, pageSize: 50, sort: process.argv[4] ?? 'name', order: 'asc' });
const res = await knex.raw(`explain (analyze, buffers) ${captured!.sql.replace(/\$\d+/g, '?')}`, captured!.bindings as never);
console.log(res.rows.map((r: Record<string, string>) => r['QUERY PLAN']).join('\n'));
void areas; void today;
await knex.destroy();
