import {
  digestDetailSchema,
  digestPreferenceSchema,
  digestScheduleSchema,
  digestSchema,
  pageOf,
  sendDigestsResultSchema,
  type DigestFrequency,
  type DigestSchedule,
  type DigestsQuery,
} from '@evenhand/entities';
import { keepPreviousData, queryOptions, useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';

const digestsPageSchema = pageOf(digestSchema);

export const digestKeys = {
  all: ['digests'] as const,
  lists: () => [...digestKeys.all, 'list'] as const,
  list: (studyId: string, query: DigestsQuery) => [...digestKeys.lists(), studyId, query] as const,
  details: () => [...digestKeys.all, 'detail'] as const,
  detail: (id: string) => [...digestKeys.details(), id] as const,
  schedules: () => [...digestKeys.all, 'schedule'] as const,
  schedule: (studyId: string) => [...digestKeys.schedules(), studyId] as const,
  preferences: () => [...digestKeys.all, 'preference'] as const,
  preference: (token: string) => [...digestKeys.preferences(), token] as const,
};

const pending = (states: string[]) => states.some((s) => s === 'queued' || s === 'retrying');

export function digestsQueryOptions(studyId: string, query: DigestsQuery) {
  return queryOptions({
    queryKey: digestKeys.list(studyId, query),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/digests`, { query: { ...query }, schema: digestsPageSchema, signal }),
    placeholderData: keepPreviousData,
    // While something is still in the outbox, keep the states current.
    refetchInterval: (q) => (pending(q.state.data?.items.map((d) => d.state) ?? []) ? 2000 : false),
  });
}

export function digestQueryOptions(id: string) {
  return queryOptions({
    queryKey: digestKeys.detail(id),
    queryFn: ({ signal }) => apiRequest(`/digests/${id}`, { schema: digestDetailSchema, signal }),
  });
}

export function digestScheduleQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: digestKeys.schedule(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/digest-schedule`, { schema: digestScheduleSchema, signal }),
  });
}

export function digestPreferenceQueryOptions(token: string) {
  return queryOptions({
    queryKey: digestKeys.preference(token),
    queryFn: ({ signal }) => apiRequest('/digest-preferences', { query: { token }, schema: digestPreferenceSchema, signal }),
    retry: false,
  });
}

export function useSendDigests(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: () => apiRequest(`/studies/${studyId}/digests/send`, { method: 'POST', schema: sendDigestsResultSchema }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: digestKeys.lists() }),
  });
}

export function useSaveDigestSchedule(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: DigestSchedule) => apiRequest(`/studies/${studyId}/digest-schedule`, { method: 'PUT', body: input, schema: digestScheduleSchema }),
    onSuccess: (saved) => queryClient.setQueryData(digestKeys.schedule(studyId), saved),
  });
}

export function useSaveDigestPreference(token: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (frequency: DigestFrequency) => apiRequest('/digest-preferences', { method: 'PUT', body: { token, frequency }, schema: digestPreferenceSchema }),
    onSuccess: (saved) => queryClient.setQueryData(digestKeys.preference(token), saved),
  });
}
