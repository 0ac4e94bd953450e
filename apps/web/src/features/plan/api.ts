import {
  measureSchema,
  pageOf,
  planSchema,
  waveSchema,
  type Amendment,
  type CreateMeasure,
  type CreateWave,
  type PlanContent,
} from '@evenhand/entities';
import { queryOptions, useMutation, useQueryClient, type QueryClient } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';
import { studyKeys } from '@/lib/study';

const measuresPageSchema = pageOf(measureSchema);
const wavesPageSchema = pageOf(waveSchema);

// Keyed by study: a study has one plan, and its measures and waves are always listed whole.
export const planKeys = {
  all: ['plan'] as const,
  details: () => [...planKeys.all, 'detail'] as const,
  detail: (studyId: string) => [...planKeys.details(), studyId] as const,
  measures: (studyId: string) => [...planKeys.all, 'measures', studyId] as const,
  waves: (studyId: string) => [...planKeys.all, 'waves', studyId] as const,
};

export function planQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: planKeys.detail(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/plan`, { schema: planSchema, signal }),
  });
}

export function measuresQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: planKeys.measures(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/measures`, { schema: measuresPageSchema, signal }),
  });
}

export function wavesQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: planKeys.waves(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/waves`, { schema: wavesPageSchema, signal }),
  });
}

/** The study's state, plan version and counts change with its plan, measures and waves. */
function invalidateStudy(queryClient: QueryClient, studyId: string) {
  return Promise.all([
    queryClient.invalidateQueries({ queryKey: studyKeys.detail(studyId) }),
    queryClient.invalidateQueries({ queryKey: studyKeys.lists() }),
  ]);
}

export function useAddMeasure(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateMeasure) => apiRequest(`/studies/${studyId}/measures`, { method: 'POST', body: input, schema: measureSchema }),
    onSuccess: () =>
      Promise.all([queryClient.invalidateQueries({ queryKey: planKeys.measures(studyId) }), invalidateStudy(queryClient, studyId)]),
  });
}

export function useAddWave(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateWave) => apiRequest(`/studies/${studyId}/waves`, { method: 'POST', body: input, schema: waveSchema }),
    onSuccess: () => Promise.all([queryClient.invalidateQueries({ queryKey: planKeys.waves(studyId) }), invalidateStudy(queryClient, studyId)]),
  });
}

export function useSaveDraft(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (plan: PlanContent) => apiRequest(`/studies/${studyId}/plan`, { method: 'PUT', body: plan, schema: planSchema }),
    onSuccess: (plan) => queryClient.setQueryData(planKeys.detail(studyId), plan),
  });
}

/** Saves what is on screen, then seals it, so the sealed plan is exactly what the lead confirmed. */
export function useSealPlan(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (plan: PlanContent) => {
      await apiRequest(`/studies/${studyId}/plan`, { method: 'PUT', body: plan, schema: planSchema });
      return apiRequest(`/studies/${studyId}/plan/seal`, { method: 'POST', schema: planSchema });
    },
    onSuccess: (plan) => {
      queryClient.setQueryData(planKeys.detail(studyId), plan);
      return invalidateStudy(queryClient, studyId);
    },
  });
}

export function useAmendPlan(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (amendment: Amendment) =>
      apiRequest(`/studies/${studyId}/plan/amendments`, { method: 'POST', body: amendment, schema: planSchema }),
    onSuccess: (plan) => {
      queryClient.setQueryData(planKeys.detail(studyId), plan);
      return invalidateStudy(queryClient, studyId);
    },
  });
}
