import { render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { describe, expect, it, vi } from 'vitest';
import { ApiError } from '@/lib/api-client';
import { AddWaveForm } from '@/features/plan/components/measures-and-waves';

async function fillWave() {
  const user = userEvent.setup();
  await user.type(screen.getByLabelText(/wave name/i), 'Spring check');
  await user.type(screen.getByLabelText(/opens/i), '2027-03-01');
  await user.type(screen.getByLabelText(/closes/i), '2027-03-20');
  await user.click(screen.getByRole('button', { name: /add the wave/i }));
}

describe('adding a wave', () => {
  it('when the API refuses, then its field issue sits on the field and the other issue is listed with its message', async () => {
    const refusal = new ApiError({
      status: 400,
      code: 'validation_failed',
      message: 'Some request body values are not valid',
      details: { issues: [{ path: 'name', message: 'A wave of this study has that name' }, { path: 'studyId', message: 'The study is archived' }] },
    });
    render(<AddWaveForm waves={[]} onAdd={vi.fn().mockRejectedValue(refusal)} />);
    await fillWave();
    expect(await screen.findByRole('alert')).toHaveTextContent('Some request body values are not valid');
    expect(screen.getByRole('alert')).toHaveTextContent('The study is archived');
    expect(screen.getByLabelText(/wave name/i)).toHaveAccessibleDescription(/A wave of this study has that name/);
    expect(screen.queryByText(/is added/)).toBeNull();
  });

  it('when the API accepts, then the form empties and says the wave is added', async () => {
    const onAdd = vi.fn().mockResolvedValue({});
    render(<AddWaveForm waves={[]} onAdd={onAdd} />);
    await fillWave();
    expect(await screen.findByText('Spring check is added.')).toBeInTheDocument();
    expect(onAdd).toHaveBeenCalledWith(expect.objectContaining({ name: 'Spring check', opensOn: '2027-03-01', closesOn: '2027-03-20' }));
    expect(screen.getByLabelText(/wave name/i)).toHaveValue('');
    expect(screen.queryByRole('alert')).toBeNull();
  });
});
