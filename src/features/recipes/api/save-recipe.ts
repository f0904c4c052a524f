import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { RecipeDetail, RecipeInput } from '../../runs/api/types';
import { recipeKey } from './get-recipe';
import { recipesKey } from './get-recipes';

/** POST /recipes (new) or PUT /recipes/:id (a new version of an existing recipe). */
export const saveRecipe = (workspaceId: string, recipeId: string | null, settings: RecipeInput) =>
  apiRequest<{ recipe: RecipeDetail }>(
    recipeId ? `/workspaces/${workspaceId}/recipes/${recipeId}` : `/workspaces/${workspaceId}/recipes`,
    { method: recipeId ? 'PUT' : 'POST', body: { settings } },
  ).then((r) => r.recipe);

export function useSaveRecipe(workspaceId: string, recipeId: string | null) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (settings: RecipeInput) => saveRecipe(workspaceId, recipeId, settings),
    onSuccess: async (recipe) => {
      queryClient.setQueryData(recipeKey(workspaceId, recipe.id), recipe);
      await queryClient.invalidateQueries({ queryKey: recipesKey(workspaceId) });
    },
  });
}
