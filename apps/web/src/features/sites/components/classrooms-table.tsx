import type { Classroom, StudySite } from '@evenhand/entities';
import { createColumnHelper } from '@tanstack/react-table';
import { useMemo, useState } from 'react';
import { Badge } from '@/components/ui/badge';
import { Button } from '@/components/ui/button';
import { DataTable } from '@/components/ui/data-table';
import { Field, Select } from '@/components/ui/field';
import { useLocalRows } from '@/lib/local-rows';
import { armLabels } from '@/lib/study';

const column = createColumnHelper<Classroom>();

interface ClassroomsTableProps {
  classrooms: Classroom[];
  sites: StudySite[];
  loading: boolean;
  error: Error | null;
  /** Only for the coordinator, who may edit classrooms. */
  onEdit?: (classroom: Classroom) => void;
}

export function ClassroomsTable({ classrooms, sites, loading, error, onEdit }: ClassroomsTableProps) {
  const [siteId, setSiteId] = useState('');
  const [q, setQ] = useState('');

  const columns = useMemo(
    () => [
      column.accessor('siteName', { header: 'Site' }),
      column.accessor('cohortName', { header: 'Cohort' }),
      column.accessor('name', { header: 'Classroom', cell: ({ getValue }) => <span className="font-semibold">{getValue()}</span> }),
      column.accessor('grade', { header: 'Grade' }),
      column.accessor('expectedSize', { header: 'Expected size', cell: ({ getValue }) => <span className="tabular-nums">{getValue()}</span> }),
      column.accessor('teacher', {
        header: 'Teacher',
        cell: ({ getValue }) => {
          const teacher = getValue();
          return (
            <span className="block min-w-48">
              {teacher.name}
              <span className="block text-sm text-ink-muted">{teacher.email}</span>
              {teacher.invitationPending && <Badge tone="caution">Invitation pending</Badge>}
            </span>
          );
        },
      }),
      column.accessor('arm', {
        header: 'Arm',
        cell: ({ getValue }) => {
          const arm = getValue();
          return arm ? <Badge tone={arm === 'intervention' ? 'accent' : 'muted'}>{armLabels[arm]}</Badge> : <span className="text-ink-muted">Not drawn</span>;
        },
      }),
      ...(onEdit
        ? [
            column.display({
              id: 'actions',
              header: () => <span className="sr-only">Actions</span>,
              cell: ({ row }) => (
                <Button variant="secondary" size="sm" onClick={() => onEdit(row.original)}>
                  Edit<span className="sr-only"> {row.original.name} at {row.original.siteName}</span>
                </Button>
              ),
            }),
          ]
        : []),
    ],
    [onEdit],
  );

  const needle = q.trim().toLowerCase();
  const shown = classrooms.filter(
    (c) =>
      (!siteId || c.siteId === siteId) &&
      (!needle || [c.name, c.teacher.name, c.teacher.email, c.cohortName].some((text) => text.toLowerCase().includes(needle))),
  );
  const local = useLocalRows(shown);

  return (
    <DataTable
      caption="Classrooms"
      columns={columns}
      rows={local.page}
      total={local.total}
      getRowId={(c) => c.id}
      loading={loading}
      error={error}
      itemName={['classroom', 'classrooms']}
      empty={classrooms.length === 0 ? 'No classroom is added yet. Once a school is enrolled, the coordinator adds its classrooms one by one or from a CSV file, each with its teacher.' : 'No classroom matches. Try another site or fewer letters.'}
      pagination={local.pagination}
      onPaginationChange={local.onPaginationChange}
      search={{ label: 'Search by classroom, cohort or teacher', value: q, onChange: setQ }}
      filters={
        <Field label="Site" className="w-64">
          {(control) => (
            <Select {...control} value={siteId} onChange={(e) => setSiteId(e.target.value)}>
              <option value="">All sites</option>
              {sites.map((s) => (
                <option key={s.id} value={s.id}>
                  {s.name}
                </option>
              ))}
            </Select>
          )}
        </Field>
      }
    />
  );
}
