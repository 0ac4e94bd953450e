import type { EntityManager } from 'typeorm';
import type { Arm } from '@evenhand/entities';

/** Which sheets a run reads: a confirmatory run only accepted ones; monitoring also those awaiting review. */
export const sheetStatesFor = (kind: 'monitoring' | 'confirmatory') => (kind === 'confirmatory' ? ['accepted'] : ['accepted', 'submitted']);

/** Above this many analysed students, the statistics that need every value (ranks, medians, normality, ANCOVA) are skipped and the run says so. */
export const VALUE_LIMIT = 50_000;

export interface ClassroomAggregate {
  classroomId: string;
  siteId: string;
  siteName: string;
  arm: Arm;
  /** Students allocated: codes registered to the classroom. */
  allocated: number;
  /** Outcome: students analysed, their mean and sum of squared deviations (from SQL aggregates). */
  n: number;
  mean: number | null;
  m2: number | null;
  fromSummary: boolean;
}

export interface Gathered {
  sheetIds: string[];
  classrooms: ClassroomAggregate[];
  quantiles: Record<Arm, [number, number, number, number, number] | null>;
  /** Per-student outcome values by arm, only when there are at most VALUE_LIMIT of them. */
  values: Record<Arm, number[]> | null;
  /** (outcome, pretest) pairs by arm for the ANCOVA, same limit. */
  pairs: Record<Arm, [number, number][]> | null;
  dataSha256: string;
  analysed: number;
}

interface Scope {
  studyId: string;
  measureId: string;
  waveId: string;
  baselineWaveId: string | null;
  states: string[];
}

/**
 * Reads what a run needs inside PostgreSQL: per-classroom count, mean and M2 by SQL aggregates, quartiles per arm,
 * and the SHA-256 of the canonical input rows; the per-student values come only when the count is bounded.
 */
