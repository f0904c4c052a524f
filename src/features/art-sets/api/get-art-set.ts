import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { ArtSetDetail } from '../../runs/api/types';
import { artSetsKey } from './get-art-sets';

export const artSetKey = (workspaceId: string, artSetId: string) => [...artSetsKey(workspaceId), 'detail', artSetId] as const;

/** `revision` null means the latest. */
export const getArtSet = (workspaceId: string, artSetId: string, revision: number | null) =>
  apiRequest<{ artSet: ArtSetDetail }>(
    `/workspaces/${workspaceId}/art-sets/${artSetId}${revision === null ? '' : `?revision=${revision}`}`,
  ).then((r) => r.artSet);

export const artSetQueryOptions = (workspaceId: string, artSetId: string, revision: number | null) =>
  queryOptions({ queryKey: [...artSetKey(workspaceId, artSetId), { revision }], queryFn: () => getArtSet(workspaceId, artSetId, revision) });

export const useArtSet = (workspaceId: string, artSetId: string, revision: number | null) =>
  useQuery({ ...artSetQueryOptions(workspaceId, artSetId, revision), placeholderData: keepPreviousData });

export const thumbnailUrl = (workspaceId: string, artSetId: string, revision: number, path: string) =>
  `/api/workspaces/${workspaceId}/art-sets/${artSetId}/revisions/${revision}/thumbnail?path=${encodeURIComponent(path)}`;
