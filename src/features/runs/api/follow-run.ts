import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { runKey } from './get-run';
import type { RunDetail } from './types';

export const followRun = (workspaceId: string, runId: string, follow: boolean) =>
  apiRequest<{ run: RunDetail }>(`/workspaces/${workspaceId}/runs/${runId}/follow`, { method: 'POST', body: { follow } }).then((r) => r.run);

export function useFollowRun(workspaceId: string, runId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (follow: boolean) => followRun(workspaceId, runId, follow),
    onSuccess: (run) => queryClient.setQueryData(runKey(workspaceId, runId), run),
  });
}
