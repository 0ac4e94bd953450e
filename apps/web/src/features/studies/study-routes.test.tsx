import type { SessionUser, Study } from '@evenhand/entities';
import { QueryClientProvider } from '@tanstack/react-query';
import { render, screen, within } from '@testing-library/react';
import { createMemoryRouter, RouterProvider } from 'react-router-dom';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { createQueryClient } from '@/app/query-client';
import { createRoutes } from '@/app/router';

const study: Study = {
  id: 'e52097b0-c162-4c70-8320-4273bb6085d0',
  title: 'Lantern Reading Routine in grades 3 and 4',
  intervention: 'A daily 20-minute read-aloud, retell and reread routine.',
  comparisonCondition: 'The usual literacy block.',
  unitOfAssignment: 'classroom',
  status: 'enrolling',
  quasiExperimental: true,
  planVersion: 2,
  sealedAt: '2026-09-01T08:00:00.000Z',
  drawCommittedAt: null,
  counts: { sites: 6, classrooms: 24, measures: 2, waves: 2 },
  createdAt: '2026-08-20T08:00:00.000Z',
};

const person = (role: SessionUser['roles'][number]['role']): SessionUser => ({
  id: '0b7a4c55-8f0e-4a5e-9d55-6f1f3c2b9a10',
  email: `${role}@evenhand.test`,
  name: 'Corin Tallowmere',
  roles: [{ role, siteId: null, siteName: null }],
});

function answer(status: number, body: unknown) {
  return new Response(JSON.stringify(body), { status, headers: { 'Content-Type': 'application/json' } });
}

function openAt(path: string, user: SessionUser) {
  const fetchMock = vi.fn<typeof fetch>(async (input) => {
    const url = String(input);
    if (url === '/api/auth/me') return answer(200, { user });
    if (url === `/api/studies/${study.id}`) return answer(200, study);
    return answer(404, { error: { code: 'not_found', message: `unexpected request ${url}` } });
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

describe('the study layout', () => {
  it('opens a study on its Overview, with its state, its badges and the tabs a coordinator may use', async () => {
    const { router } = openAt(`/studies/${study.id}`, person('coordinator'));
    expect(await screen.findByRole('heading', { level: 1, name: study.title })).toBeInTheDocument();
    expect(router.state.location.pathname).toBe(`/studies/${study.id}/overview`);
    expect(screen.getByText('Quasi-experimental', { selector: 'span' })).toBeInTheDocument();
    expect(screen.getByText('Plan v2 sealed')).toBeInTheDocument();
    const tabs = within(screen.getByRole('navigation', { name: 'Study' })).getAllByRole('link');
    expect(tabs.map((t) => t.textContent)).toEqual(['Overview', 'Plan', 'Sites & classes', 'Draw', 'Score sheets', 'Digests']);
    expect(screen.getByRole('link', { name: 'Run the draw' })).toBeInTheDocument();
  });

  it("keeps the study's header when a tab is not for the person's role, and asks the API nothing for it", async () => {
    const { fetchMock } = openAt(`/studies/${study.id}/checks`, person('coordinator'));
    expect(await screen.findByRole('heading', { level: 1, name: 'Not available for your role' })).toBeInTheDocument();
    expect(screen.getByRole('heading', { level: 1, name: study.title })).toBeInTheDocument();
    expect(fetchMock.mock.calls.map(([url]) => String(url))).toEqual(['/api/auth/me', `/api/studies/${study.id}`]);
  });

  it('shows the not-found page for an address that is no study ID, without asking the API', async () => {
    const { fetchMock } = openAt('/studies/not-a-study/overview', person('research_lead'));
    expect(await screen.findByRole('heading', { level: 1, name: 'Page not found' })).toBeInTheDocument();
    expect(fetchMock.mock.calls.map(([url]) => String(url))).toEqual(['/api/auth/me']);
  });
});
