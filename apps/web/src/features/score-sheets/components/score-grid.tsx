import { memo, useCallback, useId, useLayoutEffect, useRef, useState, type ClipboardEvent, type KeyboardEvent } from 'react';
import { Button } from '@/components/ui/button';
import {
  blankRow,
  columnLabels,
  gridColumns,
  pasteBlock,
  type CellIssues,
  type GridColumn,
  type GridRow,
} from '@/features/score-sheets/grid-model';

/** The editable columns plus the row's Remove button, which arrows and Tab reach too. */
const COLUMN_COUNT = gridColumns.length + 1;

export type RowsUpdate = (rows: GridRow[]) => GridRow[];

interface ScoreGridProps {
  /** Names the grid for screen readers. */
  label: string;
  rows: GridRow[];
  /** The problems to show on the cells, by row id. */
  issues: Map<string, CellIssues>;
  /** Every change goes through here; `editedRowId` is the row typed into, if one was. */
  onRowsChange: (update: RowsUpdate, editedRowId?: string) => void;
  /** The row that holds the focus changed; null when the focus left the grid. */
  onActiveRowChange?: (rowId: string | null) => void;
  /** A block of cells was pasted: how many rows it filled. */
  onPasted?: (rows: number) => void;
  /** A yes/no measure's score column takes y/n (and yes/no, 1/0, true/false). */
  range: { minScore: number; maxScore: number; scale?: 'score' | 'yes-no' };
  /** Student codes (upper case) the coordinator named when returning the sheet: their rows are marked. */
  mentioned?: ReadonlySet<string>;
}

interface Cell {
  row: number;
  column: number;
}

/**
 * The score sheet as a spreadsheet-like grid: arrows, Enter and Tab move between cells, Enter on
 * the last row adds one, and a block copied from a spreadsheet pastes in from the focused cell.
 * One cell is in the page's tab order (roving tabindex); Escape leaves the grid.
 */
