import { sheetStates, type CompletionCell, type CompletionMatrix, type CompletionRow, type SheetState, type Wave } from '@evenhand/entities';
import { Link } from 'react-router-dom';
import { SheetStateMark } from '@/features/score-sheets/components/sheet-state-badge';
import { sheetStateLabels } from '@/features/score-sheets/sheet-state';
import { today } from '@/lib/format';
import { armLabels } from '@/lib/study';

export interface MatrixFilter {
  siteId?: string;
  waveId?: string;
  state?: SheetState;
}

export interface MatrixView {
  waves: CompletionMatrix['waves'];
  measures: CompletionMatrix['measures'];
  sites: { siteId: string; siteName: string; rows: CompletionRow[] }[];
  /** Sheets of the shown rows and waves, by state. */
  totals: Record<SheetState, number>;
  classrooms: number;
}

/** The part of the matrix a filter keeps: rows of the site that have a sheet in the state, in the wave. */
export function viewOf(matrix: CompletionMatrix, filter: MatrixFilter): MatrixView {
  const waves = matrix.waves.filter((w) => !filter.waveId || w.id === filter.waveId);
  const waveIds = new Set(waves.map((w) => w.id));
  const shownCells = (row: CompletionRow) => row.cells.filter((c) => waveIds.has(c.waveId));
  const rows = matrix.rows.filter(
    (row) => (!filter.siteId || row.siteId === filter.siteId) && (!filter.state || shownCells(row).some((c) => c.state === filter.state)),
  );
  const sites = new Map<string, MatrixView['sites'][number]>();
  const totals = Object.fromEntries(sheetStates.map((s) => [s, 0])) as Record<SheetState, number>;
  for (const row of rows) {
    const site = sites.get(row.siteId) ?? { siteId: row.siteId, siteName: row.siteName, rows: [] };
    site.rows.push(row);
    sites.set(row.siteId, site);
    for (const cell of shownCells(row)) totals[cell.state] += 1;
  }
  return { waves, measures: matrix.measures, sites: [...sites.values()], totals, classrooms: rows.length };
}

/** The state mark colours; the mark's shape and the word carry the meaning on their own. */
const cellTones: Record<SheetState, string> = {
  open: 'text-ink-muted',
  submitted: 'text-ink',
  accepted: 'text-accent-strong',
  returned: 'text-caution',
};

interface CompletionTableProps {
  view: MatrixView;
  /** Wave dates, when known: sheets of waves not yet begun read "Not due yet". */
  waveDates?: Wave[];
  highlight?: SheetState;
  sheetHref: (sheetId: string) => string;
}

function cellFor(row: CompletionRow, waveId: string, measureId: string): CompletionCell | undefined {
  return row.cells.find((c) => c.waveId === waveId && c.measureId === measureId);
}

