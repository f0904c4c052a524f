import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import type { PriceSheet, PriceSheetBody, PriceSheetResponse } from '../../../../shared/api/price-sheets';
import { priceSheetsKey } from './get-price-sheets';

/** Creates a sheet (id null) or replaces one whole. */
export const savePriceSheet = (workspaceId: string, id: string | null, body: PriceSheetBody): Promise<PriceSheet> =>
  apiRequest<PriceSheetResponse>(id ? `/workspaces/${workspaceId}/price-sheets/${id}` : `/workspaces/${workspaceId}/price-sheets`, {
    method: id ? 'PATCH' : 'POST',
    body,
  }).then((r) => r.priceSheet);

export function useSavePriceSheet(workspaceId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ id, body }: { id: string | null; body: PriceSheetBody }) => savePriceSheet(workspaceId, id, body),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: priceSheetsKey(workspaceId) }),
  });
}
