import { screen, within } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { CsvUpload } from '@/features/score-sheets/components/csv-upload';
import { renderWithRouter, sheetFixture } from '@/features/score-sheets/test-support';
import { ApiError } from '@/lib/api-client';
import { uploadFile } from '@/lib/upload';

vi.mock('@/lib/upload', () => ({ uploadFile: vi.fn() }));
const upload = vi.mocked(uploadFile);

beforeAll(() => {
  // jsdom has <dialog> without its modal methods.
  HTMLDialogElement.prototype.showModal ??= function (this: HTMLDialogElement) {
    this.setAttribute('open', '');
  };
  HTMLDialogElement.prototype.close ??= function (this: HTMLDialogElement) {
    this.removeAttribute('open');
  };
});

afterEach(() => upload.mockReset());

const csv = (text: string) => new File([text], 'spring.csv', { type: 'text/csv' });
const rows = Array.from({ length: 14 }, (_, i) => ({ studentCode: `LV-${100 + i}`, score: 50 + i, left: false, note: '' }));

describe('CsvUpload', () => {
  it('checks the chosen file first, previews its first rows and total, and replaces the sheet only once confirmed', async () => {
    const user = userEvent.setup();
    upload.mockImplementation(async (_path, options) => ({
      dryRun: options.query?.dryRun === 'true',
      rows: 14,
      preview: rows,
      sheet: null,
    }));
    const onReplaced = vi.fn();
    renderWithRouter(<CsvUpload sheet={sheetFixture()} hasRows onReplaced={onReplaced} />);

    await user.upload(screen.getByLabelText('CSV file'), csv('student_code,score\nLV-100,50\n'));
    expect(await screen.findByText('spring.csv is ready: 14 rows, no problems found')).toBeInTheDocument();
    expect(upload).toHaveBeenCalledTimes(1);
    expect(upload.mock.calls[0][1].query).toEqual({ dryRun: 'true', replace: 'false' });
    const preview = screen.getByRole('table', { name: 'The first rows of spring.csv' });
    expect(within(preview).getAllByRole('row')).toHaveLength(11); // header + 10
    expect(within(preview).getByRole('cell', { name: 'LV-100' })).toBeInTheDocument();
    expect(screen.getByText('…and 4 more.')).toBeInTheDocument();

    await user.click(screen.getByRole('button', { name: 'Replace the sheet with these 14 rows' }));
    expect(upload).toHaveBeenCalledTimes(1);
    await user.click(screen.getByRole('button', { name: 'Replace the rows' }));
    expect(await screen.findByText("The sheet now holds the file's rows")).toBeInTheDocument();
    expect(upload.mock.calls[1][1].query).toEqual({ dryRun: 'false', replace: 'true' });
    expect(onReplaced).toHaveBeenCalled();
  });

  it('lists the file’s problems by line number and writes nothing', async () => {
    const user = userEvent.setup();
    upload.mockRejectedValue(
      new ApiError({
        status: 400,
        code: 'validation_failed',
        message: '2 problem(s) found; nothing was saved',
        details: {
          rows: [
            { row: 3, column: 'score', message: "The score 300 is outside the measure's range 0–250" },
            { row: 5, column: 'left', message: 'Write yes or no in the “left” column' },
          ],
          total: 2,
        },
      }),
    );
    renderWithRouter(<CsvUpload sheet={sheetFixture()} hasRows={false} />);
    await user.upload(screen.getByLabelText('CSV file'), csv('student_code,score\n'));

    expect(await screen.findByText('spring.csv was not used; the sheet has not changed')).toBeInTheDocument();
    const problems = screen.getByRole('table', { name: 'Problems in spring.csv, by line' });
    const [, first, second] = within(problems).getAllByRole('row');
    expect(within(first).getAllByRole('cell').map((c) => c.textContent)).toEqual(['3', 'score', "The score 300 is outside the measure's range 0–250"]);
    expect(within(second).getAllByRole('cell')[0]).toHaveTextContent('5');
    expect(upload).toHaveBeenCalledTimes(1);
    expect(screen.queryByRole('button', { name: /Replace the sheet|Put these/ })).not.toBeInTheDocument();
  });

  it('refuses a file over 10 MB without sending it', async () => {
    const user = userEvent.setup();
    renderWithRouter(<CsvUpload sheet={sheetFixture()} hasRows={false} />);
    const big = csv('x');
    Object.defineProperty(big, 'size', { value: 11 * 1024 * 1024 });
    await user.upload(screen.getByLabelText('CSV file'), big);
    expect(await screen.findByText(/larger than the 10 MB limit/)).toBeInTheDocument();
    expect(upload).not.toHaveBeenCalled();
  });
});
