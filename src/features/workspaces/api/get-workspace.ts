import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { WorkspaceSummary } from '../../../../server/routes/workspaces.schema';

export const workspaceKey = (workspaceId: string) => ['workspaces', workspaceId] as const;

export const getWorkspace = (workspaceId: string) => apiRequest<WorkspaceSummary>(`/workspaces/${workspaceId}`);

export const workspaceQueryOptions = (workspaceId: string) =>
  queryOptions({ queryKey: workspaceKey(workspaceId), queryFn: () => getWorkspace(workspaceId) });

export const useWorkspace = (workspaceId: string) => useQuery(workspaceQueryOptions(workspaceId));
