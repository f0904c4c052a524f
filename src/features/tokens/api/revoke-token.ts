import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { tokensKey } from './get-tokens';

export const revokeToken = (workspaceId: string, tokenId: string) => apiRequest<void>(`/workspaces/${workspaceId}/tokens/${tokenId}`, { method: 'DELETE' });

export function useRevokeToken(workspaceId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (tokenId: string) => revokeToken(workspaceId, tokenId),
    onSettled: () => queryClient.invalidateQueries({ queryKey: tokensKey(workspaceId) }),
  });
}
