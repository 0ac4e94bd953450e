import type { Arm, Comparison, Run, RunResults, SheetState } from '@evenhand/entities';
import { storedMomentsColumns, type SheetMoments } from '../score-sheets/queries.js';

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
 * A run's end: its results, the arm of every classroom it read (classroom id → arm, as JSON text built from the rows it
 * read: PostgreSQL parses 80 000 pairs in a tenth of the time it aggregates them), and from the same snapshot the sheets
 * it read (the outcome wave's and, with the pretest, the baseline wave's sheets in the states read), built in SQL since
 * sending 80 000 IDs from Node costs seconds. $1 run, $2 results, $3 engine version, $4 data hash, $5 study, $6 outcome
 * wave, $7 baseline wave or null, $8 measure, $9 sheet states read, $10 the arms.
 */
export const finishRunSql = `
  UPDATE runs SET state = 'finished', finished_at = now(), results = $2, engine_version = $3, data_sha256 = $4,
         input_sheet_ids = (SELECT coalesce(array_agg(id), '{}') FROM score_sheets
                             WHERE study_id = $5 AND measure_id = $8 AND state = ANY($9) AND (wave_id = $6 OR wave_id = $7)),
         classroom_arms = $10::json
   WHERE id = $1`;

// Comparisons.

/** The sealed plan's comparisons, one per measure at its primary wave; those already there stay. $1 study, $2 wave, $3 unit of analysis, $4 test, $5 covariate, $6 primary measure, $7 author. */
export const insertPrespecifiedSql = `
  INSERT INTO comparisons (study_id, measure_id, wave_id, label, unit_of_analysis, primary_test, covariate, prespecified, is_primary, created_by)
  SELECT $1, m.id, $2, m.name || ' at ' || w.name, $3, $4, $5, true, m.id = $6, $7
    FROM measures m JOIN waves w ON w.id = $2 WHERE m.study_id = $1
  ON CONFLICT (study_id, measure_id, wave_id) WHERE prespecified DO NOTHING`;

/** One comparison with its measure and wave. $1 comparison. */
export const comparisonSql = `${comparisonSelect} WHERE k.id = $1`;
/** The same, locked against a concurrent change of its schedule. */
export const comparisonForUpdateSql = `${comparisonSql} FOR UPDATE OF k`;
/** A study's comparisons: pre-specified first, the primary one first among them, then by age. $1 study. */
export const studyComparisonsSql = `${comparisonSelect} WHERE k.study_id = $1 ORDER BY k.prespecified DESC, k.is_primary DESC, k.created_at`;

/** An exploratory comparison. $1 study … $10 author; answers its id. */
export const insertExploratorySql = `
  INSERT INTO comparisons (study_id, measure_id, wave_id, label, unit_of_analysis, primary_test, covariate, prespecified, schedule_cron, schedule_timezone, schedule_set_at, created_by)
  VALUES ($1, $2, $3, $4, $5, $6, $7, false, $8, $9, CASE WHEN $8::varchar IS NULL THEN NULL ELSE now() END, $10) RETURNING id`;

/** A comparison's monitoring schedule, set or removed (a null cron); the moment it was set starts its slots. $1 comparison, $2 cron, $3 time zone. */
export const setScheduleSql = `
  UPDATE comparisons SET schedule_cron = $2, schedule_timezone = $3, schedule_set_at = CASE WHEN $2::varchar IS NULL THEN NULL ELSE now() END WHERE id = $1`;

/** A comparison with a monitoring schedule, as the tick reads it. */
export interface ScheduledRow {
  comparison_id: string;
  study_id: string;
  schedule_cron: string;
  schedule_timezone: string;
  schedule_set_at: Date;
  opens_on: string;
  closes_on: string;
  plan_version: number | null;
}

