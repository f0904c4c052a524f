import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { CreateTokenBody, CreateTokenResponse } from '../../../../server/routes/tokens.schema';
import { tokensKey } from './get-tokens';

export const createToken = (workspaceId: string, body: CreateTokenBody) =>
  apiRequest<CreateTokenResponse>(`/workspaces/${workspaceId}/tokens`, { method: 'POST', body });

export function useCreateToken(workspaceId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateTokenBody) => createToken(workspaceId, body),
    onSettled: () => queryClient.invalidateQueries({ queryKey: tokensKey(workspaceId) }),
  });
}
