import type { EntityManager } from 'typeorm';
import type { Accounting, Arm } from '@evenhand/entities';

// The Checks' named SQL and the rows it answers (DEVELOPERS.md, "Data access").

/** The locked run of a measure's pre-specified comparison at a wave, with the accounting it stored, or none. */
export async function lockedAccounting(manager: EntityManager, scope: { studyId: string; measureId: string; waveId: string }): Promise<{ id: string; accounting: Accounting | null } | undefined> {
  const [locked]: { id: string; accounting: Accounting | null }[] = await manager.query(
    `SELECT r.id, r.results->'accounting' AS accounting FROM runs r JOIN comparisons k ON k.id = r.comparison_id
      WHERE k.study_id = $1 AND k.measure_id = $2 AND k.wave_id = $3 AND k.prespecified AND r.state = 'locked'`,
    [scope.studyId, scope.measureId, scope.waveId],
  );
  return locked;
}

export interface MeasureRow {
  id: string;
  name: string;
  scale: 'score' | 'yes-no';
  min_score: string;
  max_score: string;
}

/** A study's measures in the order they were added. */
export function studyMeasures(manager: EntityManager, studyId: string): Promise<MeasureRow[]> {
  return manager.query(`SELECT id, name, scale, min_score, max_score FROM measures WHERE study_id = $1 ORDER BY created_at`, [studyId]);
}

/** A study's waves in the order they open. */
export function studyWaves(manager: EntityManager, studyId: string): Promise<{ id: string; name: string; kind: string }[]> {
  return manager.query(`SELECT id, name, kind FROM waves WHERE study_id = $1 ORDER BY opens_on`, [studyId]);
}

export interface QualityRow {
  measure_id: string;
  wave_id: string;
  sheets: number;
  missing: number;
  waiting: number;
  returned: number;
  accepted: number;
  scores: number;
  left_count: number;
  out_of_range: number;
}

/** Per measure and wave: the sheets by state (missing: open and empty) and the scores entered, left and out of range. */
export function dataQuality(manager: EntityManager, studyId: string): Promise<QualityRow[]> {
  return manager.query(
    `SELECT sh.measure_id, sh.wave_id, count(*)::int AS sheets,
            count(*) FILTER (WHERE sh.state = 'open' AND NOT EXISTS (SELECT 1 FROM scores x WHERE x.sheet_id = sh.id) AND sh.mode = 'rows')::int AS missing,
            count(*) FILTER (WHERE sh.state = 'submitted')::int AS waiting,
            count(*) FILTER (WHERE sh.state = 'returned')::int AS returned,
            count(*) FILTER (WHERE sh.state = 'accepted')::int AS accepted,
            (SELECT count(*) FROM scores x WHERE x.study_id = $1 AND x.measure_id = sh.measure_id AND x.wave_id = sh.wave_id AND x.score IS NOT NULL)::int AS scores,
            (SELECT count(*) FROM scores x WHERE x.study_id = $1 AND x.measure_id = sh.measure_id AND x.wave_id = sh.wave_id AND x.left_study)::int AS left_count,
            (SELECT count(*) FROM scores x JOIN measures m ON m.id = x.measure_id
              WHERE x.study_id = $1 AND x.measure_id = sh.measure_id AND x.wave_id = sh.wave_id AND (x.score < m.min_score OR x.score > m.max_score))::int AS out_of_range
       FROM score_sheets sh WHERE sh.study_id = $1 GROUP BY sh.measure_id, sh.wave_id`,
    [studyId],
  );
}

export interface BoxRow {
  measure_id: string;
  wave_id: string;
  arm: Arm;
  site_id: string | null;
  site_name: string | null;
  n: number;
  q: number[];
}

/** The five-number summary of the scores per measure, wave and arm, over the district (site null) and per site. */
export function boxPlotRows(manager: EntityManager, studyId: string): Promise<BoxRow[]> {
  return manager.query(
    `SELECT x.measure_id, x.wave_id, c.arm, c.site_id, s.name AS site_name, count(*)::int AS n,
            percentile_cont(ARRAY[0, 0.25, 0.5, 0.75, 1]) WITHIN GROUP (ORDER BY x.score::float8) AS q
       FROM scores x JOIN classrooms c ON c.id = x.classroom_id JOIN sites s ON s.id = c.site_id
      WHERE x.study_id = $1 AND x.score IS NOT NULL AND c.arm IS NOT NULL
      GROUP BY GROUPING SETS ((x.measure_id, x.wave_id, c.arm), (x.measure_id, x.wave_id, c.arm, c.site_id, s.name))`,
    [studyId],
  );
}

/** Per arm, the baseline scores of students who also have an outcome score: count, mean, SD and (yes/no) yes answers. */
export function baselineOfAnalysed(
  manager: EntityManager,
  scope: { studyId: string; baselineWaveId: string; outcomeWaveId: string; measureId: string },
): Promise<{ arm: Arm; n: number; mean: number; sd: number; yes: number }[]> {
  return manager.query(
    `SELECT c.arm, count(*)::int AS n, avg(b.score::float8) AS mean, stddev_samp(b.score::float8) AS sd, sum(b.score)::int AS yes
       FROM scores b JOIN scores o ON o.student_code = b.student_code AND o.study_id = b.study_id AND o.wave_id = $3 AND o.measure_id = b.measure_id AND o.score IS NOT NULL
       JOIN classrooms c ON c.id = b.classroom_id
      WHERE b.study_id = $1 AND b.wave_id = $2 AND b.measure_id = $4 AND b.score IS NOT NULL AND c.arm IS NOT NULL
      GROUP BY c.arm`,
    [scope.studyId, scope.baselineWaveId, scope.outcomeWaveId, scope.measureId],
  );
}
