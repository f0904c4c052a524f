import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { RecipeDetail } from '../../runs/api/types';
import { recipesKey } from './get-recipes';

export const duplicateRecipe = (workspaceId: string, recipeId: string) =>
  apiRequest<{ recipe: RecipeDetail }>(`/workspaces/${workspaceId}/recipes/${recipeId}/duplicate`, { method: 'POST', body: {} }).then(
    (r) => r.recipe,
  );

export function useDuplicateRecipe(workspaceId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (recipeId: string) => duplicateRecipe(workspaceId, recipeId),
    onSettled: () => queryClient.invalidateQueries({ queryKey: recipesKey(workspaceId) }),
  });
}
