import { render, screen } from '@testing-library/react';
import { createMemoryRouter, RouterProvider } from 'react-router-dom';
import { describe, expect, it } from 'vitest';
import { RouteError } from '@/app/route-error';

function openFailing(error: unknown) {
  const router = createMemoryRouter(
    [
      {
        path: '/',
        errorElement: <RouteError />,
        loader: () => {
          throw error;
        },
        Component: () => null,
        HydrateFallback: () => null,
      },
    ],
    { initialEntries: ['/'] },
  );
  render(<RouterProvider router={router} />);
}

describe('RouteError', () => {
  it('asks for a reload when a page’s code is gone after a release (Chromium’s wording)', async () => {
    openFailing(new TypeError('Failed to fetch dynamically imported module: http://127.0.0.1:3000/assets/routes-Gone9999.js'));
    expect(await screen.findByRole('heading', { level: 1, name: 'Evenhand needs a reload' })).toBeInTheDocument();
    expect(screen.getByText(/most often because Evenhand was updated while it was open/)).toBeInTheDocument();
    expect(screen.getByRole('button', { name: 'Reload the page' })).toBeInTheDocument();
  });

  it('asks for a reload on Safari’s wording too', async () => {
    openFailing(new TypeError('Importing a module script failed.'));
    expect(await screen.findByRole('heading', { level: 1, name: 'Evenhand needs a reload' })).toBeInTheDocument();
  });

  it('keeps the general message for any other failure', async () => {
    openFailing(new TypeError('Cannot read properties of undefined'));
    expect(await screen.findByRole('heading', { level: 1, name: 'This page could not be opened' })).toBeInTheDocument();
    expect(screen.queryByText(/updated while it was open/)).not.toBeInTheDocument();
  });
});
