import { screen, waitFor, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { RowsEditor } from '@/features/score-sheets/components/rows-editor';
import { renderWithRouter, sheetFixture } from '@/features/score-sheets/test-support';
import { ApiError, apiRequest } from '@/lib/api-client';

vi.mock('@/lib/api-client', async (importOriginal) => {
  const actual = await importOriginal<typeof import('@/lib/api-client')>();
  return { ...actual, apiRequest: vi.fn() };
});

const request = vi.mocked(apiRequest);

afterEach(() => {
  request.mockReset();
});

const cell = (column: string, row: number) => screen.getByRole('textbox', { name: `${column}, row ${row}` });
const status = () => screen.getAllByRole('status').find((el) => el.getAttribute('aria-live') === 'polite' && el.tagName === 'P')!;

describe('RowsEditor', () => {
  it('flags a score outside the measure’s range and a duplicated student code on both rows', () => {
    renderWithRouter(
      <RowsEditor
        sheet={sheetFixture({}, [
          { studentCode: 'LV-0001', score: 300, left: false, note: '' },
          { studentCode: 'LV-0002', score: 60, left: false, note: '' },
          { studentCode: 'LV-0002', score: 61, left: false, note: '' },
        ])}
      />,
    );
    expect(cell('Score', 1)).toHaveAttribute('aria-invalid', 'true');
    expect(cell('Score', 1)).toHaveAccessibleDescription("The score 300 is outside the measure's range 0–250");
    expect(cell('Student code', 2)).toHaveAccessibleDescription(/also on row 3/);
    expect(cell('Student code', 3)).toHaveAccessibleDescription(/also on row 2/);
    expect(cell('Score', 2)).not.toHaveAttribute('aria-invalid');
  });

  it('saves a row whose score is still to come as a draft, and flags it only when the teacher submits', async () => {
    const user = userEvent.setup();
    request.mockImplementation(async (_path, options) => ({ ...sheetFixture(), rows: (options?.body as { rows: [] }).rows }));
    renderWithRouter(<RowsEditor sheet={sheetFixture()} saveDelay={5} />);
    await user.click(cell('Student code', 1));
    await user.keyboard('LV-0009{Enter}');
    expect(await screen.findByText(/^Saved at /)).toBeInTheDocument();
    expect(request).toHaveBeenCalledWith(
      `/score-sheets/${sheetFixture().id}`,
      expect.objectContaining({ method: 'PUT', body: { rows: [{ studentCode: 'LV-0009', score: null, left: false, note: '' }] } }),
    );
    expect(cell('Score', 1)).not.toHaveAttribute('aria-invalid');

    await user.click(screen.getByRole('button', { name: 'Submit to the coordinator' }));
    expect(await screen.findByText('1 row has no score yet: enter a score, or tick “left the study”, then submit.')).toBeInTheDocument();
    expect(cell('Score', 1)).toHaveAttribute('aria-invalid', 'true');
    expect(cell('Score', 1)).toHaveAccessibleDescription(/Enter a score, or mark the student as having left the study/);
    expect(screen.queryByRole('dialog')).not.toBeInTheDocument();
  });

  it('saves the whole sheet after a pause in typing and says when', async () => {
    const user = userEvent.setup();
    request.mockImplementation(async (_path, options) => ({ ...sheetFixture(), rows: (options?.body as { rows: [] }).rows }));
    renderWithRouter(<RowsEditor sheet={sheetFixture({}, [{ studentCode: 'LV-0001', score: 80, left: false, note: '' }])} saveDelay={5} />);
    await user.click(cell('Score', 1));
    await user.keyboard('{Control>}a{/Control}95');
    expect(await screen.findByText(/^Saved at /)).toBeInTheDocument();
    expect(request).toHaveBeenCalledWith(
      `/score-sheets/${sheetFixture().id}`,
      expect.objectContaining({ method: 'PUT', body: { rows: [{ studentCode: 'LV-0001', score: 95, left: false, note: '' }] } }),
    );
  });

  it('when the server refuses the save, keeps what was typed and shows its messages on the cells', async () => {
    const user = userEvent.setup();
    request.mockRejectedValue(
      new ApiError({
        status: 400,
        code: 'validation_failed',
        message: '1 problem(s) found; nothing was saved',
        details: { rows: [{ row: 2, column: 'student_code', message: 'Student code LV-0444 cannot be used in this classroom' }], total: 1 },
      }),
    );
    renderWithRouter(<RowsEditor sheet={sheetFixture({}, [{ studentCode: 'LV-0001', score: 80, left: false, note: '' }])} saveDelay={5} />);
    await user.click(cell('Student code', 1));
    await user.keyboard('{Enter}LV-0444{Tab}77');
    expect(await screen.findByText(/Not saved: 1 problem\(s\) found; nothing was saved/)).toBeInTheDocument();
    expect(cell('Student code', 2)).toHaveValue('LV-0444');
    expect(cell('Score', 2)).toHaveValue('77');
    // An earlier save (before the score was typed) can be the one refused first: the messages return once the last save is refused.
    await waitFor(() => expect(cell('Student code', 2)).toHaveAccessibleDescription(/cannot be used in this classroom/));
    expect(within(status().parentElement!).getByRole('button', { name: 'Try again' })).toBeInTheDocument();
  });

  it('when the server cannot be reached, keeps the input and says so', async () => {
    const user = userEvent.setup();
    request.mockRejectedValue(new ApiError({ status: 0, code: 'unavailable', message: 'Evenhand could not be reached. Check your connection and try again.' }));
    renderWithRouter(<RowsEditor sheet={sheetFixture({}, [{ studentCode: 'LV-0001', score: 80, left: false, note: '' }])} saveDelay={5} />);
    await user.click(screen.getByRole('checkbox', { name: 'Left the study, row 1' }));
    expect(await screen.findByText(/Not saved: Evenhand could not be reached/)).toBeInTheDocument();
    expect(screen.getByRole('checkbox', { name: 'Left the study, row 1' })).toBeChecked();
  });

  it('marks the rows whose codes the coordinator named when returning the sheet', () => {
    renderWithRouter(
      <RowsEditor
        sheet={sheetFixture({ state: 'returned', returnReasons: 'LV-0002 reads 12 in spring; please check.' }, [
          { studentCode: 'LV-0001', score: 80, left: false, note: '' },
          { studentCode: 'LV-0002', score: 12, left: false, note: '' },
        ])}
      />,
    );
    expect(screen.getByRole('rowheader', { name: /^2\s*, named in the coordinator’s reasons/ })).toBeInTheDocument();
    expect(screen.queryByRole('rowheader', { name: /^1\s*, named/ })).not.toBeInTheDocument();
  });
});
