import knexFactory, { type Knex } from 'knex';
import { Model } from 'objection';
import pg from 'pg';
import { knexConfig } from '../knexfile';

// Dates come back as strings for DATE columns so a calendar day never shifts with the time zone.
pg.types.setTypeParser(1082, (value: string) => value);
// bigint counts fit comfortably in a double for our sizes.
pg.types.setTypeParser(20, (value: string) => Number(value));

export function createDb(databaseUrl: string, pool?: { min: number; max: number }): Knex {
  return knexFactory(knexConfig(databaseUrl, pool));
}

/** Objection models query through this knex unless given a transaction. */
export function bindModels(knex: Knex) {
  Model.knex(knex);
}

export async function migrateLatest(knex: Knex) {
  await knex.migrate.latest();
}
