import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { CapturedMailView } from '../../../../server/routes/workspaces.schema';

export const mailKey = (workspaceId: string) => ['workspaces', workspaceId, 'mail'] as const;

export const getMail = (workspaceId: string) => apiRequest<CapturedMailView[]>(`/workspaces/${workspaceId}/mail`);

export const mailQueryOptions = (workspaceId: string) =>
  queryOptions({ queryKey: mailKey(workspaceId), queryFn: () => getMail(workspaceId), refetchInterval: 5000 });

export const useMail = (workspaceId: string) => useQuery(mailQueryOptions(workspaceId));
