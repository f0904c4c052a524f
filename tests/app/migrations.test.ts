import { afterAll, describe, expect, it } from 'vitest';
import pg from 'pg';
import { ensureDatabase } from '../../scripts/db.mjs';
import { createDb, migrateLatest, migrateRollbackAll, migrationSource } from '../../server/db/knex.ts';
import { TEST_DATA_DIR, TEST_PG_PORT } from '../global-setup';

// The tables of this foundation; later migrations add more, so the check is for inclusion.
const TABLES = [
  'art_set_entries', 'art_set_revisions', 'art_sets', 'invites', 'memberships', 'recipe_versions', 'recipes',
  'render_cache', 'render_log', 'run_cards', 'run_followers', 'runs', 'sessions', 'share_links', 'users', 'workspaces',
];

async function tablesIn(url: string): Promise<string[]> {
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  const { rows } = await client.query(
    `select table_name from information_schema.tables where table_schema = 'public' and table_name not like 'knex_%' order by 1`,
  );
  await client.end();
  return rows.map((r) => r.table_name);
}

describe('migrations', () => {
  let url: string;
  const saved = process.env.DATABASE_URL;
  afterAll(() => {
    process.env.DATABASE_URL = saved;
  });

  it('go up to the latest, all the way down, and up again on a scratch database', async () => {
    delete process.env.DATABASE_URL;
    url = await ensureDatabase({ dataDir: TEST_DATA_DIR, port: TEST_PG_PORT, database: 'bleedwright_migrations', log: () => {} });
    process.env.DATABASE_URL = saved;
    const db = createDb(url);
    try {
      await migrateRollbackAll(db); // a previous run may have left it migrated
      expect(await tablesIn(url)).toEqual([]);
      const files = await migrationSource.getMigrations([]);
      expect(files.length).toBeGreaterThanOrEqual(3);
      for (const f of files) expect(f).toMatch(/^\d{14}_[a-z0-9-]+\.ts$/); // timestamp + kebab-case

      expect(await migrateLatest(db)).toEqual(files);
      expect(await tablesIn(url)).toEqual(expect.arrayContaining(TABLES));
      expect(await migrateLatest(db)).toEqual([]); // idempotent

      expect((await migrateRollbackAll(db)).sort()).toEqual([...files].sort());
      expect(await tablesIn(url)).toEqual([]);

      await migrateLatest(db);
      expect(await tablesIn(url)).toEqual(expect.arrayContaining(TABLES));
      // The role check constraint holds.
      await db('workspaces').insert({ name: 'Scratch', slug: 'scratch' });
      await expect(db.raw(`insert into memberships (workspace_id, user_id, role) select id, gen_random_uuid(), 'admin' from workspaces`)).rejects.toThrow();
    } finally {
      await db.destroy();
    }
  });
});
