// The verdict's named SQL (DEVELOPERS.md, "Data access").

/**
 * The study's pre-specified comparisons with the run a verdict reads: the locked one, else the newest finished one
 * (the run the report shows). $1 study.
 */
export const confirmatoryComparisonsSql = `
  SELECT k.id, k.label, k.measure_id, k.wave_id, k.primary_test, k.covariate, m.name AS measure_name, m.scale AS measure_scale,
         m.higher_is_better, r.id AS run_id, r.state AS run_state, r.results, r.classroom_arms, r.input_sheet_ids, r.started_at
    FROM comparisons k JOIN measures m ON m.id = k.measure_id
    LEFT JOIN LATERAL (
      SELECT id, state, results, classroom_arms, input_sheet_ids, started_at FROM runs
       WHERE comparison_id = k.id AND state IN ('finished', 'locked')
       ORDER BY state = 'locked' DESC, queued_at DESC LIMIT 1) r ON true
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
  SELECT CASE WHEN NOT EXISTS (SELECT 1 FROM roster_students WHERE study_id = $1) THEN NULL ELSE (
    SELECT count(*)::int FROM roster_students rs
      JOIN draws d ON d.study_id = rs.study_id
      JOIN scores x ON x.study_id = rs.study_id AND x.student_code = rs.student_code AND x.wave_id = $2 AND x.measure_id = $3 AND x.score IS NOT NULL
      JOIN score_sheets sh ON sh.id = x.sheet_id
     WHERE rs.study_id = $1 AND rs.joined_at > d.committed_at
       AND (CASE WHEN $4::uuid[] IS NULL THEN sh.state = 'accepted' ELSE sh.id = ANY($4::uuid[]) END)) END AS n`;
