import type { ScoreRow, ScoreSheetDetail } from '@evenhand/entities';
import { QueryClientProvider } from '@tanstack/react-query';
import { render } from '@testing-library/react';
import type { ReactElement } from 'react';
import { createMemoryRouter, RouterProvider } from 'react-router-dom';
import { createQueryClient } from '@/app/query-client';

/** An open sheet in an open wave, for component tests; override what a test is about. */
export function sheetFixture(overrides: Partial<ScoreSheetDetail> = {}, rows: ScoreRow[] = []): ScoreSheetDetail {
  return {
    id: '6a1f3c2b-9a10-4e5e-9d55-0b7a4c558f0e',
    studyId: '954cc404-3f1a-412b-9845-fb0e240b5851',
    classroomId: 'f9d0ec44-40c7-49b1-b5e5-de21755f58f8',
    classroomName: 'Room 3B',
    siteId: 'aa6208c8-eae7-4d32-bb3f-15f0e5fe5caa',
    siteName: 'Alderquill Elementary',
    teacherName: 'Tomasz Thimblewick',
    arm: 'intervention',
    waveId: '0663678a-eb9e-4f7f-a0dc-3dd411ac03f9',
    waveName: 'Spring 2026',
    waveKind: 'outcome',
    opensOn: '2026-04-27',
    closesOn: '2026-05-22',
    measureId: '139ae8f8-5d07-480e-868c-375600720c0d',
    measureName: 'Oral reading fluency',
    scale: 'score',
    minScore: 0,
    maxScore: 250,
    state: 'open',
    mode: 'rows',
    summaryAllowed: false,
    editable: true,
    locked: false,
    returnReasons: null,
    counts: { rows: rows.length, scored: rows.filter((r) => r.score !== null).length, left: rows.filter((r) => r.left).length },
    summary: null,
    updatedAt: '2026-05-01T09:30:00.000Z',
    submittedAt: null,
    rows,
    ...overrides,
  };
}

/** Renders inside a data router (the editor guards leaving) and a fresh query client. */
export function renderWithRouter(ui: ReactElement) {
  const queryClient = createQueryClient();
  const router = createMemoryRouter([{ path: '/', element: ui }], { initialEntries: ['/'] });
  const result = render(
    <QueryClientProvider client={queryClient}>
      <RouterProvider router={router} />
    </QueryClientProvider>,
  );
  return { ...result, queryClient, router };
}
