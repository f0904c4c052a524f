import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { RecipeDetail } from '../../runs/api/types';
import { recipesKey } from './get-recipes';

export const recipeKey = (workspaceId: string, recipeId: string) => [...recipesKey(workspaceId), 'detail', recipeId] as const;

export const getRecipe = (workspaceId: string, recipeId: string) =>
  apiRequest<{ recipe: RecipeDetail }>(`/workspaces/${workspaceId}/recipes/${recipeId}`).then((r) => r.recipe);

export const recipeQueryOptions = (workspaceId: string, recipeId: string) =>
  queryOptions({ queryKey: recipeKey(workspaceId, recipeId), queryFn: () => getRecipe(workspaceId, recipeId) });

export const useRecipe = (workspaceId: string, recipeId: string | undefined) =>
  useQuery({ ...recipeQueryOptions(workspaceId, recipeId ?? ''), enabled: Boolean(recipeId) });