/** Classrooms (grouped by site) down, waves and their measures across; each cell opens its sheet. */
export function CompletionTable({ view, waveDates = [], highlight, sheetHref }: CompletionTableProps) {
  const day = today();
  const notBegun = new Set(waveDates.filter((w) => w.opensOn > day).map((w) => w.id));
  const closed = new Set(waveDates.filter((w) => w.closesOn < day).map((w) => w.id));
  const columns = view.waves.flatMap((wave) => view.measures.map((measure) => ({ wave, measure })));
  const span = 3 + columns.length;

  return (
    <div role="region" aria-labelledby="matrix-caption" tabIndex={0} className="relative overflow-x-auto rounded-lg border border-line bg-surface">
      <table className="w-full border-collapse text-left">
        <caption id="matrix-caption" className="sr-only">
          Completion of score sheets: classrooms by wave and measure
        </caption>
        <thead className="bg-sunken text-sm">
          <tr>
            <th scope="col" rowSpan={2} className="border-b border-line px-4 py-2 align-bottom font-semibold">Classroom</th>
            <th scope="col" rowSpan={2} className="border-b border-line px-4 py-2 align-bottom font-semibold">Teacher</th>
            <th scope="col" rowSpan={2} className="border-b border-line px-4 py-2 align-bottom font-semibold">Arm</th>
            {view.waves.map((wave) => (
              <th key={wave.id} scope="colgroup" colSpan={view.measures.length} className="border-b border-l border-line px-4 py-2 text-center font-semibold">
                {wave.name}
              </th>
            ))}
          </tr>
          <tr>
            {columns.map(({ wave, measure }, i) => (
              <th
                key={`${wave.id}-${measure.id}`}
                scope="col"
                className={`min-w-40 border-b border-line px-4 py-2 align-bottom font-normal ${i % view.measures.length === 0 ? 'border-l' : ''}`}
              >
                {measure.name}
              </th>
            ))}
          </tr>
        </thead>
        {view.sites.map((site) => (
          <tbody key={site.siteId}>
            <tr className="bg-paper">
              <th scope="rowgroup" colSpan={span} className="border-t border-line px-4 py-2 font-semibold">
                {site.siteName}{' '}
                <span className="font-normal text-ink-muted">
                  · {site.rows.length} classroom{site.rows.length === 1 ? '' : 's'}
                </span>
              </th>
            </tr>
            {site.rows.map((row) => (
              <tr key={row.classroomId} className="border-t border-line align-top">
                <th scope="row" className="px-4 py-2.5 font-semibold whitespace-nowrap">
                  {row.classroomName}
                </th>
                <td className="px-4 py-2.5">{row.teacherName}</td>
                <td className="px-4 py-2.5 text-sm whitespace-nowrap">{row.arm ? armLabels[row.arm] : '—'}</td>
                {columns.map(({ wave, measure }, i) => {
                  const cell = cellFor(row, wave.id, measure.id);
                  return (
                    <td key={`${wave.id}-${measure.id}`} className={`px-2 py-1.5 ${i % view.measures.length === 0 ? 'border-l border-line' : ''}`}>
                      {cell ? (
                        <MatrixCell
                          cell={cell}
                          href={sheetHref(cell.sheetId)}
                          context={`${row.classroomName}, ${wave.name}, ${measure.name}`}
                          notDue={notBegun.has(wave.id) && cell.state === 'open' && cell.rows === 0}
                          late={closed.has(wave.id) && cell.state === 'open'}
                          dimmed={highlight !== undefined && cell.state !== highlight}
                        />
                      ) : (
                        <span className="px-2 text-ink-muted">—</span>
                      )}
                    </td>
                  );
                })}
              </tr>
            ))}
          </tbody>
        ))}
        <tfoot className="bg-sunken text-sm">
          <tr className="border-t-2 border-line-strong">
            <th scope="row" colSpan={3} className="px-4 py-2 font-semibold">
              Accepted
            </th>
            {columns.map(({ wave, measure }, i) => {
              const cells = view.sites.flatMap((s) => s.rows).map((r) => cellFor(r, wave.id, measure.id)).filter(Boolean) as CompletionCell[];
              const accepted = cells.filter((c) => c.state === 'accepted').length;
              return (
                <td key={`${wave.id}-${measure.id}`} className={`px-4 py-2 tabular-nums ${i % view.measures.length === 0 ? 'border-l border-line' : ''}`}>
                  {accepted} of {cells.length}
                </td>
              );
            })}
          </tr>
        </tfoot>
      </table>
    </div>
  );
}

interface MatrixCellProps {
  cell: CompletionCell;
  href: string;
  context: string;
  /** Its wave has not begun. */
  notDue: boolean;
  /** Its wave closed while the sheet is still open. */
  late: boolean;
  dimmed: boolean;
}

function MatrixCell({ cell, href, context, notDue, late, dimmed }: MatrixCellProps) {
  const label = notDue ? 'Not due yet' : sheetStateLabels[cell.state];
  const counts = `${cell.rows === 0 ? 'no rows' : `${cell.rows} row${cell.rows === 1 ? '' : 's'}${cell.left ? ` · ${cell.left} left` : ''}`}${late ? ' · wave closed' : ''}`;
  return (
    <Link
      to={href}
      className={`block rounded-md px-2 py-1.5 no-underline hover:bg-sunken ${cell.state === 'returned' && !dimmed ? 'bg-caution-soft' : ''}`}
    >
      <span className="sr-only">{context}: </span>
      {/* Cells outside the state filter fade to the muted ink, which keeps its contrast, instead of turning transparent. */}
      <span className={`flex items-center gap-1.5 ${dimmed ? 'font-normal text-ink-muted' : `font-semibold ${notDue ? 'text-ink-muted' : cellTones[cell.state]}`}`}>
        <SheetStateMark state={cell.state} />
        {label}
      </span>
      <span className="block text-sm text-ink-muted">{counts}</span>
    </Link>
  );
}

/** The shown sheets by state, as words with their marks. */
export function MatrixTotals({ view }: { view: MatrixView }) {
  const sheets = sheetStates.reduce((n, s) => n + view.totals[s], 0);
  return (
    <div aria-live="polite" className="flex flex-wrap items-center gap-x-6 gap-y-2 rounded-lg border border-line bg-surface px-4 py-3">
      <p className="font-semibold">
        {view.classrooms} classroom{view.classrooms === 1 ? '' : 's'}, {sheets} sheet{sheets === 1 ? '' : 's'}
      </p>
      <ul className="flex flex-wrap gap-x-5 gap-y-1">
        {(['accepted', 'submitted', 'returned', 'open'] as const).map((state) => (
          <li key={state} className={`flex items-center gap-1.5 ${cellTones[state]}`}>
            <SheetStateMark state={state} />
            <span>
              <span className="font-semibold tabular-nums">{view.totals[state]}</span> {sheetStateLabels[state].toLowerCase()}
            </span>
          </li>
        ))}
      </ul>
    </div>
  );
}
