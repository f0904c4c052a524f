import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { TokenListResponse } from '../../../../server/routes/tokens.schema';

export const tokensKey = (workspaceId: string) => ['workspaces', workspaceId, 'tokens'] as const;

export const getTokens = (workspaceId: string) => apiRequest<TokenListResponse>(`/workspaces/${workspaceId}/tokens`).then((r) => r.tokens);

export const tokensQueryOptions = (workspaceId: string) => queryOptions({ queryKey: tokensKey(workspaceId), queryFn: () => getTokens(workspaceId) });

export const useTokens = (workspaceId: string) => useQuery(tokensQueryOptions(workspaceId));
