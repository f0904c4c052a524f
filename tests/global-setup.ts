// Starts the test cluster (its own data folder and port, so a running `npm start` is untouched),
// migrates the test database, builds the client for the browser test when it is stale, and hands
// the database URL to the app suite through DATABASE_URL.
import { ensureDatabase } from '../scripts/db.mjs';
import { buildClient, clientIsStale } from '../scripts/start.mjs';
import { createDb, migrateLatest } from '../server/db/knex.ts';

export const TEST_DATA_DIR = '.data/test';
export const TEST_PG_PORT = Number(process.env.BLEEDWRIGHT_TEST_PG_PORT ?? 54339);

export default async function setup() {
  const url = await ensureDatabase({ dataDir: TEST_DATA_DIR, port: TEST_PG_PORT, database: 'bleedwright_test', log: () => {} });
  process.env.DATABASE_URL = url;
  const db = createDb(url);
  try {
    await migrateLatest(db);
  } finally {
    await db.destroy();
  }
  if (clientIsStale()) buildClient();
}
