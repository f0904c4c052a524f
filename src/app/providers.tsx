import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import type { ReactNode } from 'react';
import { ApiError } from '../lib/api';
import { sessionKey } from '../features/auth/api/get-session';

export const queryClient: QueryClient = new QueryClient({
  defaultOptions: {
    queries: {
      // Client errors (401/403/404) will not change on retry.
      retry: (count, error) => !(error instanceof ApiError && error.status >= 400 && error.status < 500) && count < 2,
      refetchOnWindowFocus: true,
    },
  },
});

// A 401 from any read means the session ended: refresh who is signed in, so guards redirect.
queryClient.getQueryCache().subscribe((event) => {
  const error = event.query.state.error;
  if (event.type === 'updated' && error instanceof ApiError && error.status === 401 && event.query.queryKey[0] !== sessionKey[0]) {
    void queryClient.invalidateQueries({ queryKey: sessionKey });
  }
});

export function Providers({ children }: { children: ReactNode }) {
  return <QueryClientProvider client={queryClient}>{children}</QueryClientProvider>;
}
