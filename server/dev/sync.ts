import type { Knex } from 'knex';
import { describeSync, syncContent } from '../services/content-sync';

/** Start-up synchronisation of files into the database (course content, blueprints, prices). */
export async function syncOnStart(knex: Knex) {
  // Later steps register their syncs here so npm start and the tests load the same content.
  // Broken content throws a ContentError listing each file and field: the app does not start half-loaded.
  console.log(describeSync(await syncContent(knex)));
}
