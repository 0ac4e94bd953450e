import type { PaginationState } from '@tanstack/react-table';
import { useState } from 'react';

/**
 * Pages a list the API answers whole (a study's sites or classrooms) for DataTable, which renders
 * the page it is given; a page past the end (after filtering) shows the last one.
 */
export function useLocalRows<T>(rows: readonly T[], pageSize = 25) {
  const [pagination, setPagination] = useState<PaginationState>({ pageIndex: 0, pageSize });
  const pageCount = Math.max(1, Math.ceil(rows.length / pageSize));
  const pageIndex = Math.min(pagination.pageIndex, pageCount - 1);
  return {
    page: rows.slice(pageIndex * pageSize, (pageIndex + 1) * pageSize),
    total: rows.length,
    pagination: { pageIndex, pageSize },
    onPaginationChange: setPagination,
  };
}
