import type { InviteAccount, Site } from '@evenhand/entities';
import { fireEvent, render, screen, waitFor } from '@testing-library/react';
import { describe, expect, it, vi } from 'vitest';
import { InviteForm } from '@/features/accounts/components/invite-form';
import { ApiError } from '@/lib/api-client';

const sites: Site[] = [
  { id: '7f1c1f0e-3b1a-4c59-9a56-2f3b7b9d0a11', name: 'Alderquill Elementary', code: 'ALD', principal: null },
  { id: '2d4e6f80-1a2b-4c3d-8e9f-0a1b2c3d4e5f', name: 'Brackenwold Middle School', code: 'BRK', principal: null },
];

function fillIn(label: string, value: string) {
  fireEvent.change(screen.getByLabelText(label), { target: { value } });
}

function renderForm(onInvite: (input: InviteAccount) => Promise<unknown>) {
  render(<InviteForm sites={sites} onInvite={onInvite} onCancel={vi.fn()} />);
  fillIn('Name', 'Dana Whitfield');
  fillIn('E-mail address', 'Dana@Example.org');
}

describe('InviteForm', () => {
  it("puts the API's field issues next to the fields they name", async () => {
    const onInvite = vi.fn().mockRejectedValue(
      new ApiError({
        status: 400,
        code: 'validation_failed',
        message: 'Some request body values are not valid',
        details: {
          issues: [
            { path: 'email', message: 'This domain does not receive mail' },
            { path: 'roles.0.siteId', message: 'This school has left the district' },
          ],
        },
      }),
    );
    renderForm(onInvite);
    fillIn('School', sites[0].id);
    fireEvent.click(screen.getByRole('button', { name: 'Send invitation' }));

    expect(await screen.findByRole('alert')).toHaveTextContent('Some request body values are not valid');
    expect(screen.getByLabelText('E-mail address')).toHaveAccessibleDescription(/This domain does not receive mail/);
    expect(screen.getByLabelText('School')).toHaveAccessibleDescription('This school has left the district');
    expect(screen.getByLabelText('School')).toHaveAttribute('aria-invalid', 'true');
  });

  it('lists an issue that names no field of the form under the message', async () => {
    const onInvite = vi.fn().mockRejectedValue(
      new ApiError({
        status: 400,
        code: 'validation_failed',
        message: 'Some request body values are not valid',
        details: { issues: [{ path: 'invitedBy', message: 'Your account cannot invite' }] },
      }),
    );
    renderForm(onInvite);
    fillIn('School', sites[0].id);
    fireEvent.click(screen.getByRole('button', { name: 'Send invitation' }));
    expect(await screen.findByRole('alert')).toHaveTextContent('Your account cannot invite');
  });

  it('sends a teacher grant with its school, and a district-wide grant without one', async () => {
    const onInvite = vi.fn().mockResolvedValue(undefined);
    renderForm(onInvite);
    fillIn('School', sites[1].id);
    fireEvent.click(screen.getByRole('button', { name: 'Add another role' }));
    fillIn('Role 2', 'research_lead');
    fireEvent.click(screen.getByRole('button', { name: 'Send invitation' }));

    await waitFor(() => expect(onInvite).toHaveBeenCalledTimes(1));
    expect(onInvite).toHaveBeenCalledWith({
      name: 'Dana Whitfield',
      email: 'dana@example.org',
      roles: [
        { role: 'teacher', siteId: sites[1].id },
        { role: 'research_lead', siteId: null },
      ],
    });
  });

  it('asks for a school before sending a teacher grant, using the shared schema', async () => {
    const onInvite = vi.fn();
    renderForm(onInvite);
    fireEvent.click(screen.getByRole('button', { name: 'Send invitation' }));
    expect(await screen.findByText('A teacher grant needs a site')).toBeInTheDocument();
    expect(onInvite).not.toHaveBeenCalled();
  });
});
