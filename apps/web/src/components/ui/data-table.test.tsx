import { createColumnHelper } from '@tanstack/react-table';
import { fireEvent, render, screen, within } from '@testing-library/react';
import { describe, expect, it, vi } from 'vitest';
import { DataTable, type DataTableProps } from '@/components/ui/data-table';

interface School {
  id: string;
  name: string;
}

const column = createColumnHelper<School>();
const columns = [column.accessor('name', { header: 'School' }), column.accessor('id', { header: 'Code', enableSorting: false })];

function renderTable(overrides: Partial<DataTableProps<School>> = {}) {
  const props: DataTableProps<School> = {
    caption: 'Schools',
    columns,
    rows: [],
    total: 0,
    getRowId: (s) => s.id,
    loading: false,
    empty: 'No schools match these filters.',
    itemName: ['school', 'schools'],
    pagination: { pageIndex: 0, pageSize: 2 },
    onPaginationChange: vi.fn(),
    ...overrides,
  };
  return render(<DataTable {...props} />);
}

describe('DataTable', () => {
  it('says it is loading, and not that nothing matches, while the first page is on its way', () => {
    renderTable({ loading: true });
    expect(screen.getByRole('status')).toHaveTextContent('Loading schools…');
    expect(screen.queryByText('No schools match these filters.')).not.toBeInTheDocument();
    expect(screen.getByRole('table')).toHaveAttribute('aria-busy', 'true');
  });

  it('shows the empty state when the server found nothing', () => {
    renderTable();
    expect(screen.getByText('No schools match these filters.')).toBeInTheDocument();
    expect(screen.queryByRole('status')).not.toBeInTheDocument();
    expect(screen.queryByText(/Showing/)).not.toBeInTheDocument();
  });

  it('renders the page it is given and counts across all pages', () => {
    renderTable({ rows: [{ id: 'ALD', name: 'Alderquill' }, { id: 'BRK', name: 'Brackenwold' }], total: 5 });
    const body = screen.getAllByRole('rowgroup')[1];
    expect(within(body).getAllByRole('row')).toHaveLength(2);
    expect(screen.getByText(/Showing 1–2 of 5 schools/)).toBeInTheDocument();
    expect(screen.getByText('Page 1 of 3')).toBeInTheDocument();
  });

  it('asks for the next page', () => {
    const onPaginationChange = vi.fn();
    renderTable({ rows: [{ id: 'ALD', name: 'Alderquill' }, { id: 'BRK', name: 'Brackenwold' }], total: 5, onPaginationChange });
    fireEvent.click(screen.getByRole('button', { name: 'Next' }));
    expect(onPaginationChange).toHaveBeenCalledWith({ pageIndex: 1, pageSize: 2 });
    expect(screen.getByRole('button', { name: 'Previous' })).toBeDisabled();
  });

  it('asks the server for the other sort order when a sorted header is clicked, and marks the column', () => {
    const onSortingChange = vi.fn();
    renderTable({
      rows: [{ id: 'ALD', name: 'Alderquill' }],
      total: 1,
      sorting: [{ id: 'name', desc: false }],
      onSortingChange,
    });
    expect(screen.getByRole('columnheader', { name: /School/ })).toHaveAttribute('aria-sort', 'ascending');
    expect(screen.getByRole('columnheader', { name: 'Code' })).not.toHaveAttribute('aria-sort');
    fireEvent.click(screen.getByRole('button', { name: /School/ }));
    expect(onSortingChange).toHaveBeenCalledWith([{ id: 'name', desc: true }]);
  });
});
