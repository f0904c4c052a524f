import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { WorkspaceSummary } from '../../../../server/routes/workspaces.schema';

export const workspacesKey = ['workspaces'] as const;

export const getWorkspaces = () => apiRequest<WorkspaceSummary[]>('/workspaces');

export const workspacesQueryOptions = () => queryOptions({ queryKey: workspacesKey, queryFn: getWorkspaces });

export const useWorkspaces = (enabled = true) => useQuery({ ...workspacesQueryOptions(), enabled });
