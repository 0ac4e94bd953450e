import type { Comparison, Run } from '@evenhand/entities';
import { useSuspenseQueries } from '@tanstack/react-query';
import { comparisonsQueryOptions, runQueryOptions } from '@/features/comparisons/api';
import { planQueryOptions } from '@/features/plan/api';
import { measuresQueryOptions, studyChecksQueryOptions, wavesQueryOptions } from '@/lib/queries';

/** The run a report shows for a comparison: its locked run, else its latest finished one (a newer run may have failed or still wait). */
export function reportedRunId(c: Comparison): string | null {
  return c.lockedRunId ?? c.latestFinishedRunId;
}

/** The runs a report shows for a study's comparisons; the route's loader fetches them once the comparisons are in. */
export function reportedRunIds(comparisons: Comparison[]): string[] {
  return comparisons.flatMap((c) => reportedRunId(c) ?? []);
}

export interface ReportedComparison {
  comparison: Comparison;
  run: Run | null;
}

/**
 * The report's document, read through each resource's own query (the plan's, the comparisons' and each run's, the Checks',
 * the study's measures and waves), so whatever refreshes one of them on another page refreshes the report too.
 */
export function useStudyReport(studyId: string) {
  const [{ data: plan }, { data: comparisons }, { data: checks }, { data: measures }, { data: waves }] = useSuspenseQueries({
    queries: [planQueryOptions(studyId), comparisonsQueryOptions(studyId), studyChecksQueryOptions(studyId), measuresQueryOptions(studyId), wavesQueryOptions(studyId)],
  });
  const runs = new Map(
    useSuspenseQueries({ queries: reportedRunIds(comparisons.items).map((runId) => runQueryOptions(runId)) }).map(({ data }) => [data.id, data] as const),
  );
  const reported: ReportedComparison[] = comparisons.items.map((comparison) => {
    const runId = reportedRunId(comparison);
    return { comparison, run: runId ? (runs.get(runId) ?? null) : null };
  });
  // The amendments name measures and waves by ID; the report names them as the Plan page does.
  return { plan, checks, comparisons: reported, refs: { measures: measures.items, waves: waves.items } };
}

export type StudyReport = ReturnType<typeof useStudyReport>;
