import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest, setCsrfToken } from '../../../lib/api';
import { sessionKey } from './get-session';

export async function signOut(): Promise<void> {
  await apiRequest<void>('/session', { method: 'DELETE' });
  setCsrfToken(null);
}

export function useSignOut() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: signOut,
    onSuccess: async () => {
      queryClient.clear();
      await queryClient.invalidateQueries({ queryKey: sessionKey });
    },
  });
}