export function ScoreGrid({ label, rows, issues, onRowsChange, onActiveRowChange, onPasted, range, mentioned }: ScoreGridProps) {
  const captionId = useId();
  const helpId = useId();
  const tableRef = useRef<HTMLTableElement>(null);
  const addButtonRef = useRef<HTMLButtonElement>(null);
  const [active, setActive] = useState<Cell>({ row: 0, column: 0 });
  const pendingFocus = useRef<Cell | null>(null);
  // Where a run of Tabs began: Enter then starts the next row there, as spreadsheets do.
  const tabStart = useRef<number | null>(null);
  const latest = useRef({ rows, active, onRowsChange, onActiveRowChange, onPasted });
  latest.current = { rows, active, onRowsChange, onActiveRowChange, onPasted };

  const activeRow = Math.min(active.row, rows.length - 1);

  useLayoutEffect(() => {
    const target = pendingFocus.current;
    if (!target) return;
    pendingFocus.current = null;
    const element = tableRef.current?.querySelector<HTMLElement>(`[data-cell="${target.row}:${target.column}"]`);
    element?.focus();
    if (element instanceof HTMLInputElement && element.type === 'text') element.select();
  });

  const moveTo = useCallback((cell: Cell) => {
    const { rows: current, active: was, onActiveRowChange: changed } = latest.current;
    const row = Math.max(0, Math.min(cell.row, current.length - 1));
    const column = Math.max(0, Math.min(cell.column, COLUMN_COUNT - 1));
    pendingFocus.current = { row, column };
    setActive({ row, column });
    if (row !== was.row && current[row]) changed?.(current[row].id);
  }, []);

  const onCellFocus = useCallback((row: number, column: number) => {
    const { rows: current, active: was, onActiveRowChange: changed } = latest.current;
    if (was.row === row && was.column === column) return;
    setActive({ row, column });
    if (was.row !== row && current[row]) changed?.(current[row].id);
  }, []);

  const onCellChange = useCallback((rowId: string, column: GridColumn, value: string | boolean) => {
    latest.current.onRowsChange((current) => current.map((r) => (r.id === rowId ? { ...r, [column]: value } : r)), rowId);
  }, []);

  const addRowAt = useCallback((index: number, column = 0) => {
    latest.current.onRowsChange((current) => [...current.slice(0, index), blankRow(), ...current.slice(index)]);
    pendingFocus.current = { row: index, column };
    setActive({ row: index, column });
  }, []);

  const removeRow = useCallback((index: number) => {
    latest.current.onRowsChange((current) => {
      const next = current.filter((_, i) => i !== index);
      return next.length ? next : [blankRow()];
    });
    const row = Math.max(0, Math.min(index, latest.current.rows.length - 2));
    pendingFocus.current = { row, column: COLUMN_COUNT - 1 };
    setActive({ row, column: COLUMN_COUNT - 1 });
  }, []);

  function cellOf(target: EventTarget): Cell | null {
    const value = target instanceof HTMLElement ? target.dataset.cell : undefined;
    if (!value) return null;
    const [row, column] = value.split(':').map(Number);
    return { row, column };
  }

  function onKeyDown(event: KeyboardEvent<HTMLTableElement>) {
    const cell = cellOf(event.target);
    if (!cell || event.altKey || event.metaKey || event.ctrlKey) return;
    const target = event.target as HTMLElement;
    const text = target instanceof HTMLInputElement && target.type === 'text' ? target : null;
    const last = rows.length - 1;
    const atStart = !text || (text.selectionStart === 0 && text.selectionEnd === 0);
    const atEnd = !text || (text.selectionStart === text.value.length && text.selectionEnd === text.value.length);
    if (event.key !== 'Tab' && event.key !== 'Enter' && event.key.startsWith('Arrow')) tabStart.current = null;
    switch (event.key) {
      case 'ArrowUp':
        if (cell.row > 0) moveTo({ row: cell.row - 1, column: cell.column });
        event.preventDefault();
        return;
      case 'ArrowDown':
        if (cell.row < last) moveTo({ row: cell.row + 1, column: cell.column });
        event.preventDefault();
        return;
      case 'ArrowLeft':
        if (atStart && cell.column > 0) {
          moveTo({ row: cell.row, column: cell.column - 1 });
          event.preventDefault();
        }
        return;
      case 'ArrowRight':
        if (atEnd && cell.column < COLUMN_COUNT - 1) {
          moveTo({ row: cell.row, column: cell.column + 1 });
          event.preventDefault();
        }
        return;
      case 'Enter': {
        if (target instanceof HTMLButtonElement) return; // Enter presses Remove
        event.preventDefault();
        const column = Math.min(tabStart.current ?? cell.column, gridColumns.length - 1);
        tabStart.current = null;
        if (cell.row < last) moveTo({ row: cell.row + 1, column });
        else addRowAt(rows.length, column);
        return;
      }
      case 'Tab': {
        const index = cell.row * COLUMN_COUNT + cell.column + (event.shiftKey ? -1 : 1);
        if (index < 0 || index >= rows.length * COLUMN_COUNT) return; // leave the grid
        event.preventDefault();
        tabStart.current ??= cell.column;
        moveTo({ row: Math.floor(index / COLUMN_COUNT), column: index % COLUMN_COUNT });
        return;
      }
      case 'Escape':
        event.preventDefault();
        addButtonRef.current?.focus();
        return;
    }
    // A yes/no answer is one key: y or n fills the cell and moves down, so a class is entered in one pass.
    const answer = event.key.toLowerCase();
    if (range.scale === 'yes-no' && cell.column === 1 && (answer === 'y' || answer === 'n')) {
      event.preventDefault();
      tabStart.current = null;
      onCellChange(rows[cell.row].id, 'score', answer === 'y' ? 'yes' : 'no');
      if (cell.row < last) moveTo({ row: cell.row + 1, column: 1 });
    }
  }

  function onPaste(event: ClipboardEvent<HTMLTableElement>) {
    const cell = cellOf(event.target);
    const text = event.clipboardData.getData('text/plain');
    // A single value pastes into the cell as usual; a block (tabs or several lines) fills the grid.
    if (!cell || cell.column >= gridColumns.length || !/[\t\n\r]/.test(text.replace(/(\r\n|\n|\r)$/, ''))) return;
    event.preventDefault();
    const result = pasteBlock(latest.current.rows, cell.row, cell.column, text);
    latest.current.onRowsChange(() => result.rows);
    latest.current.onPasted?.(result.pasted);
  }

  return (
    <div className="space-y-3">
      <p id={helpId} className="text-sm text-ink-muted">
        Arrow keys, Enter and Tab move between cells; Enter on the last row adds a row; Escape leaves the grid. To paste from a
        spreadsheet, copy the cells (for example the student code and score columns) and paste into the first cell to fill.
      </p>
      <div className="relative overflow-x-auto rounded-lg border border-line bg-surface">
        <table
          ref={tableRef}
          role="grid"
          aria-labelledby={captionId}
          aria-describedby={helpId}
          aria-rowcount={rows.length + 1}
          // Fixed layout: a keystroke or a message in one cell must not make the browser re-measure every row.
          className="w-full min-w-[44rem] table-fixed border-collapse text-left"
          onKeyDown={onKeyDown}
          onPaste={onPaste}
          onBlur={(event) => {
            if (!event.currentTarget.contains(event.relatedTarget as Node | null)) latest.current.onActiveRowChange?.(null);
          }}
        >
          <caption id={captionId} className="sr-only">
            {label}
          </caption>
          <colgroup>
            <col className="w-16" />
            <col className="w-[26%]" />
            <col className="w-44" />
            <col className="w-36" />
            <col />
            <col className="w-24" />
          </colgroup>
          <thead className="bg-sunken text-sm">
            <tr>
              <th scope="col" className="border-b border-line px-3 py-2 font-semibold">
                Row
              </th>
              <th scope="col" className="border-b border-line px-3 py-2 font-semibold">
                {columnLabels.studentCode}
              </th>
              <th scope="col" className="border-b border-line px-3 py-2 font-semibold">
                {columnLabels.score}{' '}
                <span className="font-normal text-ink-muted">{range.scale === 'yes-no' ? '(y or n)' : `(${range.minScore}–${range.maxScore})`}</span>
              </th>
              <th scope="col" className="border-b border-line px-3 py-2 font-semibold">
                {columnLabels.left}
              </th>
              <th scope="col" className="border-b border-line px-3 py-2 font-semibold">
                {columnLabels.note}
              </th>
              <th scope="col" className="border-b border-line px-3 py-2 font-semibold">
                <span className="sr-only">Remove</span>
              </th>
            </tr>
          </thead>
          <tbody>
            {rows.map((row, index) => (
              <GridRowView
                key={row.id}
                row={row}
                index={index}
                issues={issues.get(row.id)}
                mentioned={mentioned?.has(row.studentCode.trim().toUpperCase()) ?? false}
                activeColumn={index === activeRow ? active.column : -1}
                onFocusCell={onCellFocus}
                onChange={onCellChange}
                onRemove={removeRow}
              />
            ))}
          </tbody>
        </table>
      </div>
      <Button ref={addButtonRef} variant="secondary" size="sm" onClick={() => addRowAt(rows.length)}>
        Add a row
      </Button>
    </div>
  );
}

