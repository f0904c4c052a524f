import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { sharesKey } from './get-shares';
import type { CreateShareBody, ShareCreated } from './types';

export const createShare = (workspaceId: string, runId: string, body: CreateShareBody) =>
  apiRequest<{ share: ShareCreated }>(`/workspaces/${workspaceId}/runs/${runId}/shares`, { method: 'POST', body }).then((r) => r.share);

export function useCreateShare(workspaceId: string, runId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateShareBody) => createShare(workspaceId, runId, body),
    onSettled: () => queryClient.invalidateQueries({ queryKey: sharesKey(workspaceId, runId) }),
  });
}
