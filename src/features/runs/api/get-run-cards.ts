import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { RUN_POLL_MS } from './get-runs';
import { runKey } from './get-run';
import type { RunCard, Severity } from './types';

export const runCardsKey = (workspaceId: string, runId: string, severity: Severity | null) =>
  [...runKey(workspaceId, runId), 'cards', { severity }] as const;

export const getRunCards = (workspaceId: string, runId: string, severity: Severity | null) =>
  apiRequest<{ cards: RunCard[] }>(`/workspaces/${workspaceId}/runs/${runId}/cards${severity ? `?severity=${severity}` : ''}`).then(
    (r) => r.cards,
  );

export const runCardsQueryOptions = (workspaceId: string, runId: string, severity: Severity | null, live: boolean) =>
  queryOptions({
    queryKey: runCardsKey(workspaceId, runId, severity),
    queryFn: () => getRunCards(workspaceId, runId, severity),
    refetchInterval: live ? RUN_POLL_MS : false,
  });

/** `live` is true while the run is not terminal, so the table fills in as cards finish. */
export const useRunCards = (workspaceId: string, runId: string, severity: Severity | null, live: boolean) =>
  useQuery({ ...runCardsQueryOptions(workspaceId, runId, severity, live), placeholderData: keepPreviousData });
