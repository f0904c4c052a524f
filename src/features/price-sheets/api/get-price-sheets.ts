import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { PriceSheet, PriceSheetListResponse } from '../../../../shared/api/price-sheets';

/** Every price sheet query of a workspace starts with this key. */
export const priceSheetsKey = (workspaceId: string) => ['workspaces', workspaceId, 'price-sheets'] as const;

export const getPriceSheets = (workspaceId: string): Promise<PriceSheet[]> =>
  apiRequest<PriceSheetListResponse>(`/workspaces/${workspaceId}/price-sheets`).then((r) => r.priceSheets);

export const priceSheetsQueryOptions = (workspaceId: string) =>
  queryOptions({ queryKey: [...priceSheetsKey(workspaceId), 'list'], queryFn: () => getPriceSheets(workspaceId) });

export const usePriceSheets = (workspaceId: string) => useQuery(priceSheetsQueryOptions(workspaceId));
