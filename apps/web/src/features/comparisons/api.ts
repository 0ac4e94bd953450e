import {
  comparisonSchema,
  pageOf,
  runSchema,
  type ComparisonSchedule,
  type CreateComparison,
  type QueueRun,
  type Run,
} from '@evenhand/entities';
import { queryOptions, useMutation, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { apiRequest } from '@/lib/api-client';
import { invalidateStudyFindings } from '@/lib/queries';
import { studyKeys } from '@/lib/study';

const comparisonsPageSchema = pageOf(comparisonSchema);
const queuedRunSchema = z.object({ run: runSchema });

// A comparison has no single read of its own (a study's list carries each one whole); a run does.
export const comparisonKeys = {
  all: ['comparisons'] as const,
  lists: () => [...comparisonKeys.all, 'list'] as const,
  list: (studyId: string) => [...comparisonKeys.lists(), studyId] as const,
};

export const runKeys = {
  all: ['runs'] as const,
  details: () => [...runKeys.all, 'detail'] as const,
  detail: (runId: string) => [...runKeys.details(), runId] as const,
};

export function comparisonsQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: comparisonKeys.list(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/comparisons`, { schema: comparisonsPageSchema, signal }),
  });
}

export const inProgress = (state: Run['state'] | undefined) => state === 'queued' || state === 'running';

/** One run; asked again every second and a half while it waits or runs, until it finishes or fails. */
export function runQueryOptions(runId: string) {
  return queryOptions({
    queryKey: runKeys.detail(runId),
    queryFn: ({ signal }) => apiRequest(`/runs/${runId}`, { schema: runSchema, signal }),
    refetchInterval: (query) => (inProgress(query.state.data?.state) ? 1_500 : false),
  });
}

export function useQueueRun(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ comparisonId, input }: { comparisonId: string; input: QueueRun }) =>
      apiRequest(`/comparisons/${comparisonId}/runs`, { method: 'POST', body: input, schema: queuedRunSchema }),
    onSuccess: ({ run }) => {
      queryClient.setQueryData(runKeys.detail(run.id), run);
      // The first confirmatory run moves the study to analysing.
      void queryClient.invalidateQueries({ queryKey: studyKeys.detail(studyId), exact: true });
      return queryClient.invalidateQueries({ queryKey: comparisonKeys.list(studyId) });
    },
  });
}

export function useLockRun(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (runId: string) => apiRequest(`/runs/${runId}/lock`, { method: 'POST', schema: runSchema }),
    onSuccess: (run) => {
      queryClient.setQueryData(runKeys.detail(run.id), run);
      // A lock stores the evidence verdict, freezes the Checks' figures and may report the study.
      invalidateStudyFindings(queryClient, studyId);
      void queryClient.invalidateQueries({ queryKey: studyKeys.detail(studyId), exact: true });
      return queryClient.invalidateQueries({ queryKey: comparisonKeys.list(studyId) });
    },
  });
}

export function useSetSchedule(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ comparisonId, input }: { comparisonId: string; input: ComparisonSchedule }) =>
      apiRequest(`/comparisons/${comparisonId}/schedule`, { method: 'PUT', body: input, schema: comparisonSchema }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: comparisonKeys.list(studyId) }),
  });
}

export function useCreateComparison(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateComparison) => apiRequest(`/studies/${studyId}/comparisons`, { method: 'POST', body: input, schema: comparisonSchema }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: comparisonKeys.list(studyId) }),
  });
}
