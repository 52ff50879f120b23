import pg from 'pg';
const c = new pg.Client({ connectionString: process.argv[2] });
await c.connect();
const r = await c.query(process.argv[3]);
console.table(r.rows);
await c.end();
