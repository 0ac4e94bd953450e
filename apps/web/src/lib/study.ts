import { classroomSchema, pageOf, studySchema, type Arm, type Study, type StudyStatus, type UnitOfAssignment } from '@evenhand/entities';
import { keepPreviousData, queryOptions, useSuspenseQuery } from '@tanstack/react-query';
import { useParams } from 'react-router-dom';
import { apiRequest } from '@/lib/api-client';

const studiesPageSchema = pageOf(studySchema);

export interface StudiesFilter {
  status?: StudyStatus;
  limit: number;
  offset: number;
}

/**
 * The studies' query keys. They live here, not in features/studies, because every tab of a study
 * (score sheets, checks, comparisons…) reads the same study and invalidates it after its changes.
 */
export const studyKeys = {
  all: ['studies'] as const,
  lists: () => [...studyKeys.all, 'list'] as const,
  list: (filter: StudiesFilter) => [...studyKeys.lists(), filter] as const,
  details: () => [...studyKeys.all, 'detail'] as const,
  detail: (id: string) => [...studyKeys.details(), id] as const,
};

export function studiesQueryOptions(filter: StudiesFilter) {
  return queryOptions({
    queryKey: studyKeys.list(filter),
    queryFn: ({ signal }) => apiRequest('/studies', { query: { ...filter }, schema: studiesPageSchema, signal }),
    placeholderData: keepPreviousData,
  });
}

/** One study with its state and counts; the study layout's loader has it in the cache before any tab renders. */
export function studyQueryOptions(id: string) {
  return queryOptions({
    queryKey: studyKeys.detail(id),
    queryFn: ({ signal }) => apiRequest(`/studies/${id}`, { schema: studySchema, signal }),
  });
}

/** The :studyId of the address; only for pages under /studies/:studyId. */
export function useStudyId(): string {
  const { studyId } = useParams();
  if (!studyId) throw new Error('useStudyId is used outside /studies/:studyId');
  return studyId;
}

/** The study whose tab is open; never suspends under the study layout, whose loader fetched it. */
export function useCurrentStudy(): Study {
  return useSuspenseQuery(studyQueryOptions(useStudyId())).data;
}

export const studyStatusLabels: Record<StudyStatus, { label: string; meaning: string }> = {
  drafting: { label: 'Drafting', meaning: 'The plan is being written; nothing is registered yet.' },
  registered: { label: 'Registered', meaning: 'The plan is sealed: timestamped and hashed.' },
  enrolling: { label: 'Enrolling', meaning: 'Schools and classrooms are being enrolled.' },
  collecting: { label: 'Collecting', meaning: 'Teachers are entering scores.' },
  analysing: { label: 'Analysing', meaning: 'The pre-specified comparisons are being run.' },
  reported: { label: 'Reported', meaning: 'The confirmatory result is locked and reported.' },
  archived: { label: 'Archived', meaning: 'The study is closed and kept for the record.' },
};

export const unitLabels: Record<UnitOfAssignment, { singular: string; plural: string }> = {
  student: { singular: 'student', plural: 'students' },
  classroom: { singular: 'classroom', plural: 'classrooms' },
  school: { singular: 'school', plural: 'schools' },
};

export const armLabels: Record<Arm, string> = { intervention: 'Intervention', comparison: 'Comparison' };

const classroomsPageSchema = pageOf(classroomSchema);

/**
 * The study's classrooms (teachers see their own, principals their school's). Keyed under the study,
 * so whatever invalidates the study — a draw, a reassignment — refreshes them too.
 */
export function studyClassroomsQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: [...studyKeys.detail(studyId), 'classrooms'] as const,
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/classrooms`, { schema: classroomsPageSchema, signal }),
  });
}
