import { classroomCsvColumns } from '@evenhand/entities';
import { render, screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { describe, expect, it, vi } from 'vitest';
import { ClassroomImport, classroomTemplate } from '@/features/sites/components/classroom-import';
import { ApiError } from '@/lib/api-client';

const sites = [{ id: '7f1c1f0e-3b1a-4c59-9a56-2f3b7b9d0a11', name: 'Alderquill Elementary', code: 'ALD', principal: null, classrooms: 0, expectedStudents: 0 }];
const file = new File(['site_code,cohort\n'], 'classrooms.csv', { type: 'text/csv' });

async function upload(onImport: (file: File) => Promise<{ created: number }>) {
  const user = userEvent.setup();
  render(<ClassroomImport sites={sites} onImport={onImport} onClose={vi.fn()} />);
  await user.upload(screen.getByLabelText('CSV file'), file);
  await user.click(screen.getByRole('button', { name: 'Check and add the classrooms' }));
}

describe('ClassroomImport', () => {
  it('lists every problem of a refused file in a table, by line and column', async () => {
    const onImport = vi.fn().mockRejectedValue(
      new ApiError({
        status: 400,
        code: 'validation_failed',
        message: '2 problem(s) in the file; nothing was imported',
        details: {
          rows: [
            { row: 3, column: 'site_code', message: 'No site with code XYZ is enrolled in this study' },
            { row: 5, column: 'expected_size', message: 'expected_size must be a whole number' },
          ],
        },
      }),
    );
    await upload(onImport);

    expect(onImport).toHaveBeenCalledWith(file);
    expect(await screen.findByRole('alert')).toHaveTextContent('2 problem(s) in the file; nothing was imported');
    const table = screen.getByRole('table', { name: '2 problems in the file' });
    const rows = within(table).getAllByRole('row').slice(1);
    expect(rows.map((r) => [...r.querySelectorAll('th, td')].map((c) => c.textContent))).toEqual([
      ['3', 'site_code', 'No site with code XYZ is enrolled in this study'],
      ['5', 'expected_size', 'expected_size must be a whole number'],
    ]);
  });

  it('shows a refusal without row details as a message only', async () => {
    await upload(vi.fn().mockRejectedValue(new ApiError({ status: 400, code: 'validation_failed', message: 'The header row lacks the column(s) grade' })));
    expect(await screen.findByRole('alert')).toHaveTextContent('The header row lacks the column(s) grade');
    expect(screen.queryByRole('table')).not.toBeInTheDocument();
  });

  it('says how many classrooms were added', async () => {
    await upload(vi.fn().mockResolvedValue({ created: 4 }));
    expect(await screen.findByText(/4 classrooms are added/)).toBeInTheDocument();
  });
});

describe('classroomTemplate', () => {
  it("starts with the import's columns and gives an example row per enrolled site", () => {
    const [header, first] = classroomTemplate(sites).trim().split('\r\n');
    expect(header).toBe(classroomCsvColumns.join(','));
    expect(first.startsWith('ALD,')).toBe(true);
  });

  it('defuses a site code a spreadsheet would read as a formula', () => {
    const [, first] = classroomTemplate([{ code: '-X1' }]).split('\r\n');
    expect(first.startsWith("'-X1,")).toBe(true);
  });
});
