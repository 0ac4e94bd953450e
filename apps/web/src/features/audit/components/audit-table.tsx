import type { AuditEvent, AuditQuery } from '@evenhand/entities';
import { createColumnHelper } from '@tanstack/react-table';
import { DataTable } from '@/components/ui/data-table';
import { formatDateTime } from '@/lib/format';

const column = createColumnHelper<AuditEvent>();

function Snapshot({ label, value }: { label: string; value: unknown }) {
  if (value === null || value === undefined) return null;
  return (
    <div>
      <p className="text-sm font-semibold">{label}</p>
      <pre className="mt-1 max-w-md overflow-x-auto rounded bg-sunken p-2 font-mono text-xs whitespace-pre-wrap">
        {JSON.stringify(value, null, 2)}
      </pre>
    </div>
  );
}

const columns = [
  column.accessor('at', {
    header: 'When',
    cell: ({ getValue }) => <span className="whitespace-nowrap">{formatDateTime(getValue())}</span>,
  }),
  column.accessor('actor', {
    header: 'Who',
    cell: ({ getValue }) => getValue()?.email ?? <span className="text-ink-muted">Evenhand (automatic)</span>,
  }),
  column.accessor('action', {
    header: 'What',
    cell: ({ getValue }) => <code className="font-mono text-sm">{getValue()}</code>,
  }),
  column.display({
    id: 'item',
    header: 'Item',
    cell: ({ row }) => (
      <span className="whitespace-nowrap">
        {row.original.entityType}
        {row.original.entityId && (
          <code className="ml-1 font-mono text-sm text-ink-muted" title={row.original.entityId}>
            {row.original.entityId.slice(0, 8)}
          </code>
        )}
      </span>
    ),
  }),
  column.display({
    id: 'change',
    header: 'Change',
    cell: ({ row }) => {
      const { before, after } = row.original;
      if (before === null && after === null) return <span className="text-ink-muted">No details recorded</span>;
      return (
        <details>
          <summary className="cursor-pointer text-accent">Show before and after</summary>
          <div className="mt-2 space-y-2">
            <Snapshot label="Before" value={before} />
            <Snapshot label="After" value={after} />
          </div>
        </details>
      );
    },
  }),
];

interface AuditTableProps {
  page: { items: AuditEvent[]; total: number } | undefined;
  loading: boolean;
  refreshing: boolean;
  error: Error | null;
  query: AuditQuery;
  onPageChange: (offset: number) => void;
}

export function AuditTable({ page, loading, refreshing, error, query, onPageChange }: AuditTableProps) {
  return (
    <DataTable
      caption="Audit trail"
      columns={columns}
      rows={page?.items ?? []}
      total={page?.total ?? 0}
      getRowId={(event) => event.id}
      loading={loading}
      refreshing={refreshing}
      error={error}
      itemName={['event', 'events']}
      empty="Nothing has been recorded yet. Invitations, role changes and every change to a study will be listed here."
      pagination={{ pageIndex: Math.floor(query.offset / query.limit), pageSize: query.limit }}
      onPaginationChange={({ pageIndex }) => onPageChange(pageIndex * query.limit)}
    />
  );
}
