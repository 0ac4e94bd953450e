import {
  measureSchema,
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

// Keyed by study: a study has one plan. Its measures and waves are shared reads (@/lib/queries), keyed under the study.
export const planKeys = {
  all: ['plan'] as const,
  details: () => [...planKeys.all, 'detail'] as const,
  detail: (studyId: string) => [...planKeys.details(), studyId] as const,
};

export function planQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: planKeys.detail(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/plan`, { schema: planSchema, signal }),
  });
}

/** The study's state, plan version and counts change with its plan, measures and waves (keyed under it, so they refresh too). */
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
    onSuccess: () => invalidateStudy(queryClient, studyId),
  });
}

export function useAddWave(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateWave) => apiRequest(`/studies/${studyId}/waves`, { method: 'POST', body: input, schema: waveSchema }),
    onSuccess: () => invalidateStudy(queryClient, studyId),
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
