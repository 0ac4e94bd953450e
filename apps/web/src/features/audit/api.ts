import { auditEventSchema, pageOf, type AuditQuery } from '@evenhand/entities';
import { keepPreviousData, queryOptions } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';

const auditPageSchema = pageOf(auditEventSchema);

// Audit events are only ever listed; there is no single-event read to key.
export const auditKeys = {
  all: ['audit'] as const,
  lists: () => [...auditKeys.all, 'list'] as const,
  list: (query: AuditQuery) => [...auditKeys.lists(), query] as const,
};

export function auditQueryOptions(query: AuditQuery) {
  return queryOptions({
    queryKey: auditKeys.list(query),
    queryFn: ({ signal }) => apiRequest('/audit', { query, schema: auditPageSchema, signal }),
    placeholderData: keepPreviousData,
  });
}