interface GridRowViewProps {
  row: GridRow;
  index: number;
  issues: CellIssues | undefined;
  mentioned: boolean;
  activeColumn: number;
  onFocusCell: (row: number, column: number) => void;
  onChange: (rowId: string, column: GridColumn, value: string | boolean) => void;
  onRemove: (index: number) => void;
}

const sameIssues = (a: CellIssues | undefined, b: CellIssues | undefined) =>
  a === b || gridColumns.every((c) => a?.[c] === b?.[c]);

/** One row; it re-renders only when its own values, problems or focus change, so long sheets stay quick. */
const GridRowView = memo(
  function GridRowView({ row, index, issues, mentioned, activeColumn, onFocusCell, onChange, onRemove }: GridRowViewProps) {
    const n = index + 1;
    const invalid = issues && gridColumns.some((c) => issues[c]);
    return (
      <tr aria-rowindex={n + 1} className={`border-b border-line last:border-b-0 ${invalid ? 'bg-danger-soft/40' : mentioned ? 'bg-caution-soft' : ''}`}>
        <th scope="row" className="px-3 py-1 text-sm font-normal whitespace-nowrap text-ink-muted tabular-nums">
          {n}
          {mentioned && (
            <span className="ml-1 font-semibold text-caution" title="Named in the coordinator’s reasons">
              <span aria-hidden="true">⚑</span>
              <span className="sr-only">, named in the coordinator’s reasons</span>
            </span>
          )}
        </th>
        <TextCell row={row} index={index} column="studentCode" issue={issues?.studentCode} active={activeColumn === 0} onFocusCell={onFocusCell} onChange={onChange} />
        <TextCell row={row} index={index} column="score" issue={issues?.score} active={activeColumn === 1} onFocusCell={onFocusCell} onChange={onChange} numeric />
        <td role="gridcell" className="px-3 py-1 align-top">
          <label className="inline-flex items-center gap-2 py-1.5">
            <input
              type="checkbox"
              data-cell={`${index}:2`}
              tabIndex={activeColumn === 2 ? 0 : -1}
              checked={row.left}
              aria-label={`${columnLabels.left}, row ${n}`}
              onFocus={() => onFocusCell(index, 2)}
              onChange={(e) => onChange(row.id, 'left', e.target.checked)}
              className="size-5 accent-[var(--color-accent)]"
            />
            <span aria-hidden="true" className="text-sm text-ink-muted">
              {row.left ? 'Left' : ''}
            </span>
          </label>
        </td>
        <TextCell row={row} index={index} column="note" issue={issues?.note} active={activeColumn === 3} onFocusCell={onFocusCell} onChange={onChange} />
        <td role="gridcell" className="px-3 py-1 align-top">
          <button
            type="button"
            data-cell={`${index}:4`}
            tabIndex={activeColumn === 4 ? 0 : -1}
            aria-label={`Remove row ${n}`}
            onFocus={() => onFocusCell(index, 4)}
            onClick={() => onRemove(index)}
            className="rounded px-2 py-1.5 text-sm font-semibold text-danger hover:bg-danger-soft"
          >
            Remove
          </button>
        </td>
      </tr>
    );
  },
  (a, b) =>
    a.row === b.row &&
    a.index === b.index &&
    a.activeColumn === b.activeColumn &&
    a.mentioned === b.mentioned &&
    sameIssues(a.issues, b.issues) &&
    a.onChange === b.onChange &&
    a.onFocusCell === b.onFocusCell &&
    a.onRemove === b.onRemove,
);

