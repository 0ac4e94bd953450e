import { studyStatuses, studyStatusSchema, type Study, type StudyStatus } from '@evenhand/entities';
import { createColumnHelper } from '@tanstack/react-table';
import { Link } from 'react-router-dom';
import { DataTable } from '@/components/ui/data-table';
import { Field, Select } from '@/components/ui/field';
import { StudyStatusBadge } from '@/features/studies/components/study-status';
import { formatDate } from '@/lib/format';
import { studyPath } from '@/lib/navigation';
import { studyStatusLabels, unitLabels, type StudiesFilter } from '@/lib/study';

const column = createColumnHelper<Study>();

const columns = [
  column.accessor('title', {
    header: 'Study',
    cell: ({ row }) => (
      <Link to={studyPath(row.original.id, 'overview')} className="font-semibold">
        {row.original.title}
      </Link>
    ),
  }),
  column.accessor('status', { header: 'State', cell: ({ getValue }) => <StudyStatusBadge status={getValue()} /> }),
  column.accessor('unitOfAssignment', { header: 'Assigns', cell: ({ getValue }) => unitLabels[getValue()].plural }),
  column.accessor('planVersion', {
    header: 'Plan',
    cell: ({ getValue }) => {
      const version = getValue();
      return version === null ? <span className="text-ink-muted">Not sealed</span> : <span className="whitespace-nowrap">Version {version}, sealed</span>;
    },
  }),
  column.accessor((s) => s.counts.sites, { id: 'sites', header: 'Sites' }),
  column.accessor((s) => s.counts.classrooms, { id: 'classrooms', header: 'Classrooms' }),
  column.accessor((s) => s.counts.measures, { id: 'measures', header: 'Measures' }),
  column.accessor((s) => s.counts.waves, { id: 'waves', header: 'Waves' }),
  column.accessor('createdAt', { header: 'Started', cell: ({ getValue }) => <span className="whitespace-nowrap">{formatDate(getValue())}</span> }),
];

interface StudiesTableProps {
  page: { items: Study[]; total: number } | undefined;
  loading: boolean;
  refreshing: boolean;
  error: Error | null;
  filter: StudiesFilter;
  onFilterChange: (changes: Partial<StudiesFilter>) => void;
}

export function StudiesTable({ page, loading, refreshing, error, filter, onFilterChange }: StudiesTableProps) {
  return (
    <DataTable
      caption="Studies"
      columns={columns}
      rows={page?.items ?? []}
      total={page?.total ?? 0}
      getRowId={(s) => s.id}
      loading={loading}
      refreshing={refreshing}
      error={error}
      itemName={['study', 'studies']}
      empty={filter.status ? `No study is ${studyStatusLabels[filter.status].label.toLowerCase()} right now. Choose another state.` : 'There are no studies yet.'}
      pagination={{ pageIndex: Math.floor(filter.offset / filter.limit), pageSize: filter.limit }}
      onPaginationChange={({ pageIndex }) => onFilterChange({ offset: pageIndex * filter.limit })}
      filters={
        <Field label="State" className="w-56">
          {(control) => (
            <Select
              {...control}
              value={filter.status ?? ''}
              onChange={(e) => {
                const status = studyStatusSchema.safeParse(e.target.value);
                onFilterChange({ status: status.success ? (status.data as StudyStatus) : undefined, offset: 0 });
              }}
            >
              <option value="">All states</option>
              {studyStatuses.map((s) => (
                <option key={s} value={s}>
                  {studyStatusLabels[s].label}
                </option>
              ))}
            </Select>
          )}
        </Field>
      }
    />
  );
}
