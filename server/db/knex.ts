import { readdirSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import knexFactory, { type Knex } from 'knex';

export const MIGRATIONS_DIR = resolve(dirname(fileURLToPath(import.meta.url)), '../../migrations');

interface MigrationModule {
  up(knex: Knex): Promise<void>;
  down(knex: Knex): Promise<void>;
}

// Our own migration source: the files are TypeScript, and importing them from our code (run by tsx
// or vitest) avoids knex's own loader, which cannot import .ts files.
export const migrationSource: Knex.MigrationSource<string> = {
  async getMigrations() {
    return readdirSync(MIGRATIONS_DIR)
      .filter((f) => /^\d{14}_[a-z0-9-]+\.ts$/.test(f))
      .sort();
  },
  getMigrationName(file) {
    return file;
  },
  async getMigration(file) {
    return (await import(pathToFileURL(join(MIGRATIONS_DIR, file)).href)) as MigrationModule;
  },
};

export function createDb(databaseUrl: string, pool: { min: number; max: number } = { min: 0, max: 10 }): Knex {
  return knexFactory({ client: 'pg', connection: databaseUrl, pool });
}

export async function migrateLatest(db: Knex): Promise<string[]> {
  const [, applied] = await db.migrate.latest({ migrationSource });
  return applied as string[];
}

export async function migrateRollbackAll(db: Knex): Promise<string[]> {
  const [, undone] = await db.migrate.rollback({ migrationSource }, true);
  return undone as string[];
}
