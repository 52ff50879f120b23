import type { Knex } from 'knex';

/** Start-up synchronisation of files into the database (course content, blueprints, prices). */
export async function syncOnStart(_knex: Knex) {
  // Later steps register their syncs here so npm start and the tests load the same content.
}
