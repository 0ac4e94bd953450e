import { studyChecksSchema } from '@evenhand/entities';
import { queryOptions } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';

// The checks are one report per study: there is no list to key.
export const checksKeys = {
  all: ['checks'] as const,
  details: () => [...checksKeys.all, 'detail'] as const,
  detail: (studyId: string) => [...checksKeys.details(), studyId] as const,
};

export function studyChecksQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: checksKeys.detail(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/checks`, { schema: studyChecksSchema, signal }),
  });
}
