import { queryOptions, useQuery } from '@tanstack/react-query';
import { apiRequest, setCsrfToken } from '../../../lib/api';
import type { SessionResponse } from '../../../../server/routes/session.schema';

export const sessionKey = ['session'] as const;

export async function getSession(): Promise<SessionResponse> {
  const session = await apiRequest<SessionResponse>('/session');
  setCsrfToken(session.csrfToken);
  return session;
}

export const sessionQueryOptions = () => queryOptions({ queryKey: sessionKey, queryFn: getSession, staleTime: 60_000 });

export const useSession = () => useQuery(sessionQueryOptions());
