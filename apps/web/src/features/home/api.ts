import { toDoListSchema } from '@evenhand/entities';
import { queryOptions } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';

export const homeKeys = {
  all: ['home'] as const,
  toDo: () => [...homeKeys.all, 'to-do'] as const,
};

export function toDoQueryOptions() {
  return queryOptions({
    queryKey: homeKeys.toDo(),
    queryFn: ({ signal }) => apiRequest('/to-do', { schema: toDoListSchema, signal }),
    // Others' work moves it (a submitted sheet, a finished run): read it afresh on every visit home.
    staleTime: 0,
  });
}
