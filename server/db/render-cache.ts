import type { Knex } from 'knex';

export interface RenderCacheRow {
  id: string;
  workspace_id: string;
  recipe_version_id: string;
  engine: string;
  source_sha256: string;
  source_path: string;
  info: unknown;
  storage_key: string | null;
  created_at: Date;
}

type Key = { workspace_id: string; recipe_version_id: string; engine: string; source_sha256: string; source_path: string };

/**
 * Every cached render of one workspace and recipe version among `sources` (sha256 and path pairs), in
 * one query: a rerun's plan looks up all its cards at once.
 */
export async function findCachedMany(
  db: Knex,
  scope: Pick<Key, 'workspace_id' | 'recipe_version_id' | 'engine'>,
  sources: ReadonlyArray<Pick<Key, 'source_sha256' | 'source_path'>>,
): Promise<RenderCacheRow[]> {
  if (sources.length === 0) return [];
  return db<RenderCacheRow>('render_cache')
    .where(scope)
    .whereIn(
      ['source_sha256', 'source_path'],
      sources.map((s) => [s.source_sha256, s.source_path]),
    );
}

// A performed render is recorded here (and logged in render_log) by settleRender in run-cards.ts, in the
// statement that settles its card.
