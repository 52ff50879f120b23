/** `npm run migrate [latest|rollback-all|up|down]` against DATABASE_URL. */
import { createDb } from '../db';

const url = process.env.DATABASE_URL;
if (!url) {
  console.error('Set DATABASE_URL (npm start prints the local one).');
  process.exit(2);
}
const knex = createDb(url, { min: 0, max: 1 });
const action = process.argv[2] ?? 'latest';
try {
  if (action === 'latest') console.log(await knex.migrate.latest());
  else if (action === 'rollback-all') console.log(await knex.migrate.rollback(undefined, true));
  else if (action === 'up') console.log(await knex.migrate.up());
  else if (action === 'down') console.log(await knex.migrate.down());
  else throw new Error(`Unknown action ${action}`);
} finally {
  await knex.destroy();
}
