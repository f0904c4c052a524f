import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { RecipeDetail } from '../../runs/api/types';
import { recipesKey } from './get-recipes';

export const archiveRecipe = (workspaceId: string, recipeId: string, archived: boolean) =>
  apiRequest<{ recipe: RecipeDetail }>(`/workspaces/${workspaceId}/recipes/${recipeId}/archive`, { method: 'POST', body: { archived } }).then(
    (r) => r.recipe,
  );

export function useArchiveRecipe(workspaceId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: { recipeId: string; archived: boolean }) => archiveRecipe(workspaceId, input.recipeId, input.archived),
    onSettled: () => queryClient.invalidateQueries({ queryKey: recipesKey(workspaceId) }),
  });
}
