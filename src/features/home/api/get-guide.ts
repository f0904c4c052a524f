import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { GuideProgress } from '../../../../shared/api/runs';

export const guideKey = (workspaceId: string) => ['workspaces', workspaceId, 'guide'] as const;

export const getGuide = (workspaceId: string) => apiRequest<{ guide: GuideProgress }>(`/workspaces/${workspaceId}/guide`).then((r) => r.guide);

/** The guide steps the server recorded for this member (a card opened at full size, a combined PDF downloaded). */
export const guideQueryOptions = (workspaceId: string) => queryOptions({ queryKey: guideKey(workspaceId), queryFn: () => getGuide(workspaceId) });

export const useGuide = (workspaceId: string) => useQuery(guideQueryOptions(workspaceId));
