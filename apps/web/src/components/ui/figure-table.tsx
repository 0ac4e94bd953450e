import { useId, type ReactNode } from 'react';

export interface FigureColumn<K extends string = string> {
  key: K;
  header: ReactNode;
  /** Numbers align right so their digits line up. */
  numeric?: boolean;
}

interface FigureTableProps<K extends string> {
  /** Names the table; visible unless `hideCaption`. */
  caption: ReactNode;
  hideCaption?: boolean;
  columns: readonly FigureColumn<K>[];
  /** The first column of each row is its header (a wave, an arm, a site). */
  rows: readonly ({ id: string } & Record<K, ReactNode>)[];
  /** A last row that sums up the others (a pooled estimate, a total), set apart from them. */
  footer?: Record<K, ReactNode>;
  className?: string;
}

/**
 * A small, fixed table of figures (a result's descriptives, a chart's numbers). Lists that page, sort
 * and filter on the server use DataTable instead.
 */
// The frame is `relative` so that screen-reader-only text in a cell (absolutely positioned) stays inside the scrolling
// frame; otherwise it widens the whole page on a phone.
export function FigureTable<K extends string>({ caption, hideCaption = false, columns, rows, footer, className = '' }: FigureTableProps<K>) {
  const captionId = useId();
  const cell = (column: FigureColumn<K>, i: number) =>
    `px-3 py-2 align-top ${column.numeric ? 'text-right tabular-nums whitespace-nowrap' : 'text-left'} ${i === 0 ? 'font-semibold' : ''}`;
  return (
    // Focusable and named like DataTable's frame, so a table wider than the screen can be scrolled from the keyboard.
    <div
      role="region"
      aria-labelledby={captionId}
      tabIndex={0}
      className={`figure-table relative overflow-x-auto rounded-lg border border-line bg-surface ${className}`}
    >
      <table className="w-full border-collapse text-sm">
        <caption id={captionId} className={hideCaption ? 'sr-only' : 'px-3 pt-3 pb-1 text-left font-semibold'}>
          {caption}
        </caption>
        <thead className="bg-sunken">
          <tr>
            {columns.map((column) => (
              <th key={column.key} scope="col" className={`${cell(column, -1)} border-b border-line font-semibold`}>
                {column.header}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {rows.map((row) => (
            <tr key={row.id} className="border-b border-line last:border-b-0">
              {columns.map((column, i) =>
                i === 0 ? (
                  <th key={column.key} scope="row" className={cell(column, i)}>
                    {row[column.key]}
                  </th>
                ) : (
                  <td key={column.key} className={cell(column, i)}>
                    {row[column.key]}
                  </td>
                ),
              )}
            </tr>
          ))}
        </tbody>
        {footer && (
          <tfoot className="border-t-2 border-line-strong bg-paper">
            <tr>
              {columns.map((column, i) =>
                i === 0 ? (
                  <th key={column.key} scope="row" className={cell(column, i)}>
                    {footer[column.key]}
                  </th>
                ) : (
                  <td key={column.key} className={cell(column, i)}>
                    {footer[column.key]}
                  </td>
                ),
              )}
            </tr>
          </tfoot>
        )}
      </table>
    </div>
  );
}
