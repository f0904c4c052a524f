import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { Recipe } from '../../runs/api/types';
import { recipeKey } from './get-recipe';

export const recipeVersionKey = (workspaceId: string, recipeId: string, version: number) =>
  [...recipeKey(workspaceId, recipeId), 'version', version] as const;

export const getRecipeVersion = (workspaceId: string, recipeId: string, version: number) =>
  apiRequest<{ version: number; settings: Recipe }>(`/workspaces/${workspaceId}/recipes/${recipeId}/versions/${version}`);

export const recipeVersionQueryOptions = (workspaceId: string, recipeId: string, version: number) =>
  queryOptions({
    queryKey: recipeVersionKey(workspaceId, recipeId, version),
    queryFn: () => getRecipeVersion(workspaceId, recipeId, version),
    // A version never changes once saved.
    staleTime: Infinity,
  });

export const useRecipeVersion = (workspaceId: string, recipeId: string, version: number | null) =>
  useQuery({ ...recipeVersionQueryOptions(workspaceId, recipeId, version ?? 0), enabled: version !== null });
