import { auditQuerySchema, type AuditQuery } from '@evenhand/entities';
import { useQuery, type QueryClient } from '@tanstack/react-query';
import { useSearchParams, type LoaderFunctionArgs, type ShouldRevalidateFunction } from 'react-router-dom';
import { PageHeader } from '@/components/ui/page-header';
import { auditQueryOptions } from '@/features/audit/api';
import { AuditTable } from '@/features/audit/components/audit-table';

const PAGE_SIZE = 50;

function queryFromSearch(params: URLSearchParams): AuditQuery {
  const page = Math.max(1, Math.floor(Number(params.get('page'))) || 1);
  return auditQuerySchema.parse({ limit: PAGE_SIZE, offset: (page - 1) * PAGE_SIZE });
}

export function auditLoader(queryClient: QueryClient) {
  return async ({ request }: LoaderFunctionArgs) => {
    await queryClient.ensureQueryData(auditQueryOptions(queryFromSearch(new URL(request.url).searchParams)));
    return null;
  };
}

/** Paging re-queries through the table, which keeps the old rows visible meanwhile. */
export const auditShouldRevalidate: ShouldRevalidateFunction = ({ currentUrl, nextUrl }) => currentUrl.pathname !== nextUrl.pathname;

export function AuditPage() {
  const [params, setParams] = useSearchParams();
  const query = queryFromSearch(params);
  const audit = useQuery(auditQueryOptions(query));
  return (
    <>
      <PageHeader
        title="Audit"
        description="Who changed what, and when, newest first. Entries are added as changes happen and can never be edited or removed."
      />
      <AuditTable
        page={audit.data}
        loading={audit.isPending}
        refreshing={audit.isPlaceholderData}
        error={audit.error}
        query={query}
        onPageChange={(offset) => setParams(offset > 0 ? { page: String(offset / PAGE_SIZE + 1) } : {})}
      />
    </>
  );
}
