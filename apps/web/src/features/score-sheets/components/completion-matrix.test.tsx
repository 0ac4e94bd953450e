import type { CompletionMatrix } from '@evenhand/entities';
import { render, screen, within } from '@testing-library/react';
import { MemoryRouter } from 'react-router-dom';
import { describe, expect, it } from 'vitest';
import { CompletionTable, MatrixTotals, viewOf } from '@/features/score-sheets/components/completion-matrix';

const id = (n: number) => `00000000-0000-4000-8000-${String(n).padStart(12, '0')}`;
const autumn = { id: id(1), name: 'Autumn' };
const spring = { id: id(2), name: 'Spring' };
const fluency = { id: id(3), name: 'Fluency' };
const cell = (sheet: number, waveId: string, state: 'open' | 'submitted' | 'accepted' | 'returned', rows = 20, left = 0) => ({
  sheetId: id(100 + sheet),
  waveId,
  measureId: fluency.id,
  state,
  rows,
  left,
});

const matrix: CompletionMatrix = {
  waves: [autumn, spring],
  measures: [fluency],
  rows: [
    { classroomId: id(10), classroomName: 'Room 3A', siteId: id(20), siteName: 'Alderquill', teacherName: 'T. Ferreira', arm: 'intervention', cells: [cell(1, autumn.id, 'accepted'), cell(2, spring.id, 'returned', 20, 2)] },
    { classroomId: id(11), classroomName: 'Room 4A', siteId: id(21), siteName: 'Brackenwold', teacherName: 'M. Quinlan', arm: 'comparison', cells: [cell(3, autumn.id, 'accepted'), cell(4, spring.id, 'submitted')] },
    { classroomId: id(12), classroomName: 'Room 4B', siteId: id(21), siteName: 'Brackenwold', teacherName: 'M. Quinlan', arm: null, cells: [cell(5, autumn.id, 'accepted'), cell(6, spring.id, 'open', 0)] },
  ],
  totals: { open: 1, submitted: 1, accepted: 3, returned: 1 },
};

describe('viewOf', () => {
  it('keeps every classroom by site, and counts the shown sheets by state', () => {
    const view = viewOf(matrix, {});
    expect(view.sites.map((s) => [s.siteName, s.rows.length])).toEqual([['Alderquill', 1], ['Brackenwold', 2]]);
    expect(view.totals).toEqual({ open: 1, submitted: 1, accepted: 3, returned: 1 });
  });

  it('filters by site, by wave (its sheets only) and by a state some shown sheet is in', () => {
    expect(viewOf(matrix, { siteId: id(21) }).classrooms).toBe(2);
    const spring = viewOf(matrix, { waveId: id(2), state: 'accepted' });
    expect(spring.classrooms).toBe(0);
    const returned = viewOf(matrix, { state: 'returned' });
    expect(returned.sites.flatMap((s) => s.rows.map((r) => r.classroomName))).toEqual(['Room 3A']);
    expect(returned.totals).toEqual({ open: 0, submitted: 0, accepted: 1, returned: 1 });
  });
});

describe('CompletionTable', () => {
  it('names each cell by classroom, wave and measure and says its state in words, opening its sheet', () => {
    render(
      <MemoryRouter>
        <CompletionTable
          view={viewOf(matrix, {})}
          waveDates={[
            { id: autumn.id, studyId: id(9), kind: 'baseline', name: 'Autumn', opensOn: '2000-09-01', closesOn: '2000-10-01' },
            { id: spring.id, studyId: id(9), kind: 'outcome', name: 'Spring', opensOn: '2999-04-01', closesOn: '2999-05-01' },
          ]}
          sheetHref={(sheetId) => `/sheets/${sheetId}`}
        />
      </MemoryRouter>,
    );
    const returned = screen.getByRole('link', { name: 'Room 3A, Spring, Fluency: Returned 20 rows · 2 left' });
    expect(returned).toHaveAttribute('href', `/sheets/${id(102)}`);
    expect(screen.getByRole('link', { name: 'Room 4B, Spring, Fluency: Not due yet no rows' })).toBeInTheDocument();
    expect(screen.getByRole('columnheader', { name: 'Spring' })).toHaveAttribute('scope', 'colgroup');
    expect(screen.getByRole('rowheader', { name: /Brackenwold · 2 classrooms/ })).toBeInTheDocument();
    const footer = screen.getAllByRole('rowgroup').at(-1)!;
    expect(within(footer).getAllByRole('cell').map((c) => c.textContent)).toEqual(['3 of 3', '0 of 3']);
  });

  it('sums the shown sheets by state in words', () => {
    render(<MatrixTotals view={viewOf(matrix, {})} />);
    expect(screen.getByText('3 classrooms, 6 sheets')).toBeInTheDocument();
    expect(screen.getAllByRole('listitem').map((li) => li.textContent)).toEqual(['3 accepted', '1 submitted', '1 returned', '1 open']);
  });
});