/** The comparisons a schedule may run now: a cron, a sealed plan, a study still going, and no locked result yet. */
export const scheduledComparisonsSql = `
  SELECT k.id AS comparison_id, k.study_id, k.schedule_cron, k.schedule_timezone, k.schedule_set_at,
         w.opens_on::text AS opens_on, w.closes_on::text AS closes_on,
         (SELECT max(version) FROM plan_versions p WHERE p.study_id = k.study_id) AS plan_version
    FROM comparisons k JOIN waves w ON w.id = k.wave_id JOIN studies s ON s.id = k.study_id
   WHERE k.schedule_cron IS NOT NULL AND s.status <> 'archived'
     AND NOT EXISTS (SELECT 1 FROM runs r WHERE r.comparison_id = k.id AND r.state = 'locked')`;


/** Whether a study has a pre-specified comparison without a locked run. $1 study. */
export const openPrespecifiedSql = `
  SELECT 1 FROM comparisons k WHERE k.study_id = $1 AND k.prespecified
     AND NOT EXISTS (SELECT 1 FROM runs r WHERE r.comparison_id = k.id AND r.state = 'locked') LIMIT 1`;

// Runs.

/** One run, whole. $1 run. */
export const runSql = `SELECT * FROM runs WHERE id = $1`;
/** The same, locked for the lock's transaction (nothing else locks or changes it meanwhile). */
export const runForUpdateSql = `${runSql} FOR UPDATE`;
/** A comparison's locked run, if any. $1 comparison. */
export const lockedRunOfComparisonSql = `SELECT id FROM runs WHERE comparison_id = $1 AND state = 'locked'`;
/** A study's locked runs by comparison. $1 study. */
export const lockedRunsSql = `SELECT comparison_id, id FROM runs WHERE study_id = $1 AND state = 'locked'`;

/** A queued run. $1 comparison … $6 who queued it. */
export const insertRunSql = `
  INSERT INTO runs (comparison_id, study_id, kind, reason, plan_version, queued_by) VALUES ($1, $2, $3, $4, $5, $6) RETURNING *`;
/** A scheduled monitoring run for one slot; a slot already taken answers no row. $1 comparison, $2 study, $3 plan version, $4 slot. */
export const insertScheduledRunSql = `
  INSERT INTO runs (comparison_id, study_id, kind, plan_version, scheduled_for) VALUES ($1, $2, 'monitoring', $3, $4)
  ON CONFLICT (comparison_id, scheduled_for) WHERE scheduled_for IS NOT NULL DO NOTHING RETURNING id`;
/** Claims a queued run for one worker: queued → running; a run already claimed answers no row. $1 run. */
export const claimRunSql = `UPDATE runs SET state = 'running', started_at = now() WHERE id = $1 AND state = 'queued' RETURNING *`;
/** A run that could not be computed, with the message its readers see. $1 run, $2 message. */
export const failRunSql = `UPDATE runs SET state = 'failed', finished_at = now(), error = $2 WHERE id = $1`;
/** A run locked by someone. $1 run, $2 who locked it. */
export const markLockedSql = `UPDATE runs SET state = 'locked', locked_at = now(), locked_by = $2 WHERE id = $1`;
/** Freezes the sheets a locked run read; the database then refuses any change to them. $1 sheet IDs. */
export const lockSheetsSql = `UPDATE score_sheets SET locked = true WHERE id = ANY($1) AND NOT locked`;

/** The first classroom of a study reassigned by hand at or after a moment (a run's start). $1 study, $2 moment. */
export const reassignedSinceSql = `
  SELECT c.name FROM draw_reassignments x JOIN draws d ON d.id = x.draw_id JOIN classrooms c ON c.id = x.classroom_id
   WHERE d.study_id = $1 AND x.at >= $2 ORDER BY x.at LIMIT 1`;

/** A locked run's state and its study's version of confirmatory results, which the run's Benjamini–Hochberg figures follow. $1 run. */
export const lockedRunProbeSql = `
  SELECT r.state, r.study_id,
         (SELECT count(*) || '/' || coalesce(max(coalesce(x.locked_at, x.finished_at))::text, '')
            FROM runs x JOIN comparisons k ON k.id = x.comparison_id
           WHERE x.study_id = r.study_id AND x.kind = 'confirmatory' AND x.state IN ('finished', 'locked') AND k.prespecified) AS version
    FROM runs r WHERE r.id = $1`;

