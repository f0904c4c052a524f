import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { ArtSetSummary } from '../../runs/api/types';

/** Every art set query of a workspace starts with this key. */
export const artSetsKey = (workspaceId: string) => ['workspaces', workspaceId, 'art-sets'] as const;

export const getArtSets = (workspaceId: string) =>
  apiRequest<{ artSets: ArtSetSummary[] }>(`/workspaces/${workspaceId}/art-sets`).then((r) => r.artSets);

export const artSetsQueryOptions = (workspaceId: string) =>
  queryOptions({ queryKey: [...artSetsKey(workspaceId), 'list'], queryFn: () => getArtSets(workspaceId) });

export const useArtSets = (workspaceId: string) => useQuery(artSetsQueryOptions(workspaceId));
