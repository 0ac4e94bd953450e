import type { StudySite } from '@evenhand/entities';
import { createColumnHelper } from '@tanstack/react-table';
import { Badge } from '@/components/ui/badge';
import { DataTable } from '@/components/ui/data-table';
import { useLocalRows } from '@/lib/local-rows';

const column = createColumnHelper<StudySite>();

const columns = [
  column.accessor('name', { header: 'School', cell: ({ getValue }) => <span className="font-semibold">{getValue()}</span> }),
  column.accessor('code', { header: 'Code', cell: ({ getValue }) => <code className="font-mono text-sm">{getValue()}</code> }),
  column.accessor('principal', {
    header: 'Principal',
    cell: ({ getValue }) => {
      const principal = getValue();
      if (!principal) return <span className="text-ink-muted">None named yet</span>;
      return (
        <span className="block">
          {principal.name} <span className="text-ink-muted">· {principal.email}</span>
          {principal.invitationPending && (
            <span className="ml-2">
              <Badge tone="caution">Invitation pending</Badge>
            </span>
          )}
        </span>
      );
    },
  }),
  column.accessor('classrooms', { header: 'Classrooms', cell: ({ getValue }) => <span className="tabular-nums">{getValue()}</span> }),
  column.accessor('expectedStudents', { header: 'Expected students', cell: ({ getValue }) => <span className="tabular-nums">{getValue()}</span> }),
];

export function SitesTable({ sites, loading, error }: { sites: StudySite[]; loading: boolean; error: Error | null }) {
  const local = useLocalRows(sites);
  return (
    <DataTable
      caption="Enrolled sites"
      columns={columns}
      rows={local.page}
      total={local.total}
      getRowId={(s) => s.id}
      loading={loading}
      error={error}
      itemName={['site', 'sites']}
      empty="No school is enrolled yet. The coordinator enrols each school taking part, with its principal, from Enrol a site; its classrooms follow."
      pagination={local.pagination}
      onPaginationChange={local.onPaginationChange}
    />
  );
}
