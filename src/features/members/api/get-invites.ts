import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { PendingInvite } from '../../../../server/routes/workspaces.schema';

export const invitesKey = (workspaceId: string) => ['workspaces', workspaceId, 'invites'] as const;

export const getInvites = (workspaceId: string) => apiRequest<PendingInvite[]>(`/workspaces/${workspaceId}/invites`);

export const invitesQueryOptions = (workspaceId: string) =>
  queryOptions({ queryKey: invitesKey(workspaceId), queryFn: () => getInvites(workspaceId) });

export const useInvites = (workspaceId: string, enabled: boolean) => useQuery({ ...invitesQueryOptions(workspaceId), enabled });
