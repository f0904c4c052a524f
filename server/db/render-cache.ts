import type { Knex } from 'knex';

export interface RenderCacheRow {
  id: string;
  workspace_id: string;
  recipe_version_id: string;
  source_sha256: string;
  source_path: string;
  info: unknown;
  storage_key: string | null;
  created_at: Date;
}

type Key = { workspace_id: string; recipe_version_id: string; source_sha256: string; source_path: string };

export async function findCached(db: Knex, key: Key): Promise<RenderCacheRow | undefined> {
  return db<RenderCacheRow>('render_cache').where(key).first();
}

/** Records a render; a second render of the same key (a retry) keeps the first row. */
export async function upsertCached(db: Knex, key: Key, info: unknown, storageKey: string | null): Promise<void> {
  await db('render_cache')
    .insert({ ...key, info: JSON.stringify(info), storage_key: storageKey })
    .onConflict(['workspace_id', 'recipe_version_id', 'source_sha256', 'source_path'])
    .ignore();
}

export async function logRender(db: Knex, runId: string, cardId: string): Promise<void> {
  await db('render_log').insert({ run_id: runId, card_id: cardId, pid: process.pid });
}
