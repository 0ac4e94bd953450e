import { mySchoolSchema } from '@evenhand/entities';
import { queryOptions } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';

// My school is one page per signed-in principal: there is no list to key.
export const mySchoolKeys = {
  all: ['my-school'] as const,
  details: () => [...mySchoolKeys.all, 'detail'] as const,
  detail: () => [...mySchoolKeys.details(), 'me'] as const,
};

export function mySchoolQueryOptions() {
  return queryOptions({
    queryKey: mySchoolKeys.detail(),
    queryFn: ({ signal }) => apiRequest('/my-school', { schema: mySchoolSchema, signal }),
  });
}
