import type { SessionUser } from '@evenhand/entities';
import { QueryClientProvider } from '@tanstack/react-query';
import { fireEvent, render, screen } from '@testing-library/react';
import { createMemoryRouter, RouterProvider } from 'react-router-dom';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { createQueryClient } from '@/app/query-client';
import { createRoutes } from '@/app/router';

const teacher: SessionUser = {
  id: '0b7a4c55-8f0e-4a5e-9d55-6f1f3c2b9a10',
  email: 'teacher1@evenhand.test',
  name: 'Tomasz Thimblewick',
  roles: [{ role: 'teacher', siteId: '7f1c1f0e-3b1a-4c59-9a56-2f3b7b9d0a11', siteName: 'Alderquill Elementary' }],
};

function answer(status: number, body: unknown) {
  return new Response(JSON.stringify(body), { status, headers: { 'Content-Type': 'application/json' } });
}

function openAt(path: string, me: Response, others: Record<string, () => Response> = {}) {
  const fetchMock = vi.fn<typeof fetch>(async (input) => {
    const url = String(input);
    if (url === '/api/auth/me') return me;
    return others[url]?.() ?? answer(500, { error: { code: 'internal', message: `unexpected request ${url}` } });
  });
  vi.stubGlobal('fetch', fetchMock);
  const queryClient = createQueryClient();
  const router = createMemoryRouter(createRoutes(queryClient), { initialEntries: [path] });
  render(
    <QueryClientProvider client={queryClient}>
      <RouterProvider router={router} />
    </QueryClientProvider>,
  );
  return { router, fetchMock };
}

afterEach(() => {
  vi.unstubAllGlobals();
});

describe('routing', () => {
  it('sends a visitor who is not signed in to sign-in, keeping the page they wanted', async () => {
    const { router } = openAt('/accounts?role=teacher', answer(401, { error: { code: 'unauthenticated', message: 'Please sign in first' } }));
    expect(await screen.findByLabelText('E-mail address')).toBeInTheDocument();
    expect(router.state.location.pathname).toBe('/sign-in');
    expect(router.state.location.search).toBe('?next=%2Faccounts%3Frole%3Dteacher');
  });

  it('shows a teacher who opens Accounts that it is not available for their role, without asking the API for accounts', async () => {
    const { fetchMock } = openAt('/accounts', answer(200, { user: teacher }));
    expect(await screen.findByRole('heading', { level: 1, name: 'Not available for your role' })).toBeInTheDocument();
    expect(screen.getByRole('link', { name: 'My classes' })).toBeInTheDocument();
    expect(fetchMock.mock.calls.map(([url]) => String(url))).toEqual(['/api/auth/me']);
  });

  it("takes a signed-in teacher from the start page to My classes", async () => {
    const { router } = openAt('/', answer(200, { user: teacher }), {
      '/api/studies?limit=100&offset=0': () => answer(200, { items: [], total: 0 }),
    });
    expect(await screen.findByRole('heading', { level: 1, name: 'My classes' })).toBeInTheDocument();
    expect(screen.getByText('None of your classes is in a study yet')).toBeInTheDocument();
    expect(router.state.location.pathname).toBe('/my-classes');
    expect(screen.getByRole('button', { name: 'Sign out' })).toBeInTheDocument();
  });

  it('shows a visitor who is not signed in the not-found page for an unknown address', async () => {
    openAt('/no-such-page', answer(401, { error: { code: 'unauthenticated', message: 'Please sign in first' } }));
    expect(await screen.findByRole('heading', { level: 1, name: 'Page not found' })).toBeInTheDocument();
    expect(screen.getByText('/no-such-page')).toBeInTheDocument();
  });

  it("shows the API's message, as an alert, when the password is wrong", async () => {
    const signedOut = answer(401, { error: { code: 'unauthenticated', message: 'Please sign in first' } });
    openAt('/sign-in', signedOut, {
      '/api/auth/login': () =>
        answer(401, { error: { code: 'unauthenticated', message: 'The e-mail address or password is not right' } }),
    });
    fireEvent.change(await screen.findByLabelText('E-mail address'), { target: { value: 'lead@evenhand.test' } });
    fireEvent.change(screen.getByLabelText('Password'), { target: { value: 'not-my-password' } });
    fireEvent.click(screen.getByRole('button', { name: 'Sign in' }));
    expect(await screen.findByRole('alert')).toHaveTextContent('The e-mail address or password is not right');
  });
});
