import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest, setCsrfToken } from '../../../lib/api';
import type { SessionResponse, SignInBody } from '../../../../server/routes/session.schema';
import { sessionKey } from './get-session';

export async function signIn(body: SignInBody): Promise<SessionResponse> {
  const session = await apiRequest<SessionResponse>('/session', { method: 'POST', body });
  setCsrfToken(session.csrfToken);
  return session;
}

export function useSignIn() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: signIn,
    onSuccess: (session) => {
      // Everything cached belonged to the previous session.
      queryClient.clear();
      queryClient.setQueryData(sessionKey, session);
    },
  });
}
