import { screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { SummaryForm } from '@/features/score-sheets/components/summary-form';
import { renderWithRouter, sheetFixture } from '@/features/score-sheets/test-support';
import { apiRequest } from '@/lib/api-client';

vi.mock('@/lib/api-client', async (importOriginal) => {
  const actual = await importOriginal<typeof import('@/lib/api-client')>();
  return { ...actual, apiRequest: vi.fn() };
});
const request = vi.mocked(apiRequest);
afterEach(() => request.mockReset());

describe('SummaryForm', () => {
  it('refuses a mean outside the measure’s range and a class of one, without asking the server', async () => {
    const user = userEvent.setup();
    renderWithRouter(<SummaryForm sheet={sheetFixture({ summaryAllowed: true, maxScore: 100 })} />);
    await user.type(screen.getByLabelText('Students tested (n)'), '1');
    await user.type(screen.getByLabelText('Mean score'), '120');
    await user.click(screen.getByRole('button', { name: 'Save the summary' }));
    expect(await screen.findByText("Use a mean from 0 to 100, the measure's range")).toBeInTheDocument();
    expect(screen.getByText('A summary needs at least 2 students')).toBeInTheDocument();
    expect(screen.getByLabelText('Standard deviation (SD)')).toHaveAccessibleDescription('Enter a number');
    expect(request).not.toHaveBeenCalled();
  });

  it('saves n, mean and SD as numbers', async () => {
    const user = userEvent.setup();
    const sheet = sheetFixture({ summaryAllowed: true });
    request.mockResolvedValue({ ...sheet, mode: 'summary', summary: { n: 21, mean: 88.5, sd: 14 } });
    renderWithRouter(<SummaryForm sheet={sheet} />);
    await user.type(screen.getByLabelText('Students tested (n)'), '21');
    await user.type(screen.getByLabelText('Mean score'), '88,5');
    await user.type(screen.getByLabelText('Standard deviation (SD)'), '14');
    await user.click(screen.getByRole('button', { name: 'Save the summary' }));
    expect(await screen.findByText(/^Saved /)).toBeInTheDocument();
    expect(request).toHaveBeenCalledWith(`/score-sheets/${sheet.id}/summary`, expect.objectContaining({ method: 'PUT', body: { summary: { n: 21, mean: 88.5, sd: 14 } } }));
  });
});
