import type { Knex } from 'knex';

export interface RecipeRow {
  id: string;
  workspace_id: string;
  slug: string;
  name: string;
  archived_at: Date | null;
  created_at: Date;
  updated_at: Date;
}

export interface RecipeVersionRow {
  id: string;
  recipe_id: string;
  version: number;
  settings: unknown;
  created_by: string | null;
  created_at: Date;
}

export async function listRecipes(db: Knex, workspaceId: string, archived: boolean | null): Promise<Array<RecipeRow & { version: number }>> {
  const q = db('recipes as r')
    .where('r.workspace_id', workspaceId)
    .select('r.*', db.raw('(select max(version) from recipe_versions v where v.recipe_id = r.id)::int as version'))
    .orderBy('r.updated_at', 'desc');
  if (archived === true) q.whereNotNull('r.archived_at');
  if (archived === false) q.whereNull('r.archived_at');
  return q;
}

export async function findRecipe(db: Knex, workspaceId: string, id: string): Promise<RecipeRow | undefined> {
  return db<RecipeRow>('recipes').where({ workspace_id: workspaceId, id }).first();
}

export async function findRecipeBySlug(db: Knex, workspaceId: string, slug: string): Promise<RecipeRow | undefined> {
  return db<RecipeRow>('recipes').where({ workspace_id: workspaceId, slug }).first();
}

export async function slugsLike(db: Knex, workspaceId: string, base: string): Promise<Set<string>> {
  const rows = await db('recipes').where('workspace_id', workspaceId).andWhere('slug', 'like', `${base}%`).select('slug');
  return new Set(rows.map((r: { slug: string }) => r.slug));
}

export async function insertRecipe(db: Knex, row: { workspace_id: string; slug: string; name: string }): Promise<RecipeRow> {
  const [inserted] = await db<RecipeRow>('recipes').insert(row).returning('*');
  return inserted!;
}

export async function updateRecipe(db: Knex, id: string, patch: Partial<Pick<RecipeRow, 'name' | 'archived_at'>>): Promise<void> {
  await db('recipes').where({ id }).update({ ...patch, updated_at: db.fn.now() });
}

export async function listVersions(db: Knex, recipeId: string): Promise<RecipeVersionRow[]> {
  return db<RecipeVersionRow>('recipe_versions').where({ recipe_id: recipeId }).orderBy('version', 'desc');
}

export async function findVersion(db: Knex, recipeId: string, version: number): Promise<RecipeVersionRow | undefined> {
  return db<RecipeVersionRow>('recipe_versions').where({ recipe_id: recipeId, version }).first();
}

export async function findVersionById(db: Knex, id: string): Promise<RecipeVersionRow | undefined> {
  return db<RecipeVersionRow>('recipe_versions').where({ id }).first();
}

export async function latestVersion(db: Knex, recipeId: string): Promise<RecipeVersionRow | undefined> {
  return db<RecipeVersionRow>('recipe_versions').where({ recipe_id: recipeId }).orderBy('version', 'desc').first();
}

export async function insertVersion(db: Knex, row: { recipe_id: string; version: number; settings: unknown; created_by: string | null }): Promise<RecipeVersionRow> {
  const [inserted] = await db<RecipeVersionRow>('recipe_versions')
    .insert({ ...row, settings: JSON.stringify(row.settings) as unknown })
    .returning('*');
  return inserted!;
}
