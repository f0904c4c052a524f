import { isDeepStrictEqual } from 'node:util';
import type { Knex } from 'knex';
import type { RecipeDetail, RecipeSummary } from '../../shared/api/runs.ts';
import { slugify } from '../../shared/naming.ts';
import { recipeSchema, type Recipe, type RecipeInput } from '../../shared/recipe.ts';
import { notFound } from '../errors.ts';
import {
  findRecipe,
  findVersion,
  insertRecipe,
  insertVersion,
  latestVersion,
  listRecipes,
  listVersions,
  slugsLike,
  updateRecipe,
  type RecipeRow,
} from '../db/recipes.ts';

const iso = (d: Date | string) => new Date(d).toISOString();

function summary(row: RecipeRow, version: number): RecipeSummary {
  return { id: row.id, slug: row.slug, name: row.name, archived: row.archived_at !== null, version, updatedAt: iso(row.updated_at) };
}

export async function recipeSummaries(db: Knex, workspaceId: string, archived: boolean | null): Promise<RecipeSummary[]> {
  return (await listRecipes(db, workspaceId, archived)).map((r) => summary(r, r.version));
}

export async function recipeDetail(db: Knex, workspaceId: string, recipeId: string): Promise<RecipeDetail> {
  const row = await findRecipe(db, workspaceId, recipeId);
  if (!row) throw notFound('That recipe');
  const versions = await listVersions(db, row.id);
  const latest = versions[0]!;
  return {
    ...summary(row, latest.version),
    settings: recipeSchema.parse(latest.settings),
    versions: versions.map((v) => ({ version: v.version, createdAt: iso(v.created_at), createdBy: v.created_by })),
  };
}

async function freeSlug(db: Knex, workspaceId: string, name: string): Promise<string> {
  const base = slugify(name);
  const taken = await slugsLike(db, workspaceId, base);
  if (!taken.has(base)) return base;
  for (let i = 2; ; i++) if (!taken.has(`${base}-${i}`)) return `${base}-${i}`;
}

/** Creates a recipe with version 1. Settings are stored with every default applied. */
export async function createRecipe(db: Knex, workspaceId: string, userId: string | null, input: RecipeInput | Recipe): Promise<RecipeDetail> {
  const settings = recipeSchema.parse(input);
  const id = await db.transaction(async (trx) => {
    // Serialises slug choice per workspace so two saves of the same name do not collide.
    await trx.raw('select pg_advisory_xact_lock(hashtext(?))', [`recipes:${workspaceId}`]);
    const row = await insertRecipe(trx, { workspace_id: workspaceId, slug: await freeSlug(trx, workspaceId, settings.name), name: settings.name });
    await insertVersion(trx, { recipe_id: row.id, version: 1, settings, created_by: userId });
    return row.id;
  });
  return recipeDetail(db, workspaceId, id);
}

/** Saves settings as a new version; identical settings make no version. The slug never changes. */
export async function saveRecipe(db: Knex, workspaceId: string, recipeId: string, userId: string | null, input: RecipeInput): Promise<RecipeDetail> {
  const settings = recipeSchema.parse(input);
  await db.transaction(async (trx) => {
    const row = await trx('recipes').where({ workspace_id: workspaceId, id: recipeId }).forUpdate().first();
    if (!row) throw notFound('That recipe');
    const latest = (await latestVersion(trx, recipeId))!;
    if (isDeepStrictEqual(recipeSchema.parse(latest.settings), settings)) return;
    await insertVersion(trx, { recipe_id: recipeId, version: latest.version + 1, settings, created_by: userId });
    await updateRecipe(trx, recipeId, { name: settings.name });
  });
  return recipeDetail(db, workspaceId, recipeId);
}

export async function recipeVersion(db: Knex, workspaceId: string, recipeId: string, version: number): Promise<{ version: number; settings: Recipe }> {
  const row = await findRecipe(db, workspaceId, recipeId);
  const v = row ? await findVersion(db, row.id, version) : undefined;
  if (!v) throw notFound('That recipe version');
  return { version: v.version, settings: recipeSchema.parse(v.settings) };
}

export async function duplicateRecipe(db: Knex, workspaceId: string, recipeId: string, userId: string | null): Promise<RecipeDetail> {
  const source = await recipeDetail(db, workspaceId, recipeId);
  const name = `${source.name} (copy)`.slice(0, 120);
  return createRecipe(db, workspaceId, userId, { ...source.settings, name });
}

export async function archiveRecipe(db: Knex, workspaceId: string, recipeId: string, archived: boolean, now: Date): Promise<RecipeDetail> {
  const row = await findRecipe(db, workspaceId, recipeId);
  if (!row) throw notFound('That recipe');
  await updateRecipe(db, recipeId, { archived_at: archived ? (row.archived_at ?? now) : null });
  return recipeDetail(db, workspaceId, recipeId);
}
