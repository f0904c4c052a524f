import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { runKey } from './get-run';
import { runsKey } from './get-runs';
import type { RunDetail } from './types';

export const cancelRun = (workspaceId: string, runId: string) =>
  apiRequest<{ run: RunDetail }>(`/workspaces/${workspaceId}/runs/${runId}/cancel`, { method: 'POST', body: {} }).then((r) => r.run);

export function useCancelRun(workspaceId: string, runId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => cancelRun(workspaceId, runId),
    onSuccess: (run) => queryClient.setQueryData(runKey(workspaceId, runId), run),
    onSettled: () => queryClient.invalidateQueries({ queryKey: runsKey(workspaceId) }),
  });
}
