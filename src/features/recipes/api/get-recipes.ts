import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { RecipeSummary } from '../../runs/api/types';

/** Every recipe query of a workspace starts with this key, so one invalidation refreshes them all. */
export const recipesKey = (workspaceId: string) => ['workspaces', workspaceId, 'recipes'] as const;

export const getRecipes = (workspaceId: string, archived: boolean) =>
  apiRequest<{ recipes: RecipeSummary[] }>(`/workspaces/${workspaceId}/recipes?archived=${archived}`).then((r) => r.recipes);

export const recipesQueryOptions = (workspaceId: string, archived = false) =>
  queryOptions({ queryKey: [...recipesKey(workspaceId), 'list', { archived }], queryFn: () => getRecipes(workspaceId, archived) });

export const useRecipes = (workspaceId: string, archived = false) => useQuery(recipesQueryOptions(workspaceId, archived));
