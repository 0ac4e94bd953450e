import { measureSchema, pageOf, siteSchema, studyChecksSchema, studyEvidenceSchema, waveSchema } from '@evenhand/entities';
import { queryOptions, type QueryClient } from '@tanstack/react-query';
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
  /** The evidence verdicts per pre-specified comparison, under either boundary: invalidate after a sheet moves or a run locks. */
  evidenceAll: (studyId: string) => [...studyKeys.detail(studyId), 'evidence'] as const,
  evidence: (studyId: string, boundary: 'cautious' | 'optimistic' | 'plan') => [...sharedKeys.evidenceAll(studyId), boundary] as const,
  /** The Checks (the Checks page and the report): invalidate after a sheet changes or a run locks. */
  checks: (studyId: string) => [...studyKeys.detail(studyId), 'checks'] as const,
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

/** The study's Checks: balance, attrition, who was analysed and lost, as today's accepted sheets or the locked run give them. */
export function studyChecksQueryOptions(studyId: string) {
  return queryOptions({
    queryKey: sharedKeys.checks(studyId),
    queryFn: ({ signal }) => apiRequest(`/studies/${studyId}/checks`, { schema: studyChecksSchema, signal }),
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

/** What a study's sheets and locked runs decide, read again after either changes (only a page showing it asks at once). */
export function invalidateStudyFindings(queryClient: QueryClient, studyId: string): void {
  void queryClient.invalidateQueries({ queryKey: sharedKeys.checks(studyId) });
  void queryClient.invalidateQueries({ queryKey: sharedKeys.evidenceAll(studyId) });
}
