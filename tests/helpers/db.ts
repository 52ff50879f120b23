import crypto from 'node:crypto';
import { dropDatabase, withAdminClient } from '../../server/dev/postgres';

/** A fresh database for one test file, copied from the migrated template; dropped at the end. */
export async function createTestDatabase() {
  const adminUrl = process.env.TEST_ADMIN_URL!;
  const template = process.env.TEST_TEMPLATE_DB!;
  const name = `pw_t_${crypto.randomBytes(6).toString('hex')}`;
  await withAdminClient(adminUrl, (c) => c.query(`create database "${name}" template "${template}"`));
  const url = new URL(adminUrl);
  url.pathname = `/${name}`;
  return { name, url: url.toString(), drop: () => dropDatabase(adminUrl, name) };
}