interface TextCellProps {
  row: GridRow;
  index: number;
  column: Exclude<GridColumn, 'left'>;
  issue: string | undefined;
  active: boolean;
  numeric?: boolean;
  onFocusCell: (row: number, column: number) => void;
  onChange: (rowId: string, column: GridColumn, value: string) => void;
}

function TextCell({ row, index, column, issue, active, numeric = false, onFocusCell, onChange }: TextCellProps) {
  const columnIndex = gridColumns.indexOf(column);
  const errorId = `${row.id}-${column}-error`;
  return (
    <td role="gridcell" className="px-2 py-1 align-top">
      <input
        type="text"
        data-cell={`${index}:${columnIndex}`}
        tabIndex={active ? 0 : -1}
        value={row[column]}
        inputMode={numeric ? 'decimal' : undefined}
        autoComplete="off"
        spellCheck={column === 'note'}
        aria-label={`${columnLabels[column]}, row ${index + 1}`}
        aria-invalid={issue ? true : undefined}
        aria-describedby={issue ? errorId : undefined}
        onFocus={() => onFocusCell(index, columnIndex)}
        onChange={(e) => onChange(row.id, column, e.target.value)}
        className={`w-full rounded border px-2 py-1.5 text-base ${numeric ? 'tabular-nums' : ''} ${
          issue ? 'border-2 border-danger bg-surface' : 'border-transparent bg-transparent hover:border-line'
        } focus:border-accent focus:bg-surface`}
      />
      {issue && (
        <p id={errorId} className="mt-0.5 flex gap-1 text-sm font-semibold text-danger">
          <span aria-hidden="true">⚠</span>
          {issue}
        </p>
      )}
    </td>
  );
}
