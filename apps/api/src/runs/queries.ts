import type { Comparison, Run, RunResults } from '@evenhand/entities';

// The comparisons' and runs' named SQL and the rows it answers (DEVELOPERS.md, "Data access").

export interface ComparisonRow {
  id: string;
  study_id: string;
  measure_id: string;
  measure_name: string;
  measure_kind: 'achievement' | 'behaviour';
  higher_is_better: boolean;
  measure_scale: 'score' | 'yes-no';
  wave_id: string;
  wave_name: string;
  label: string;
  unit_of_analysis: Comparison['unitOfAnalysis'];
  primary_test: Comparison['primaryTest'];
  covariate: Comparison['covariate'];
  prespecified: boolean;
  is_primary: boolean;
  schedule_cron: string | null;
  schedule_timezone: string;
  schedule_set_at: Date | null;
  opens_on: string;
  closes_on: string;
}

export interface RunRow {
  id: string;
  comparison_id: string;
  study_id: string;
  kind: Run['kind'];
  state: Run['state'];
  reason: string | null;
  plan_version: number | null;
  engine_version: string | null;
  data_sha256: string | null;
  input_sheet_ids: string[];
  /** The arm of each classroom the run read (classroom id → arm), stored when it finished. */
  classroom_arms: Record<string, string> | null;
  results: RunResults | null;
  error: string | null;
  queued_at: Date;
  finished_at: Date | null;
  locked_at: Date | null;
  scheduled_for: Date | null;
  started_at: Date | null;
}

export const comparisonSelect = `
  SELECT k.*, m.name AS measure_name, m.kind AS measure_kind, m.scale AS measure_scale, m.higher_is_better, w.name AS wave_name,
         w.opens_on::text AS opens_on, w.closes_on::text AS closes_on
    FROM comparisons k JOIN measures m ON m.id = k.measure_id JOIN waves w ON w.id = k.wave_id`;

export function toRun(r: RunRow, multiplicity: Run['multiplicity'] = null): Run {
  return {
    id: r.id,
    comparisonId: r.comparison_id,
    studyId: r.study_id,
    kind: r.kind,
    state: r.state,
    reason: r.reason,
    planVersion: r.plan_version,
    engineVersion: r.engine_version,
    dataSha256: r.data_sha256,
    results: r.results,
    error: r.error,
    queuedAt: new Date(r.queued_at).toISOString(),
    finishedAt: r.finished_at ? new Date(r.finished_at).toISOString() : null,
    lockedAt: r.locked_at ? new Date(r.locked_at).toISOString() : null,
    scheduledFor: r.scheduled_for ? new Date(r.scheduled_for).toISOString() : null,
    multiplicity,
  };
}


/** Each comparison's latest run of a study, without its results. */
export const latestRunsSql = `
  SELECT DISTINCT ON (comparison_id) id, comparison_id, study_id, kind, state, reason, plan_version, engine_version, data_sha256,
         input_sheet_ids, NULL AS results, error, queued_at, finished_at, locked_at, scheduled_for
    FROM runs WHERE study_id = $1 ORDER BY comparison_id, queued_at DESC`;

/** Each comparison's latest finished (or locked) run of a study. */
export const latestFinishedRunsSql = `
  SELECT DISTINCT ON (comparison_id) comparison_id, id FROM runs WHERE study_id = $1 AND state IN ('finished', 'locked') ORDER BY comparison_id, queued_at DESC`;

/** The p inputs of each pre-specified comparison's confirmatory run: the locked one, else the latest finished. */
export const multiplicityRunsSql = `
  SELECT DISTINCT ON (r.comparison_id) r.id, r.results->'primary' AS primary, r.results->'clustering' AS clustering, r.results->'deciding' AS deciding
    FROM runs r JOIN comparisons k ON k.id = r.comparison_id
   WHERE r.study_id = $1 AND r.kind = 'confirmatory' AND r.state IN ('finished', 'locked') AND k.prespecified
   ORDER BY r.comparison_id, (r.state = 'locked') DESC, r.finished_at DESC`;

/**
 * A run's end: its results, and from the same snapshot the sheets it read (the outcome wave's and, with the pretest,
 * the baseline wave's sheets in the states read) and the arm of every classroom then; built in SQL, since sending
 * 80 000 classrooms' IDs from Node costs seconds. $1 run, $2 results, $3 engine version, $4 data hash, $5 study,
 * $6 outcome wave, $7 baseline wave or null, $8 measure, $9 sheet states read.
 */
export const finishRunSql = `
  UPDATE runs SET state = 'finished', finished_at = now(), results = $2, engine_version = $3, data_sha256 = $4,
         input_sheet_ids = (SELECT coalesce(array_agg(id), '{}') FROM score_sheets
                             WHERE study_id = $5 AND measure_id = $8 AND state = ANY($9) AND (wave_id = $6 OR wave_id = $7)),
         classroom_arms = (SELECT coalesce(jsonb_object_agg(id, arm), '{}') FROM classrooms WHERE study_id = $5 AND arm IS NOT NULL)
   WHERE id = $1`;