// What a run reads (./gather.ts).

/** The run's statements aggregate in memory: a larger sort and hash area, and no JIT (compiling these plans costs more than it saves). */
export const aggregateSettingsSql = [`SET LOCAL work_mem = '64MB'`, `SET LOCAL jit = off`];

/** The stored moments' columns of a classroom row (see storedMomentsColumns): null where none are stored. */
type StoredMomentsColumns = { [K in Exclude<keyof SheetMoments, 'sheet_id'>]: SheetMoments[K] | null };

export interface ClassroomRow extends StoredMomentsColumns {
  classroom_id: string;
  site_id: string;
  site_name: string;
  arm: Arm;
  registered: number;
  sheet_id: string | null;
  sheet_state: SheetState | null;
  mode: 'rows' | 'summary' | null;
  /** The sheet is in the states read. */
  read: boolean | null;
  entered: boolean | null;
  summary_n: number | null;
  summary_mean: number | null;
  summary_m2: number | null;
  digest: string | null;
  pretest_sheet_id: string | null;
  pretest_digest: string | null;
  /** Then the sheet's stored sums, named as its moments (all null and `stored_present` false when none were stored with the baseline sheet read). */
  stored_present: boolean | null;
}

/**
 * Every classroom with an arm: its registered codes (kept by the registry's triggers), its outcome sheet, and the
 * baseline sheet read with it. $1 study, $2 outcome wave, $3 measure, $4 sheet states read, $5 baseline wave (null: no pairs).
 */
export const classroomsSql = `
  SELECT c.id AS classroom_id, c.site_id, s.name AS site_name, c.arm, coalesce(r.n, 0)::int AS registered,
         sh.id AS sheet_id, sh.state AS sheet_state, sh.mode, sh.state = ANY($4) AS read,
         (sh.summary_n IS NOT NULL OR (sh.state = 'open' AND EXISTS (SELECT 1 FROM scores x WHERE x.sheet_id = sh.id))) AS entered,
         sh.summary_n, sh.summary_mean::float8 AS summary_mean, (sh.summary_sd::float8 ^ 2) * (sh.summary_n - 1) AS summary_m2,
         encode(sh.rows_sha256, 'hex') AS digest, bs.id AS pretest_sheet_id, encode(bs.rows_sha256, 'hex') AS pretest_digest,
         ${storedMomentsColumns('a', 'bs.id IS NOT NULL')}
    FROM classrooms c JOIN sites s ON s.id = c.site_id
    LEFT JOIN registered_counts r ON r.classroom_id = c.id
    LEFT JOIN score_sheets sh ON sh.classroom_id = c.id AND sh.wave_id = $2 AND sh.measure_id = $3
    LEFT JOIN score_sheets bs ON $5::uuid IS NOT NULL AND bs.classroom_id = c.id AND bs.wave_id = $5 AND bs.measure_id = $3 AND bs.state = ANY($4)
    LEFT JOIN sheet_sums a ON a.sheet_id = sh.id AND (bs.id IS NULL OR a.pretest_sheet_id = bs.id)
   WHERE c.study_id = $1 AND c.arm IS NOT NULL`;

export interface ValueRow {
  arm: Arm;
  n: string;
  rank_sum: number;
  tie_term: number;
  mean_deviation: number;
  mean_ss: number;
  median_deviation: number;
  median_ss: number;
  picked: number[];
}

/**
 * The analysed outcome scores, with their classroom's arm: scored rows of the wave's sheets in classrooms with an arm,
 * less those of the sheets the run does not read ($4: not in its states, or a class summary). A classroom has one sheet
 * per wave and measure and a score's classroom is its sheet's (check_score_keys), so the classrooms the run read name
 * every sheet these rows can come from, and leaving out the unread ones by a hashed list costs nothing where a join to
 * the sheets cost a quarter of the scan. Plain joins, so PostgreSQL scans and aggregates them in parallel.
 * $1 study, $2 wave, $3 measure, $4 the sheets not read.
 */
