import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { Member } from '../../../../server/routes/workspaces.schema';

export const membersKey = (workspaceId: string) => ['workspaces', workspaceId, 'members'] as const;

export const getMembers = (workspaceId: string) => apiRequest<Member[]>(`/workspaces/${workspaceId}/members`);

export const membersQueryOptions = (workspaceId: string) =>
  queryOptions({ queryKey: membersKey(workspaceId), queryFn: () => getMembers(workspaceId) });

export const useMembers = (workspaceId: string) => useQuery(membersQueryOptions(workspaceId));