export async function gather(manager: EntityManager, scope: Scope): Promise<Gathered> {
  const p = [scope.studyId, scope.waveId, scope.measureId, scope.states];
  const sheets: { id: string }[] = await manager.query(
    `SELECT id FROM score_sheets WHERE study_id = $1 AND wave_id = $2 AND measure_id = $3 AND state = ANY($4) ORDER BY id`,
    p,
  );
  const baselineSheets: { id: string }[] = scope.baselineWaveId
    ? await manager.query(`SELECT id FROM score_sheets WHERE study_id = $1 AND wave_id = $2 AND measure_id = $3 AND state = ANY($4) ORDER BY id`, [
        scope.studyId,
        scope.baselineWaveId,
        scope.measureId,
        scope.states,
      ])
    : [];

  const classrooms: {
    classroom_id: string;
    site_id: string;
    site_name: string;
    arm: Arm;
    allocated: number;
    n: number;
    mean: number | null;
    m2: number | null;
    from_summary: boolean;
  }[] = await manager.query(
    `WITH sh AS (SELECT * FROM score_sheets WHERE study_id = $1 AND wave_id = $2 AND measure_id = $3 AND state = ANY($4)),
          agg AS (
            SELECT x.classroom_id, count(*)::int AS n, avg(x.score::float8) AS mean, (var_pop(x.score::float8) * count(*)) AS m2
              FROM scores x JOIN sh ON sh.id = x.sheet_id WHERE x.score IS NOT NULL AND sh.mode = 'rows'
             GROUP BY x.classroom_id),
          -- One pass over the registry: the students table has no index by classroom, so a per-classroom count scanned it 8 000 times.
          allocated AS (SELECT classroom_id, count(*) AS allocated FROM students WHERE study_id = $1 GROUP BY classroom_id)
     SELECT c.id AS classroom_id, c.site_id, s.name AS site_name, c.arm,
            coalesce(st.allocated, 0)::int AS allocated,
            coalesce(CASE WHEN sh.mode = 'summary' THEN sh.summary_n ELSE agg.n END, 0)::int AS n,
            CASE WHEN sh.mode = 'summary' THEN sh.summary_mean::float8 ELSE agg.mean END AS mean,
            CASE WHEN sh.mode = 'summary' THEN (sh.summary_sd::float8 ^ 2) * (sh.summary_n - 1) ELSE agg.m2 END AS m2,
            coalesce(sh.mode = 'summary', false) AS from_summary
       FROM classrooms c JOIN sites s ON s.id = c.site_id
       LEFT JOIN sh ON sh.classroom_id = c.id
       LEFT JOIN agg ON agg.classroom_id = c.id
       LEFT JOIN allocated st ON st.classroom_id = c.id
      WHERE c.study_id = $1 AND c.arm IS NOT NULL
      ORDER BY s.name, c.name`,
    p,
  );

  const quantileRows: { arm: Arm; q: number[] }[] = await manager.query(
    `SELECT c.arm, percentile_cont(ARRAY[0, 0.25, 0.5, 0.75, 1]) WITHIN GROUP (ORDER BY x.score::float8) AS q
       FROM unnest($1::uuid[]) AS ids(id) JOIN scores x ON x.sheet_id = ids.id JOIN classrooms c ON c.id = x.classroom_id
      WHERE x.score IS NOT NULL GROUP BY c.arm`,
    [sheets.map((s) => s.id)],
  );
  const quantiles = { intervention: null, comparison: null } as Gathered['quantiles'];
  for (const r of quantileRows) quantiles[r.arm] = r.q as Gathered['quantiles'][Arm];

  // The canonical input, hashed where it lives: the student rows, then the summary-only classrooms.
  const [{ sha, analysed }]: { sha: string; analysed: number }[] = await manager.query(
    `SELECT encode(sha256(convert_to(concat_ws(E'\\n', r.body, s.body), 'UTF8')), 'hex') AS sha, r.analysed
       FROM (SELECT string_agg(line, E'\\n' ORDER BY line) AS body, count(*)::int AS analysed FROM (${canonicalRowsSql}) x) r,
            (SELECT string_agg(line, E'\\n' ORDER BY line) AS body FROM (${canonicalSummariesSql}) y) s`,
    [sheets.map((s) => s.id), baselineSheets.map((s) => s.id)],
  );

  let values: Gathered['values'] = null;
  let pairs: Gathered['pairs'] = null;
  if (analysed <= VALUE_LIMIT) {
    const rows: { arm: Arm; y: number; x: number | null }[] = await manager.query(
      `SELECT c.arm, o.score::float8 AS y, b.score::float8 AS x
         FROM unnest($1::uuid[]) AS ids(id) JOIN scores o ON o.sheet_id = ids.id JOIN classrooms c ON c.id = o.classroom_id
         LEFT JOIN (SELECT x.* FROM unnest($2::uuid[]) AS bids(id) JOIN scores x ON x.sheet_id = bids.id) b
           ON b.student_code = o.student_code AND b.classroom_id = o.classroom_id AND b.score IS NOT NULL
        WHERE o.score IS NOT NULL
        ORDER BY c.arm, o.classroom_id, o.student_code`,
      [sheets.map((s) => s.id), baselineSheets.map((s) => s.id)],
    );
    values = { intervention: [], comparison: [] };
    pairs = { intervention: [], comparison: [] };
    for (const r of rows) {
      values[r.arm].push(r.y);
      if (r.x !== null) pairs[r.arm].push([r.y, r.x]);
    }
  }

  return {
    sheetIds: [...sheets, ...baselineSheets].map((s) => s.id),
    classrooms: classrooms.map((c) => ({
      classroomId: c.classroom_id,
      siteId: c.site_id,
      siteName: c.site_name,
      arm: c.arm,
      allocated: c.allocated,
      n: c.n,
      mean: c.mean,
      m2: c.m2,
      fromSummary: c.from_summary,
    })),
    quantiles,
    values,
    pairs,
    dataSha256: sha,
    analysed,
  };
}

// Sheet IDs arrive as arrays joined through unnest rather than `= ANY(…)`, which PostgreSQL tests row by row.

/**
 * One text line per analysed student: classroom_id,arm,student_code,outcome,pretest (pretest empty when missing),
 * scores as PostgreSQL prints numeric. The bundle ships these lines; their sorted SHA-256 is the run's data hash.
 */
export const canonicalRowsSql = `
  SELECT concat_ws(',', o.classroom_id, c.arm, o.student_code, o.score::text, coalesce(b.score::text, '')) AS line
    FROM unnest($1::uuid[]) AS ids(id) JOIN scores o ON o.sheet_id = ids.id JOIN classrooms c ON c.id = o.classroom_id
    LEFT JOIN (SELECT x.* FROM unnest($2::uuid[]) AS bids(id) JOIN scores x ON x.sheet_id = bids.id) b
      ON b.student_code = o.student_code AND b.classroom_id = o.classroom_id AND b.score IS NOT NULL
   WHERE o.score IS NOT NULL`;

/**
 * One text line per classroom that reported only a summary of the outcome: summary,classroom_id,arm,n,mean,sd. They count
 * in the t tests and effect sizes, so they are part of the data hash and of the bundle. $1: the outcome sheets.
 */
export const canonicalSummariesSql = `
  SELECT concat_ws(',', 'summary', sh.classroom_id, c.arm, sh.summary_n::text, sh.summary_mean::text, sh.summary_sd::text) AS line
    FROM unnest($1::uuid[]) AS ids(id) JOIN score_sheets sh ON sh.id = ids.id JOIN classrooms c ON c.id = sh.classroom_id
   WHERE sh.mode = 'summary' AND c.arm IS NOT NULL`;
