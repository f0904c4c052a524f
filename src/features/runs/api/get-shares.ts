import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { runKey } from './get-run';
import type { ShareRow } from './types';

export const sharesKey = (workspaceId: string, runId: string) => [...runKey(workspaceId, runId), 'shares'] as const;

export const getShares = (workspaceId: string, runId: string) =>
  apiRequest<{ shares: ShareRow[] }>(`/workspaces/${workspaceId}/runs/${runId}/shares`).then((r) => r.shares);

export const sharesQueryOptions = (workspaceId: string, runId: string) =>
  queryOptions({ queryKey: sharesKey(workspaceId, runId), queryFn: () => getShares(workspaceId, runId) });

export const useShares = (workspaceId: string, runId: string, enabled: boolean) => useQuery({ ...sharesQueryOptions(workspaceId, runId), enabled });
