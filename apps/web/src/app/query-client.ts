import { QueryClient } from '@tanstack/react-query';
import { ApiError } from '@/lib/api-client';

/** Retries only what may pass on a second try: an unreachable or failing server, never a refusal. */
function shouldRetry(failureCount: number, error: Error): boolean {
  if (error instanceof ApiError && error.status > 0 && error.status < 500) return false;
  return failureCount < 2;
}

export function createQueryClient(): QueryClient {
  return new QueryClient({
    defaultOptions: {
      queries: { staleTime: 30_000, retry: shouldRetry },
    },
  });
}
