import type { SignInOptions } from '@evenhand/entities';
import { QueryClientProvider } from '@tanstack/react-query';
import { fireEvent, render, screen, waitFor } from '@testing-library/react';
import { createMemoryRouter, RouterProvider } from 'react-router-dom';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { createQueryClient } from '@/app/query-client';
import { SignInPage } from '@/features/auth/routes';

const demo: NonNullable<SignInOptions['demo']> = {
  password: 'evenhand-demo',
  accounts: [
    { email: 'lead@evenhand.test', name: 'Leigh Marsh-Tanaka', role: 'research_lead', siteName: null },
    { email: 'teacher1@evenhand.test', name: 'Tomasz Ferreira', role: 'teacher', siteName: 'Alder Street Elementary' },
  ],
};

function openSignIn(options: SignInOptions) {
  const fetchMock = vi.fn<typeof fetch>(async (input) => {
    const url = String(input);
    const body = url === '/api/auth/sign-in-options' ? options : { error: { code: 'not_found', message: `unexpected request ${url}` } };
    return new Response(JSON.stringify(body), { status: url === '/api/auth/sign-in-options' ? 200 : 404, headers: { 'Content-Type': 'application/json' } });
  });
  vi.stubGlobal('fetch', fetchMock);
  const router = createMemoryRouter([{ path: '/sign-in', Component: SignInPage }], { initialEntries: ['/sign-in'] });
  render(
    <QueryClientProvider client={createQueryClient()}>
      <RouterProvider router={router} />
    </QueryClientProvider>,
  );
  return fetchMock;
}

afterEach(() => {
  vi.unstubAllGlobals();
});

describe('the sign-in page', () => {
  it('when the API lists demo accounts, then it shows them and picking one fills in the form and focuses Sign in', async () => {
    openSignIn({ demo });
    const panel = await screen.findByRole('complementary', { name: 'Demo accounts' });
    expect(panel).toHaveTextContent('evenhand-demo');
    const teacher = screen.getByRole('button', { name: /Teacher · Alder Street Elementary/ });
    expect(teacher).toHaveTextContent('teacher1@evenhand.test');
    fireEvent.click(teacher);
    await waitFor(() => expect(screen.getByLabelText('E-mail address')).toHaveValue('teacher1@evenhand.test'));
    expect(screen.getByLabelText('Password')).toHaveValue('evenhand-demo');
    expect(screen.getByRole('button', { name: 'Sign in' })).toHaveFocus();
  });

  it('when the API lists none (as in production), then there is no demo panel', async () => {
    const fetchMock = openSignIn({ demo: null });
    await waitFor(() => expect(fetchMock).toHaveBeenCalledWith('/api/auth/sign-in-options', expect.anything()));
    expect(await screen.findByRole('button', { name: 'Sign in' })).toBeVisible();
    // Let the answer render before looking for what it must not show.
    await new Promise((resolve) => setTimeout(resolve, 20));
    expect(screen.queryByRole('complementary', { name: 'Demo accounts' })).toBeNull();
    expect(screen.queryByText(/evenhand-demo/)).toBeNull();
  });
});
