import { comparisonSchema, measureSchema, pageOf, planSchema, runSchema, studyChecksSchema, waveSchema, type Comparison, type Run } from '@evenhand/entities';
import { queryOptions } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';

// The report is one read-only document per study, assembled from several reads: there is no list to key.
export const reportKeys = {
  all: ['report'] as const,
  details: () => [...reportKeys.all, 'detail'] as const,
  detail: (studyId: string) => [...reportKeys.details(), studyId] as const,
};

/** The run a report shows for a comparison: its locked run, else its latest finished one (a newer run may have failed or still wait). */
export function reportedRunId(c: Comparison): string | null {
  return c.lockedRunId ?? c.latestFinishedRunId;
}

export interface ReportedComparison {
  comparison: Comparison;
  run: Run | null;
}

async function fetchReport(studyId: string, signal: AbortSignal) {
  const [plan, comparisons, checks, measures, waves] = await Promise.all([
    apiRequest(`/studies/${studyId}/plan`, { schema: planSchema, signal }),
    apiRequest(`/studies/${studyId}/comparisons`, { schema: pageOf(comparisonSchema), signal }),
    apiRequest(`/studies/${studyId}/checks`, { schema: studyChecksSchema, signal }),
    // The amendments name measures and waves by ID; the report names them as the Plan page does.
    apiRequest(`/studies/${studyId}/measures`, { schema: pageOf(measureSchema), signal }),
    apiRequest(`/studies/${studyId}/waves`, { schema: pageOf(waveSchema), signal }),
  ]);
  const reported: ReportedComparison[] = await Promise.all(
    comparisons.items.map(async (comparison) => {
      const runId = reportedRunId(comparison);
      return { comparison, run: runId ? await apiRequest(`/runs/${runId}`, { schema: runSchema, signal }) : null };
    }),
  );
  return { plan, checks, comparisons: reported, refs: { measures: measures.items, waves: waves.items } };
}

export type StudyReport = Awaited<ReturnType<typeof fetchReport>>;

export function studyReportQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: reportKeys.detail(studyId),
    queryFn: ({ signal }) => fetchReport(studyId, signal),
  });
}
