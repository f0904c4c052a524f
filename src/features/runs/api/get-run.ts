import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { isTerminalRunState } from '../../../../shared/run-states';
import { RUN_POLL_MS, runsKey } from './get-runs';
import type { RunDetail } from './types';

export const runKey = (workspaceId: string, runId: string) => [...runsKey(workspaceId), 'detail', runId] as const;

export const getRun = (workspaceId: string, runId: string) =>
  apiRequest<{ run: RunDetail }>(`/workspaces/${workspaceId}/runs/${runId}`).then((r) => r.run);

export const runQueryOptions = (workspaceId: string, runId: string) =>
  queryOptions({
    queryKey: runKey(workspaceId, runId),
    queryFn: () => getRun(workspaceId, runId),
    // Poll while the run moves; stop for good once it is done, failed or canceled.
    refetchInterval: (query) => (query.state.data && isTerminalRunState(query.state.data.state) ? false : RUN_POLL_MS),
  });

export const useRun = (workspaceId: string, runId: string) => useQuery(runQueryOptions(workspaceId, runId));

export const runFileUrl = (workspaceId: string, runId: string, name: string) =>
  `/api/workspaces/${workspaceId}/runs/${runId}/files/${encodeURIComponent(name)}`;

export const cardImageUrl = (workspaceId: string, runId: string, cardId: string, size: 'thumb' | 'full') =>
  `/api/workspaces/${workspaceId}/runs/${runId}/cards/${cardId}/image?size=${size}`;
