import { describe, expect, it } from 'vitest';
import pg from 'pg';
import { ensureDatabase } from '../../scripts/db.mjs';
import { TEST_DATA_DIR, TEST_PG_PORT } from '../global-setup';

describe('embedded PostgreSQL', () => {
  it('reuses the running cluster and creates a missing database', async () => {
    const saved = process.env.DATABASE_URL;
    delete process.env.DATABASE_URL;
    try {
      const url = await ensureDatabase({ dataDir: TEST_DATA_DIR, port: TEST_PG_PORT, database: 'bleedwright_lifecycle', log: () => {} });
      expect(url).toMatch(new RegExp(`@127\\.0\\.0\\.1:${TEST_PG_PORT}/bleedwright_lifecycle$`));
      const client = new pg.Client({ connectionString: url });
      await client.connect();
      const { rows } = await client.query('select current_database() as db, inet_server_addr()::text as addr');
      await client.end();
      expect(rows[0]).toEqual({ db: 'bleedwright_lifecycle', addr: '127.0.0.1/32' });
      expect(await ensureDatabase({ dataDir: TEST_DATA_DIR, port: TEST_PG_PORT, database: 'bleedwright_lifecycle', log: () => {} })).toBe(url);
    } finally {
      process.env.DATABASE_URL = saved;
    }
  });
});
