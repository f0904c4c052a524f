import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { membersKey } from './get-members';

export const removeMember = (workspaceId: string, userId: string) =>
  apiRequest<void>(`/workspaces/${workspaceId}/members/${userId}`, { method: 'DELETE' });

export function useRemoveMember(workspaceId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (userId: string) => removeMember(workspaceId, userId),
    onSettled: () => queryClient.invalidateQueries({ queryKey: membersKey(workspaceId) }),
  });
}
