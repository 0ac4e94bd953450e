import type { BalanceRow, Draw } from '@evenhand/entities';
import { createColumnHelper } from '@tanstack/react-table';
import { Badge } from '@/components/ui/badge';
import { DataTable } from '@/components/ui/data-table';
import { FigureTable } from '@/components/ui/figure-table';
import { useLocalRows } from '@/lib/local-rows';
import { armLabels } from '@/lib/study';

export function BalanceTable({ balance, unit }: { balance: BalanceRow[]; unit: Draw['unit'] }) {
  const units = unit === 'school' ? 'Schools' : 'Classrooms';
  const sum = (pick: (r: BalanceRow) => number) => balance.reduce((total, r) => total + pick(r), 0);
  return (
    <FigureTable
      caption="Balance: units and expected students per arm, by site"
      columns={[
        { key: 'site', header: 'Site' },
        { key: 'iUnits', header: `${units} in the intervention`, numeric: true },
        { key: 'iStudents', header: 'Expected students', numeric: true },
        { key: 'cUnits', header: `${units} in the comparison`, numeric: true },
        { key: 'cStudents', header: 'Expected students', numeric: true },
      ]}
      rows={balance.map((r) => ({
        id: r.siteId,
        site: r.siteName,
        iUnits: r.intervention.units,
        iStudents: r.intervention.expectedStudents,
        cUnits: r.comparison.units,
        cStudents: r.comparison.expectedStudents,
      }))}
      footer={{
        site: 'All sites',
        iUnits: sum((r) => r.intervention.units),
        iStudents: sum((r) => r.intervention.expectedStudents),
        cUnits: sum((r) => r.comparison.units),
        cStudents: sum((r) => r.comparison.expectedStudents),
      }}
    />
  );
}

type AssignmentRow = Draw['assignments'][number] & { blockName: string };
const column = createColumnHelper<AssignmentRow>();
const columns = [
  column.accessor('blockName', { header: 'Drawn within' }),
  column.accessor('unitName', { header: 'Unit', cell: ({ getValue }) => <span className="font-semibold">{getValue()}</span> }),
  column.accessor('arm', {
    header: 'Arm',
    cell: ({ getValue }) => <Badge tone={getValue() === 'intervention' ? 'accent' : 'muted'}>{armLabels[getValue()]}</Badge>,
  }),
];

export function AssignmentsTable({ draw }: { draw: Pick<Draw, 'assignments' | 'balance'> }) {
  const siteNames = new Map(draw.balance.map((r) => [r.siteId, r.siteName]));
  const rows = draw.assignments
    .map((a) => ({ ...a, blockName: a.blockId === 'district' ? 'The whole district' : (siteNames.get(a.blockId) ?? a.blockId) }))
    .sort((a, b) => a.blockName.localeCompare(b.blockName) || a.unitName.localeCompare(b.unitName));
  const local = useLocalRows(rows, 50);
  return (
    <DataTable
      caption="Assignments"
      columns={columns}
      rows={local.page}
      total={local.total}
      getRowId={(a) => a.unitId}
      loading={false}
      itemName={['assignment', 'assignments']}
      empty="Nothing to assign."
      pagination={local.pagination}
      onPaginationChange={local.onPaginationChange}
    />
  );
}