const outcomeJoins = `scores o JOIN classrooms c ON c.id = o.classroom_id AND c.arm IS NOT NULL`;
const outcomeFilter = `o.study_id = $1 AND o.wave_id = $2 AND o.measure_id = $3 AND o.score IS NOT NULL AND o.sheet_id <> ALL($4::uuid[])`;
/**
 * One row per arm from the count of each distinct outcome score: n; the arm's mid-rank sum ×2 and Σ(t³ − t) over the
 * pooled table; mean and median; Σ|x − c| and Σ(x − c)² for both centres (exact numeric); the values at the requested
 * ranks ($5 intervention, $6 comparison), found by binary search (width_bucket) over the cumulative counts.
 */
export const valuePassSql = `
  WITH h AS (
    SELECT o.score AS v, count(*) FILTER (WHERE c.arm = 'intervention') AS a, count(*) FILTER (WHERE c.arm = 'comparison') AS b
      FROM ${outcomeJoins} WHERE ${outcomeFilter} GROUP BY o.score),
  r AS (
    SELECT v, a, b, (sum(a + b) OVER w - (a + b))::bigint AS below, (sum(a) OVER w - a)::bigint AS a_below, (sum(b) OVER w - b)::bigint AS b_below
      FROM h WINDOW w AS (ORDER BY v)),
  ranks AS (SELECT sum(a * (2 * below + a + b + 1)) / 2 AS rank_sum, sum((a + b)::numeric * (a + b) * (a + b) - (a + b)) AS tie_term FROM r),
  g AS (SELECT 'intervention' AS arm, v, a AS k, a_below AS below FROM r WHERE a > 0 UNION ALL SELECT 'comparison', v, b, b_below FROM r WHERE b > 0),
  -- The picked values are read from a float8 copy: subscripting a numeric[] walks its variable-width elements each time.
  c AS (SELECT arm, sum(k)::bigint AS n, sum(k * v) / sum(k) AS mean, array_agg(below ORDER BY v) AS belows, array_agg(v ORDER BY v) AS vs,
               array_agg(v::float8 ORDER BY v) AS fvs FROM g GROUP BY arm),
  m AS (SELECT arm, n, mean, belows, fvs, (vs[width_bucket((n - 1) / 2, belows)] + vs[width_bucket(n / 2, belows)]) / 2 AS median FROM c),
  d AS (
    SELECT g.arm, sum(g.k * abs(g.v - m.mean)) AS s1, sum(g.k * (g.v - m.mean) * (g.v - m.mean)) AS q1,
           sum(g.k * abs(g.v - m.median)) AS s2, sum(g.k * (g.v - m.median) * (g.v - m.median)) AS q2
      FROM g JOIN m USING (arm) GROUP BY g.arm)
  SELECT m.arm, m.n, ranks.rank_sum::float8 AS rank_sum, ranks.tie_term::float8 AS tie_term,
         (d.s1 / m.n)::float8 AS mean_deviation, ((m.n * d.q1 - d.s1 * d.s1) / m.n)::float8 AS mean_ss,
         (d.s2 / m.n)::float8 AS median_deviation, ((m.n * d.q2 - d.s2 * d.s2) / m.n)::float8 AS median_ss,
         (SELECT array_agg(m.fvs[width_bucket(p.rank, m.belows)] ORDER BY p.i)
            FROM unnest(CASE m.arm WHEN 'intervention' THEN $5::bigint[] ELSE $6::bigint[] END) WITH ORDINALITY AS p(rank, i)) AS picked
    FROM m JOIN d USING (arm) CROSS JOIN ranks`;

/**
 * One text line per classroom that reported only a summary of the outcome: summary,classroom_id,arm,n,mean,sd. They count
 * in the t tests and effect sizes, so they are part of the data hash and of the bundle. $1: the outcome sheets; $2: the
 * arms a finished run read (classroom id → arm), or null for today's arms (a run reading now).
 */
