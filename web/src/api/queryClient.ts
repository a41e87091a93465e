import { MutationCache, QueryCache, QueryClient } from '@tanstack/react-query';
import { isApiError } from './ApiError.js';

/**
 * Called when a request answers 401 outside the sign-in flow; main.tsx points it at the router so
 * the person lands on the sign-in page and comes back afterwards.
 */
let onSignedOut: () => void = () => {};
export function setSignedOutHandler(fn: () => void): void {
  onSignedOut = fn;
}

function handle401(error: unknown, quiet: boolean): void {
  if (!quiet && isApiError(error) && error.status === 401) onSignedOut();
}

export function createQueryClient(): QueryClient {
  return new QueryClient({
    queryCache: new QueryCache({ onError: (e, q) => handle401(e, q.meta?.quiet401 === true) }),
    mutationCache: new MutationCache({ onError: (e, _v, _c, m) => handle401(e, m.meta?.quiet401 === true) }),
    defaultOptions: {
      queries: {
        staleTime: 10_000,
        refetchOnWindowFocus: false,
        // A 4xx will not change on retry; only network hiccups and 5xx get a second try.
        retry: (count, e) => count < 2 && !(isApiError(e) && e.status >= 400 && e.status < 500),
      },
    },
  });
}

declare module '@tanstack/react-query' {
  interface Register {
    queryMeta: { quiet401?: boolean };
    mutationMeta: { quiet401?: boolean };
  }
}
