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
    { email: 'lead@evenhand.test', name: 'Leigh Pennyquill', role: 'research_lead', siteName: null },
    { email: 'teacher1@evenhand.test', name: 'Tomasz Thimblewick', role: 'teacher', siteName: 'Alderquill Elementary' },
  ],
};

const passwordsOnly = { districtSignIn: false, passwordSignIn: 'everyone' } as const;
const problemMessage = 'Your district account is fine, but no Evenhand account uses newcomer@evenhand.test.';

function openSignIn(options: SignInOptions, entry = '/sign-in') {
  const answers: Record<string, unknown> = {
    '/api/auth/sign-in-options': options,
    '/api/auth/district/problem?ticket=the-ticket': { message: problemMessage },
  };
  const fetchMock = vi.fn<typeof fetch>(async (input) => {
    const url = String(input);
    const body = answers[url] ?? { error: { code: 'not_found', message: `unexpected request ${url}` } };
    return new Response(JSON.stringify(body), { status: url in answers ? 200 : 404, headers: { 'Content-Type': 'application/json' } });
  });
  vi.stubGlobal('fetch', fetchMock);
  const router = createMemoryRouter([{ path: '/sign-in', Component: SignInPage }], { initialEntries: [entry] });
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
    openSignIn({ demo, ...passwordsOnly });
    const panel = await screen.findByRole('complementary', { name: 'Demo accounts' });
    expect(panel).toHaveTextContent('evenhand-demo');
    const teacher = screen.getByRole('button', { name: /Teacher · Alderquill Elementary/ });
    expect(teacher).toHaveTextContent('teacher1@evenhand.test');
    fireEvent.click(teacher);
    await waitFor(() => expect(screen.getByLabelText('E-mail address')).toHaveValue('teacher1@evenhand.test'));
    expect(screen.getByLabelText('Password')).toHaveValue('evenhand-demo');
    expect(screen.getByRole('button', { name: 'Sign in' })).toHaveFocus();
  });

  it('when the API lists none (as in production), then there is no demo panel', async () => {
    const fetchMock = openSignIn({ demo: null, ...passwordsOnly });
    await waitFor(() => expect(fetchMock).toHaveBeenCalledWith('/api/auth/sign-in-options', expect.anything()));
    expect(await screen.findByRole('button', { name: 'Sign in' })).toBeVisible();
    // Let the answer render before looking for what it must not show.
    await new Promise((resolve) => setTimeout(resolve, 20));
    expect(screen.queryByRole('complementary', { name: 'Demo accounts' })).toBeNull();
    expect(screen.queryByText(/evenhand-demo/)).toBeNull();
  });

  it('when the API offers the district account, then a link starts it with the return path, and the password form stays', async () => {
    openSignIn({ demo, districtSignIn: true, passwordSignIn: 'everyone' }, '/sign-in?next=%2Fstudies');
    const district = await screen.findByRole('link', { name: 'Sign in with your district account' });
    expect(district).toHaveAttribute('href', '/api/auth/district/start?next=%2Fstudies');
    expect(screen.getByText('or with your Evenhand password')).toBeVisible();
    expect(screen.getByLabelText('Password')).toBeVisible();
    expect(screen.getByRole('complementary', { name: 'Demo accounts' })).toHaveTextContent(/local test provider/);
  });

  it('when password sign-in is for the admin only, then the page says so under the district button', async () => {
    openSignIn({ demo: null, districtSignIn: true, passwordSignIn: 'admin_only' });
    expect(await screen.findByText('Evenhand passwords: district admin only')).toBeVisible();
  });

  it('when it returns from a district sign-in that did not succeed, then it shows the API\'s explanation', async () => {
    openSignIn({ demo: null, districtSignIn: true, passwordSignIn: 'everyone' }, '/sign-in?district_problem=the-ticket');
    const alert = await screen.findByRole('alert');
    expect(alert).toHaveTextContent('You are not signed in');
    expect(alert).toHaveTextContent(problemMessage);
  });

  it('when the API does not offer the district account, then there is no district button', async () => {
    const fetchMock = openSignIn({ demo: null, ...passwordsOnly });
    await waitFor(() => expect(fetchMock).toHaveBeenCalledWith('/api/auth/sign-in-options', expect.anything()));
    await new Promise((resolve) => setTimeout(resolve, 20));
    expect(screen.queryByRole('link', { name: 'Sign in with your district account' })).toBeNull();
  });
});
