import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { isTerminalRunState } from '../../../../shared/run-states';
import type { RunSummary } from './types';

/** Every run query of a workspace starts with this key. */
export const runsKey = (workspaceId: string) => ['workspaces', workspaceId, 'runs'] as const;

/** How often a page asks again while a run is still queued or running. */
export const RUN_POLL_MS = 1500;

export const getRuns = (workspaceId: string, limit = 50) =>
  apiRequest<{ runs: RunSummary[] }>(`/workspaces/${workspaceId}/runs?limit=${limit}`).then((r) => r.runs);

export const runsQueryOptions = (workspaceId: string) =>
  queryOptions({
    queryKey: [...runsKey(workspaceId), 'list'],
    queryFn: () => getRuns(workspaceId),
    refetchInterval: (query) => (query.state.data?.some((r) => !isTerminalRunState(r.state)) ? RUN_POLL_MS : false),
  });

export const useRuns = (workspaceId: string) => useQuery(runsQueryOptions(workspaceId));
