import { QueryClient } from '@tanstack/vue-query';
import { isApiError } from './http';

/** The one vue-query cache; cleared when the session changes. */
export const queryClient = new QueryClient({
  defaultOptions: {
    queries: {
      staleTime: 30_000,
      refetchOnWindowFocus: false,
      // Retry only network hiccups and server faults, never 4xx answers.
      retry: (count, error) => count < 2 && (!isApiError(error) || error.status === 0 || error.status >= 500),
    },
    mutations: { retry: false },
  },
});
