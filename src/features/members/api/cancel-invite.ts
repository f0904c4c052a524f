import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { invitesKey } from './get-invites';

export const cancelInvite = (workspaceId: string, inviteId: string) =>
  apiRequest<void>(`/workspaces/${workspaceId}/invites/${inviteId}`, { method: 'DELETE' });

export function useCancelInvite(workspaceId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (inviteId: string) => cancelInvite(workspaceId, inviteId),
    onSettled: () => queryClient.invalidateQueries({ queryKey: invitesKey(workspaceId) }),
  });
}