export const canonicalSummariesSql = `
  SELECT concat_ws(',', 'summary', sh.classroom_id, a.arm, sh.summary_n::text, sh.summary_mean::text, sh.summary_sd::text) AS line
    FROM unnest($1::uuid[]) AS ids(id) JOIN score_sheets sh ON sh.id = ids.id JOIN classrooms c ON c.id = sh.classroom_id
         CROSS JOIN LATERAL (SELECT CASE WHEN $2::jsonb IS NULL THEN c.arm ELSE $2::jsonb ->> c.id::text END AS arm) a
   WHERE sh.mode = 'summary' AND a.arm IS NOT NULL`;

/**
 * The bundle's rows: classroom_id,arm,student_code,outcome,pretest for every student with an outcome or a pretest
 * score in a classroom with analysed rows (either score empty when missing), scores as PostgreSQL prints numeric, in
 * byte order of classroom ID then student code: the lines the sheets' digests are rebuilt from.
 * $1: outcome sheets with student rows, $2: the matching baseline sheet of each (or null), $3: the arms the run read.
 */
export const bundleRowsSql = `
  WITH sh AS (SELECT u.id, u.baseline_id, s.classroom_id FROM unnest($1::uuid[], $2::uuid[]) AS u(id, baseline_id) JOIN score_sheets s ON s.id = u.id),
       o AS (SELECT sh.classroom_id, x.student_code, x.score FROM sh JOIN scores x ON x.sheet_id = sh.id WHERE x.score IS NOT NULL),
       b AS (SELECT sh.classroom_id, x.student_code, x.score FROM sh JOIN scores x ON x.sheet_id = sh.baseline_id
              WHERE x.score IS NOT NULL AND sh.classroom_id IN (SELECT classroom_id FROM o))
  SELECT concat_ws(',', classroom_id, $3::jsonb ->> classroom_id::text, student_code, coalesce(o.score::text, ''), coalesce(b.score::text, '')) AS line
    FROM o FULL JOIN b USING (classroom_id, student_code)
   ORDER BY classroom_id::text COLLATE "C", student_code COLLATE "C"`;

/** The canonical summary lines of the given sheets, in byte order. $1 sheets, $2 arms as canonicalSummariesSql. */
export const summaryLinesSql = `SELECT line FROM (${canonicalSummariesSql}) s ORDER BY line COLLATE "C"`;

// The bundle (./service.ts, runBundle).

/** The plan version a run followed, as the bundle shows it. $1 study, $2 version. */
export const bundlePlanSql = `SELECT version, content, sha256, created_at FROM plan_versions WHERE study_id = $1 AND version = $2`;
/** The study's draw, as the bundle shows it. $1 study. */
export const bundleDrawSql = `SELECT seed, algorithm, algorithm_version, unit, blocks, assignments, committed_at FROM draws WHERE study_id = $1`;
/** The reassignments recorded before a moment (a run's start). $1 study, $2 moment. */
export const reassignmentsBeforeSql = `
  SELECT classroom_id, from_arm, to_arm, reason, at FROM draw_reassignments r JOIN draws d ON d.id = r.draw_id
   WHERE d.study_id = $1 AND r.at < $2 ORDER BY at`;
/** The sheets a run read, each with its classroom, mode and whether it is an outcome sheet. $1 sheet IDs, $2 outcome wave. */
export const inputSheetsSql = `
  SELECT sh.id, sh.classroom_id, sh.mode, sh.wave_id = $2 AS outcome FROM unnest($1::uuid[]) AS ids(id) JOIN score_sheets sh ON sh.id = ids.id`;
/** Each given classroom's school, in byte order of classroom ID. $1 classroom IDs. */
export const classroomSchoolsSql = `
  SELECT c.id AS classroom_id, c.site_id FROM unnest($1::uuid[]) AS ids(id) JOIN classrooms c ON c.id = ids.id ORDER BY c.id::text COLLATE "C"`;
