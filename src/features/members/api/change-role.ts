import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { ChangeRoleBody } from '../../../../server/routes/workspaces.schema';
import { membersKey } from './get-members';

export const changeRole = (workspaceId: string, userId: string, body: ChangeRoleBody) =>
  apiRequest<void>(`/workspaces/${workspaceId}/members/${userId}`, { method: 'PATCH', body });

export function useChangeRole(workspaceId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: { userId: string } & ChangeRoleBody) => changeRole(workspaceId, input.userId, { role: input.role }),
    onSettled: () => queryClient.invalidateQueries({ queryKey: membersKey(workspaceId) }),
  });
}
