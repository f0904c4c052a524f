import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { InvitePreviewResponse } from '../../../../server/routes/workspaces.schema';

export const inviteKey = (token: string) => ['invite', token] as const;

export const getInvite = (token: string) => apiRequest<InvitePreviewResponse>(`/invites/${encodeURIComponent(token)}`);

export const inviteQueryOptions = (token: string) =>
  queryOptions({ queryKey: inviteKey(token), queryFn: () => getInvite(token), retry: false });

export const useInvite = (token: string) => useQuery(inviteQueryOptions(token));
