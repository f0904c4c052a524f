import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { runKey } from './get-run';
import { runsKey } from './get-runs';
import type { RunDetail, StartRunBody } from './types';

export const createRun = (workspaceId: string, body: StartRunBody) =>
  apiRequest<{ run: RunDetail }>(`/workspaces/${workspaceId}/runs`, { method: 'POST', body }).then((r) => r.run);

export function useCreateRun(workspaceId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: StartRunBody) => createRun(workspaceId, body),
    onSuccess: async (run) => {
      queryClient.setQueryData(runKey(workspaceId, run.id), run);
      await queryClient.invalidateQueries({ queryKey: [...runsKey(workspaceId), 'list'] });
    },
  });
}
