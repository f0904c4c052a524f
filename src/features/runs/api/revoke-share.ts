import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { sharesKey } from './get-shares';

export const revokeShare = (workspaceId: string, runId: string, shareId: string) =>
  apiRequest<void>(`/workspaces/${workspaceId}/runs/${runId}/shares/${shareId}`, { method: 'DELETE' });

export function useRevokeShare(workspaceId: string, runId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (shareId: string) => revokeShare(workspaceId, runId, shareId),
    onSettled: () => queryClient.invalidateQueries({ queryKey: sharesKey(workspaceId, runId) }),
  });
}
