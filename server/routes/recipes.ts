import { Router } from 'express';
import { z } from 'zod';
import { archiveBodySchema, recipeBodySchema, recipeListQuerySchema, type RecipeListResponse, type RecipeResponse, type RecipeVersionResponse } from '../../shared/api/runs.ts';
import type { AppDeps } from '../context.ts';
import { notFound } from '../errors.ts';
import { ANY_ROLE, requireMember } from '../middleware/auth.ts';
import { WRITERS } from './runs.ts';
import { archiveRecipe, createRecipe, duplicateRecipe, recipeDetail, recipeSummaries, recipeVersion, saveRecipe } from '../services/recipes.ts';

const idParam = z.uuid();
export const parseId = (raw: unknown, what: string) => {
  const parsed = idParam.safeParse(raw);
  if (!parsed.success) throw notFound(what);
  return parsed.data;
};

/** Mounted at /api/workspaces/:workspaceId/recipes. */
export function recipeRoutes(deps: AppDeps): Router {
  const router = Router({ mergeParams: true });
  const db = deps.db;
  const read = requireMember(db, ANY_ROLE);
  const write = requireMember(db, WRITERS);

  router.get('/', read, async (req, res) => {
    const q = recipeListQuerySchema.parse(req.query);
    const archived = q.archived === undefined ? false : q.archived === 'true';
    const body: RecipeListResponse = { recipes: await recipeSummaries(db, req.member!.workspaceId, archived) };
    res.json(body);
  });

  router.post('/', write, async (req, res) => {
    const { settings } = recipeBodySchema.parse(req.body);
    const body: RecipeResponse = { recipe: await createRecipe(db, req.member!.workspaceId, req.member!.userId, settings) };
    res.status(201).json(body);
  });

  router.get('/:recipeId', read, async (req, res) => {
    const body: RecipeResponse = { recipe: await recipeDetail(db, req.member!.workspaceId, parseId(req.params.recipeId, 'That recipe')) };
    res.json(body);
  });

  router.put('/:recipeId', write, async (req, res) => {
    const id = parseId(req.params.recipeId, 'That recipe');
    const { settings } = recipeBodySchema.parse(req.body);
    const body: RecipeResponse = { recipe: await saveRecipe(db, req.member!.workspaceId, id, req.member!.userId, settings) };
    res.json(body);
  });

  router.get('/:recipeId/versions/:version', read, async (req, res) => {
    const version = Number(req.params.version);
    if (!Number.isInteger(version) || version < 1) throw notFound('That recipe version');
    const body: RecipeVersionResponse = await recipeVersion(db, req.member!.workspaceId, parseId(req.params.recipeId, 'That recipe'), version);
    res.json(body);
  });

  router.post('/:recipeId/duplicate', write, async (req, res) => {
    const body: RecipeResponse = { recipe: await duplicateRecipe(db, req.member!.workspaceId, parseId(req.params.recipeId, 'That recipe'), req.member!.userId) };
    res.status(201).json(body);
  });

  router.post('/:recipeId/archive', write, async (req, res) => {
    const id = parseId(req.params.recipeId, 'That recipe');
    const { archived } = archiveBodySchema.parse(req.body);
    const body: RecipeResponse = { recipe: await archiveRecipe(db, req.member!.workspaceId, id, archived, deps.clock()) };
    res.json(body);
  });

  return router;
}
