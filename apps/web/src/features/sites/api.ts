import {
  classroomImportResultSchema,
  classroomSchema,
  cohortSchema,
  pageOf,
  rosterImportSchema,
  rosterPreviewSchema,
  siteSchema,
  studySiteSchema,
  type CreateClassroom,
  type EnrolSite,
  type RosterSelection,
  type UpdateClassroom,
} from '@evenhand/entities';
import { queryOptions, useMutation, useQueryClient } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';
import { sharedKeys } from '@/lib/queries';
import { studyKeys } from '@/lib/study';
import { uploadFile } from '@/lib/upload';

const studySitesPageSchema = pageOf(studySiteSchema);
const cohortsPageSchema = pageOf(cohortSchema);
const rosterImportsPageSchema = pageOf(rosterImportSchema);

// A study's sites and cohorts are always listed whole, so they are keyed by study; classrooms live in lib/study.
export const siteKeys = {
  all: ['sites'] as const,
  lists: () => [...siteKeys.all, 'study'] as const,
  list: (studyId: string) => [...siteKeys.lists(), studyId] as const,
  cohorts: (studyId: string) => [...siteKeys.all, 'cohorts', studyId] as const,
  rosterImports: (studyId: string) => [...siteKeys.all, 'roster-imports', studyId] as const,
};

export function studySitesQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: siteKeys.list(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/sites`, { schema: studySitesPageSchema, signal }),
  });
}

export function cohortsQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: siteKeys.cohorts(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/cohorts`, { schema: cohortsPageSchema, signal }),
  });
}

/** The study's committed OneRoster imports, newest first (coordinators and research leads). */
export function rosterImportsQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: siteKeys.rosterImports(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/roster-imports`, { schema: rosterImportsPageSchema, signal }),
  });
}

/** Enrolments and classrooms change the study's counts and state, its sites' counts and its classrooms. */
function useRefreshStudy(studyId: string) {
  const queryClient = useQueryClient();
  return () =>
    Promise.all([
      queryClient.invalidateQueries({ queryKey: studyKeys.detail(studyId) }),
      queryClient.invalidateQueries({ queryKey: studyKeys.lists() }),
      queryClient.invalidateQueries({ queryKey: siteKeys.list(studyId) }),
      queryClient.invalidateQueries({ queryKey: siteKeys.cohorts(studyId) }),
      queryClient.invalidateQueries({ queryKey: sharedKeys.districtSites() }),
    ]);
}

export function useEnrolSite(studyId: string) {
  const refresh = useRefreshStudy(studyId);
  return useMutation({
    mutationFn: (input: EnrolSite) => apiRequest(`/studies/${studyId}/sites`, { method: 'POST', body: input, schema: siteSchema }),
    onSuccess: refresh,
  });
}

export function useAddCohort(studyId: string) {
  const refresh = useRefreshStudy(studyId);
  return useMutation({
    mutationFn: (name: string) => apiRequest(`/studies/${studyId}/cohorts`, { method: 'POST', body: { name }, schema: cohortSchema }),
    onSuccess: refresh,
  });
}

export function useAddClassroom(studyId: string) {
  const refresh = useRefreshStudy(studyId);
  return useMutation({
    mutationFn: (input: CreateClassroom) => apiRequest(`/studies/${studyId}/classrooms`, { method: 'POST', body: input, schema: classroomSchema }),
    onSuccess: refresh,
  });
}

export function useUpdateClassroom(studyId: string) {
  const refresh = useRefreshStudy(studyId);
  return useMutation({
    mutationFn: ({ id, changes }: { id: string; changes: UpdateClassroom }) =>
      apiRequest(`/classrooms/${id}`, { method: 'PATCH', body: changes, schema: classroomSchema }),
    onSuccess: refresh,
  });
}

/** All rows or none: the API checks the whole file before adding anything. */
export function useImportClassrooms(studyId: string) {
  const refresh = useRefreshStudy(studyId);
  return useMutation({
    mutationFn: (file: File) => uploadFile(`/studies/${studyId}/classrooms/import`, { file, schema: classroomImportResultSchema }),
    onSuccess: refresh,
  });
}

/** What a OneRoster bundle would enrol; the API writes nothing. */
export function usePreviewRoster(studyId: string) {
  return useMutation({
    mutationFn: (files: File[]) => uploadFile(`/studies/${studyId}/roster-imports/preview`, { file: files, field: 'files', schema: rosterPreviewSchema }),
  });
}

/** The chosen schools and classes of the same bundle, all or nothing. */
export function useImportRoster(studyId: string) {
  const refresh = useRefreshStudy(studyId);
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: ({ files, selection }: { files: File[]; selection: RosterSelection }) =>
      uploadFile(`/studies/${studyId}/roster-imports`, { file: files, field: 'files', fields: { selection: JSON.stringify(selection) }, schema: rosterImportSchema }),
    onSuccess: () => Promise.all([refresh(), queryClient.invalidateQueries({ queryKey: siteKeys.rosterImports(studyId) })]),
  });
}
