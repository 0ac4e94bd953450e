import { auditQuerySchema, type AuditQuery } from '@evenhand/entities';
import { useQuery, type QueryClient } from '@tanstack/react-query';
import { useParams, useSearchParams, type LoaderFunctionArgs, type ShouldRevalidateFunction } from 'react-router-dom';
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

function studyQueryFromSearch(studyId: string, params: URLSearchParams): AuditQuery {
  return { ...queryFromSearch(params), studyId };
}

export function studyAuditLoader(queryClient: QueryClient) {
  return async ({ request, params }: LoaderFunctionArgs) => {
    await queryClient.ensureQueryData(auditQueryOptions(studyQueryFromSearch(params.studyId!, new URL(request.url).searchParams)));
    return null;
  };
}

/** The Audit tab of a study: the same trail, only this study's entries. */
export function StudyAuditPage() {
  const { studyId } = useParams();
  const [params, setParams] = useSearchParams();
  const query = studyQueryFromSearch(studyId!, params);
  const audit = useQuery(auditQueryOptions(query));
  return (
    <section aria-labelledby="study-audit-title" className="space-y-4">
      <div className="max-w-prose">
        <h2 id="study-audit-title" className="text-xl font-semibold">
          Audit trail of this study
        </h2>
        <p className="mt-1 text-ink-muted">Every change to the study, its plan, sites, classrooms and draw: who made it and when, newest first.</p>
      </div>
      <AuditTable
        page={audit.data}
        loading={audit.isPending}
        refreshing={audit.isPlaceholderData}
        error={audit.error}
        query={query}
        onPageChange={(offset) => setParams(offset > 0 ? { page: String(offset / PAGE_SIZE + 1) } : {})}
      />
    </section>
  );
}
