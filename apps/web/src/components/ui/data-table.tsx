import {
  flexRender,
  getCoreRowModel,
  useReactTable,
  type ColumnDef,
  type PaginationState,
  type SortingState,
  type Updater,
} from '@tanstack/react-table';
import { useId, type ReactNode } from 'react';
import { Alert } from '@/components/ui/alert';
import { Button } from '@/components/ui/button';
import { SearchInput } from '@/components/ui/search-input';
import { Loading, Spinner } from '@/components/ui/spinner';

function resolve<T>(updater: Updater<T>, current: T): T {
  return typeof updater === 'function' ? (updater as (old: T) => T)(current) : updater;
}

export interface DataTableProps<T> {
  /** Names the table for screen readers, e.g. "Accounts". */
  caption: string;
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- each column's value has its own type, and TanStack's ColumnDef is invariant in it.
  columns: ColumnDef<T, any>[];
  rows: T[];
  /** How many rows match on the server, across all pages. */
  total: number;
  getRowId: (row: T) => string;
  /** The first page is still on its way: there is nothing to show yet. */
  loading: boolean;
  /** A new page, sort or filter is on its way; the current rows stay visible meanwhile. */
  refreshing?: boolean;
  /** A failure of the latest request, shown above the rows it could not replace. */
  error?: Error | null;
  /** What to say when nothing matches. */
  empty: ReactNode;
  /** Singular and plural of what a row is, for "Showing 1–25 of 40 accounts". */
  itemName: [string, string];
  sorting?: SortingState;
  onSortingChange?: (sorting: SortingState) => void;
  pagination: PaginationState;
  onPaginationChange: (pagination: PaginationState) => void;
  search?: { label: string; value: string; onChange: (value: string) => void; placeholder?: string };
  /** Further filter controls beside the search box. */
  filters?: ReactNode;
}

/**
 * The one table of the app. Server-driven: every list in the API sorts, filters and pages on the
 * server, so the table reports what the person asked for and renders the page it is given.
 */
export function DataTable<T>(props: DataTableProps<T>) {
  const { caption, columns, rows, total, getRowId, loading, refreshing = false, error, empty, itemName } = props;
  const { sorting = [], onSortingChange, pagination, onPaginationChange, search, filters } = props;
  const captionId = useId();

  const table = useReactTable({
    data: rows,
    columns,
    getRowId,
    getCoreRowModel: getCoreRowModel(),
    manualSorting: true,
    manualPagination: true,
    manualFiltering: true,
    enableSorting: onSortingChange !== undefined,
    enableSortingRemoval: false,
    rowCount: total,
    state: { sorting, pagination },
    onSortingChange: (updater) => onSortingChange?.(resolve(updater, sorting)),
    onPaginationChange: (updater) => onPaginationChange(resolve(updater, pagination)),
  });

  const first = pagination.pageIndex * pagination.pageSize + 1;
  const last = Math.min(total, first + rows.length - 1);
  const pageCount = Math.max(1, Math.ceil(total / pagination.pageSize));
  const columnCount = table.getVisibleLeafColumns().length;

  return (
    <div className="space-y-4">
      {(search || filters) && (
        <div className="flex flex-wrap items-end gap-4">
          {search && <SearchInput {...search} />}
          {filters}
        </div>
      )}

      {error && <Alert tone="error">{error.message}</Alert>}

      <div
        role="region"
        aria-labelledby={captionId}
        tabIndex={0}
        className="relative overflow-x-auto rounded-lg border border-line bg-surface"
      >
        <table className={`w-full border-collapse text-left ${refreshing ? 'opacity-60' : ''}`} aria-busy={loading || refreshing}>
          <caption id={captionId} className="sr-only">
            {caption}
          </caption>
          <thead className="bg-sunken text-sm">
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => {
                  const sortable = header.column.getCanSort();
                  const direction = header.column.getIsSorted();
                  const label = flexRender(header.column.columnDef.header, header.getContext());
                  return (
                    <th
                      key={header.id}
                      scope="col"
                      aria-sort={sortable ? (direction === 'asc' ? 'ascending' : direction === 'desc' ? 'descending' : 'none') : undefined}
                      className="border-b border-line px-4 py-3 font-semibold whitespace-nowrap"
                    >
                      {sortable ? (
                        <button
                          type="button"
                          onClick={header.column.getToggleSortingHandler()}
                          className="inline-flex items-center gap-1 rounded font-semibold hover:text-accent"
                        >
                          {label}
                          <SortMark direction={direction} />
                        </button>
                      ) : (
                        label
                      )}
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody>
            {loading ? (
              <tr>
                <td colSpan={columnCount} className="px-4">
                  <Loading label={`Loading ${itemName[1]}…`} />
                </td>
              </tr>
            ) : rows.length === 0 ? (
              <tr>
                <td colSpan={columnCount} className="px-4 py-10 text-center text-ink-muted">
                  {empty}
                </td>
              </tr>
            ) : (
              table.getRowModel().rows.map((row) => (
                <tr key={row.id} className="border-b border-line last:border-b-0 hover:bg-paper">
                  {row.getVisibleCells().map((cell) => (
                    <td key={cell.id} className="px-4 py-3 align-top">
                      {flexRender(cell.column.columnDef.cell, cell.getContext())}
                    </td>
                  ))}
                </tr>
              ))
            )}
          </tbody>
        </table>
      </div>

      {!loading && total > 0 && (
        <div className="flex flex-wrap items-center justify-between gap-4 text-sm">
          <p aria-live="polite" className="flex items-center gap-2 text-ink-muted">
            {refreshing && <Spinner className="size-4" />}
            Showing {first.toLocaleString()}–{last.toLocaleString()} of {total.toLocaleString()}{' '}
            {total === 1 ? itemName[0] : itemName[1]}
          </p>
          {pageCount > 1 && (
            <nav aria-label={`Pages of ${itemName[1]}`} className="flex items-center gap-3">
              <Button variant="secondary" size="sm" onClick={() => table.previousPage()} disabled={!table.getCanPreviousPage()}>
                Previous
              </Button>
              <span>
                Page {pagination.pageIndex + 1} of {pageCount}
              </span>
              <Button variant="secondary" size="sm" onClick={() => table.nextPage()} disabled={!table.getCanNextPage()}>
                Next
              </Button>
            </nav>
          )}
        </div>
      )}
    </div>
  );
}

function SortMark({ direction }: { direction: false | 'asc' | 'desc' }) {
  return (
    <svg viewBox="0 0 12 12" className="size-3" aria-hidden="true">
      <path d="M6 1 9.5 5h-7z" fill="currentColor" opacity={direction === 'asc' ? 1 : 0.3} />
      <path d="M6 11 2.5 7h7z" fill="currentColor" opacity={direction === 'desc' ? 1 : 0.3} />
    </svg>
  );
}
