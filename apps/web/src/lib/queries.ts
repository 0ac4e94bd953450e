import { measureSchema, pageOf, siteSchema, studyEvidenceSchema, waveSchema } from '@evenhand/entities';
import { queryOptions } from '@tanstack/react-query';
import { apiRequest } from '@/lib/api-client';
import { studyKeys } from '@/lib/study';

/**
 * The reads several features share, one query (key + options) per API resource; features import these and keep
 * no copy. A study's measures and waves are keyed under the study, so whatever invalidates the study (adding a
 * measure or a wave, sealing, amending) refreshes them on every page at once. The study itself and its classrooms
 * are in `@/lib/study`.
 */
export const sharedKeys = {
  measures: (studyId: string) => [...studyKeys.detail(studyId), 'measures'] as const,
  waves: (studyId: string) => [...studyKeys.detail(studyId), 'waves'] as const,
  /** The evidence verdict per pre-specified comparison: keyed under the study, so every change to its sheets or runs refreshes it. */
  evidence: (studyId: string, boundary: 'cautious' | 'optimistic' | 'plan') => [...studyKeys.detail(studyId), 'evidence', boundary] as const,
  /** The district's schools; invalidate after a school is added or changed. */
  districtSites: () => ['sites', 'district'] as const,
};

const measuresPageSchema = pageOf(measureSchema);
const wavesPageSchema = pageOf(waveSchema);
const sitesPageSchema = pageOf(siteSchema);

export function measuresQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: sharedKeys.measures(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/measures`, { schema: measuresPageSchema, signal }),
  });
}

export function wavesQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: sharedKeys.waves(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/waves`, { schema: wavesPageSchema, signal }),
  });
}

/** The district's schools: to enrol one that exists already, or to name one in a teacher's or principal's grant. */
export function districtSitesQueryOptions() {
  return queryOptions({
    queryKey: sharedKeys.districtSites(),
    queryFn: ({ signal }) => apiRequest('/sites', { schema: sitesPageSchema, signal }),
  });
}

/**
 * The evidence verdict of each pre-specified comparison (the report, and the Checks' risks), judged against the boundary
 * the plan registers, or against `boundary` when a reader asks for the other one.
 */
export function studyEvidenceQueryOptions(studyId: string, boundary?: 'cautious' | 'optimistic') {
  return queryOptions({
    queryKey: sharedKeys.evidence(studyId, boundary ?? 'plan'),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/evidence${boundary ? `?boundary=${boundary}` : ''}`, { schema: studyEvidenceSchema, signal }),
  });
}
