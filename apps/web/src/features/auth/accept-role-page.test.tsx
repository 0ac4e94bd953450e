import { QueryClientProvider } from '@tanstack/react-query';
import { fireEvent, render, screen } from '@testing-library/react';
import { createMemoryRouter, RouterProvider } from 'react-router-dom';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { createQueryClient } from '@/app/query-client';
import { AcceptRolePage } from '@/features/auth/routes';

const siteId = '11111111-1111-4111-8111-111111111111';

function openAccept(answer: { status: number; body: unknown }) {
  const fetchMock = vi.fn<typeof fetch>(async () => new Response(JSON.stringify(answer.body), { status: answer.status, headers: { 'Content-Type': 'application/json' } }));
  vi.stubGlobal('fetch', fetchMock);
  const router = createMemoryRouter([{ path: '/invitations/accept', Component: AcceptRolePage }], { initialEntries: ['/invitations/accept?token=the-token-from-the-mail'] });
  render(
    <QueryClientProvider client={createQueryClient()}>
      <RouterProvider router={router} />
    </QueryClientProvider>,
  );
  return fetchMock;
}

afterEach(() => vi.unstubAllGlobals());

describe('AcceptRolePage', () => {
  it('when the person accepts, then the token is sent and the role now held is named', async () => {
    const fetchMock = openAccept({ status: 200, body: { role: 'teacher', siteId, siteName: 'Willowmere Elementary' } });
    expect(fetchMock).not.toHaveBeenCalled();
    fireEvent.click(screen.getByRole('button', { name: 'Accept the role' }));
    expect(await screen.findByText('You are now teacher at Willowmere Elementary.')).toBeInTheDocument();
    const [url, init] = fetchMock.mock.calls[0];
    expect(String(url)).toBe('/api/role-invitations/accept');
    expect(JSON.parse(String(init?.body))).toEqual({ token: 'the-token-from-the-mail' });
  });

  it('when the API refuses, then its message is shown as an alert', async () => {
    const message = 'This role is no longer offered to you (someone else was named, or your account has a role that conflicts with it)';
    openAccept({ status: 409, body: { error: { code: 'conflict', message } } });
    fireEvent.click(screen.getByRole('button', { name: 'Accept the role' }));
    expect(await screen.findByRole('alert')).toHaveTextContent(message);
  });
});
