import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { CreateInviteBody, PendingInvite } from '../../../../server/routes/workspaces.schema';
import { invitesKey } from './get-invites';

export const createInvite = (workspaceId: string, body: CreateInviteBody) =>
  apiRequest<PendingInvite>(`/workspaces/${workspaceId}/invites`, { method: 'POST', body });

export function useCreateInvite(workspaceId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateInviteBody) => createInvite(workspaceId, body),
    onSuccess: async () => {
      await queryClient.invalidateQueries({ queryKey: invitesKey(workspaceId) });
      await queryClient.invalidateQueries({ queryKey: ['workspaces', workspaceId, 'mail'] });
    },
  });
}
