import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { PublicShare } from '../../runs/api/types';

export const publicShareKey = (token: string) => ['share', token] as const;

export const getPublicShare = (token: string) =>
  apiRequest<{ share: PublicShare }>(`/share/${encodeURIComponent(token)}`).then((r) => r.share);

export const publicShareQueryOptions = (token: string) =>
  queryOptions({ queryKey: publicShareKey(token), queryFn: () => getPublicShare(token) });

export const usePublicShare = (token: string) => useQuery(publicShareQueryOptions(token));

export const publicShareFileUrl = (token: string, name: string) =>
  `/api/share/${encodeURIComponent(token)}/files/${encodeURIComponent(name)}`;
