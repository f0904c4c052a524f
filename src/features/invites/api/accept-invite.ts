import { useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest, setCsrfToken } from '../../../lib/api';
import type { AcceptInviteBody } from '../../../../server/routes/workspaces.schema';
import type { SessionUser } from '../../../../server/routes/session.schema';

export interface AcceptInviteResponse {
  workspaceId: string;
  user: SessionUser;
  csrfToken?: string;
}

export async function acceptInvite(token: string, body: AcceptInviteBody): Promise<AcceptInviteResponse> {
  const result = await apiRequest<AcceptInviteResponse>(`/invites/${encodeURIComponent(token)}/accept`, { method: 'POST', body });
  if (result.csrfToken) setCsrfToken(result.csrfToken);
  return result;
}

export function useAcceptInvite(token: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (body: AcceptInviteBody) => acceptInvite(token, body),
    // A new account is signed in by the accept call: drop what was cached for the anonymous session.
    onSuccess: () => queryClient.resetQueries(),
  });
}
