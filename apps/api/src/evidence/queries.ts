import type { VerdictAnswer } from '@evenhand/entities';

// The verdict's named SQL (DEVELOPERS.md, "Data access").

/**
 * The study's pre-specified comparisons with the run a verdict reads: the locked one, else the newest finished one
 * (the run the report shows); the run being locked ($2, or null) is the one its comparison's verdict reads. $1 study.
 */
export const confirmatoryComparisonsSql = `
  SELECT k.id, k.label, k.measure_id, k.wave_id, k.primary_test, k.covariate, m.name AS measure_name, m.scale AS measure_scale,
         m.higher_is_better, r.id AS run_id, r.state AS run_state, r.results, r.classroom_arms, r.input_sheet_ids, r.started_at,
         r.plan_version
    FROM comparisons k JOIN measures m ON m.id = k.measure_id
    LEFT JOIN LATERAL (
      SELECT id, state, results, classroom_arms, input_sheet_ids, started_at, plan_version FROM runs
       WHERE comparison_id = k.id AND state IN ('finished', 'locked')
       ORDER BY id = $2 DESC, state = 'locked' DESC, queued_at DESC LIMIT 1) r ON true
   WHERE k.study_id = $1 AND k.prespecified
   ORDER BY k.is_primary DESC, k.created_at`;

/** Reassignments of the study's draw, those before $2 only when $2 is set (what a run saw). $1 study, $2 timestamptz or null. */
export const reassignmentCountSql = `
  SELECT count(*)::int AS n FROM draw_reassignments r JOIN draws d ON d.id = r.draw_id
   WHERE d.study_id = $1 AND ($2::timestamptz IS NULL OR r.at < $2)`;

/** The study's classrooms with an arm: who teaches them and where. $1 study. */
export const deliverersSql = `SELECT id, arm, teacher_id, site_id FROM classrooms WHERE study_id = $1 AND arm IS NOT NULL`;

/**
 * Analysed students per classroom: outcome scores on the sheets read — the run's input sheets ($4) when given, else the
 * accepted ones. $1 study, $2 wave, $3 measure, $4 uuid[] or null.
 */
export const analysedPerClassroomSql = `
  SELECT x.classroom_id, count(*)::int AS n
    FROM scores x JOIN score_sheets sh ON sh.id = x.sheet_id
   WHERE x.study_id = $1 AND x.wave_id = $2 AND x.measure_id = $3 AND x.score IS NOT NULL
     AND (CASE WHEN $4::uuid[] IS NULL THEN sh.state = 'accepted' ELSE sh.id = ANY($4::uuid[]) END)
   GROUP BY x.classroom_id`;

/**
 * Analysed students whose roster enrolment began after the draw; null when the study has no roster enrolments (Evenhand
 * then cannot tell). $1 study, $2 wave, $3 measure, $4 uuid[] or null (as above).
 */
export const joinersSql = `
  SELECT CASE WHEN NOT EXISTS (SELECT 1 FROM students WHERE study_id = $1 AND roster_link IS NOT NULL) THEN NULL ELSE (
    SELECT count(*)::int FROM students st
      JOIN draws d ON d.study_id = st.study_id
      JOIN scores x ON x.study_id = st.study_id AND x.student_code = st.student_code AND x.wave_id = $2 AND x.measure_id = $3 AND x.score IS NOT NULL
      JOIN score_sheets sh ON sh.id = x.sheet_id
     WHERE st.study_id = $1 AND st.roster_joined_at > d.committed_at
       AND (CASE WHEN $4::uuid[] IS NULL THEN sh.state = 'accepted' ELSE sh.id = ANY($4::uuid[]) END)) END AS n`;

/** A run's study and state. $1 run. */
export const runStudySql = `SELECT study_id, state FROM runs WHERE id = $1`;

/** The boundary a sealed plan version registers (absent in plans sealed before the choice existed). $1 study, $2 version. */
export const planVersionBoundarySql = `
  SELECT content->>'attritionBoundary' AS boundary, content->>'attritionBoundaryReason' AS reason FROM plan_versions
   WHERE study_id = $1 AND version = $2`;

export interface StoredVerdictRow {
  run_id: string;
  plan_version: number | null;
  boundary: 'cautious' | 'optimistic';
  boundary_reason: string;
  cautious: VerdictAnswer;
  optimistic: VerdictAnswer;
}

/** The verdicts stored when the runs ($1 uuid[]) were locked. */
export const storedVerdictsSql = `
  SELECT run_id, plan_version, boundary, boundary_reason, cautious, optimistic FROM run_verdicts WHERE run_id = ANY($1::uuid[])`;

/** Stores a locked run's verdicts once; a second writer (two readers backfilling an old lock) changes nothing. */
export const storeVerdictsSql = `
  INSERT INTO run_verdicts (run_id, plan_version, boundary, boundary_reason, cautious, optimistic)
  VALUES ($1, $2, $3, $4, $5, $6) ON CONFLICT (run_id) DO NOTHING`;
