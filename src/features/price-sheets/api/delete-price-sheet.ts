import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '../../../lib/api';
import { priceSheetsKey } from './get-price-sheets';

export const deletePriceSheet = (workspaceId: string, id: string) =>
  apiRequest<void>(`/workspaces/${workspaceId}/price-sheets/${id}`, { method: 'DELETE' });

export function useDeletePriceSheet(workspaceId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => deletePriceSheet(workspaceId, id),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: priceSheetsKey(workspaceId) }),
  });
}
