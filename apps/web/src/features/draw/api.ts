import { drawSchema, type DrawRequest, type Reassignment } from '@evenhand/entities';
import { queryOptions, useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';
import { studyKeys } from '@/lib/study';

// A study has at most one committed draw; previews are never stored, so they are mutations, not queries.
export const drawKeys = {
  all: ['draw'] as const,
  details: () => [...drawKeys.all, 'detail'] as const,
  detail: (studyId: string) => [...drawKeys.details(), studyId] as const,
};

/** The committed draw, re-derived from its seed by the server on every read (`verified`); null before it is committed. */
export function drawQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: drawKeys.detail(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/draw`, { schema: drawSchema.nullable(), signal }),
  });
}

export function usePreviewDraw(studyId: string) {
  return useMutation({
    mutationFn: (seed: string | undefined) =>
      apiRequest(`/studies/${studyId}/draw`, { method: 'POST', body: { seed, commit: false } satisfies DrawRequest, schema: drawSchema }),
  });
}

/** A draw changes the study (its state, drawCommittedAt) and every classroom's arm, which are keyed under it. */
function useRefresh(studyId: string) {
  const queryClient = useQueryClient();
  return () =>
    Promise.all([
      queryClient.invalidateQueries({ queryKey: drawKeys.detail(studyId) }),
      queryClient.invalidateQueries({ queryKey: studyKeys.detail(studyId) }),
      queryClient.invalidateQueries({ queryKey: studyKeys.lists() }),
    ]);
}

export function useCommitDraw(studyId: string) {
  const refresh = useRefresh(studyId);
  return useMutation({
    mutationFn: (seed: string) =>
      apiRequest(`/studies/${studyId}/draw`, { method: 'POST', body: { seed, commit: true } satisfies DrawRequest, schema: drawSchema }),
    onSuccess: refresh,
  });
}

export function useReassign(studyId: string) {
  const refresh = useRefresh(studyId);
  return useMutation({
    mutationFn: (input: Reassignment) => apiRequest(`/studies/${studyId}/draw/reassignments`, { method: 'POST', body: input, schema: drawSchema }),
    onSuccess: refresh,
  });
}
