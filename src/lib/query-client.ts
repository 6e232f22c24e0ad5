import { QueryClient } from '@tanstack/react-query';
import { ApiError } from './api';

const MAX_RETRIES = 2;

/** The app's single QueryClient; route loaders import it to `ensureQueryData`. */
export const queryClient = new QueryClient({
  defaultOptions: {
    queries: {
      staleTime: 30_000,
      // A 4xx will answer the same way next time: show it at once.
      retry: (failureCount, error) =>
        !(error instanceof ApiError && error.isClientError) && failureCount < MAX_RETRIES,
    },
    mutations: { retry: false },
  },
});
