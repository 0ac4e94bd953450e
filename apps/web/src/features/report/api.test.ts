import type { Comparison } from '@evenhand/entities';
import { describe, expect, it } from 'vitest';
import { reportedRunId, reportedRunIds } from '@/features/report/api';

const base = { lockedRunId: null, latestFinishedRunId: null } as Pick<Comparison, 'lockedRunId' | 'latestFinishedRunId'>;
const locked = '0b8a3f0e-8f5e-4b7f-9d0e-1c2b3a4d5e6f';
const finished = '5f4e3d2c-1b0a-4f9e-8d7c-6b5a4f3e2d1c';

describe('reportedRunId', () => {
  it('reports the locked run when there is one', () => {
    expect(reportedRunId({ ...base, lockedRunId: locked, latestFinishedRunId: finished } as Comparison)).toBe(locked);
  });

  it('falls back to the latest finished run when the newest run failed or still waits', () => {
    expect(reportedRunId({ ...base, latestFinishedRunId: finished } as Comparison)).toBe(finished);
  });

  it('reports nothing when no run has finished', () => {
    expect(reportedRunId(base as Comparison)).toBeNull();
  });
});

describe('reportedRunIds', () => {
  it('when some comparisons have no finished run, then it lists the reported runs of the others only', () => {
    const comparisons = [{ ...base, lockedRunId: locked, latestFinishedRunId: finished }, base, { ...base, latestFinishedRunId: finished }] as Comparison[];
    expect(reportedRunIds(comparisons)).toEqual([locked, finished]);
  });
});
