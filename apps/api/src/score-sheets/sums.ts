import type { EntityManager } from 'typeorm';
import { storeSheetDigests } from './queries.js';

/**
 * A sheet's exact sums, what a run needs from it per classroom: scored rows (n), Σy and Σy², rows marked as left
 * without a score, and over the students who also have a score on the paired pretest sheet, their count and Σy, Σx,
 * Σy², Σx², Σxy (numeric, so exact). Stored when a sheet is submitted or accepted (as its digest is) and forgotten by
 * any write to its scores or its pretest sheet's (migration 1796600000000); a run computes any it lacks.
 * $1: sheet IDs; $2: the pretest sheet paired with each (null: none). Each sheet's rows are read by the primary key.
 */
const sheetSumsSql = `
  SELECT u.sheet_id, u.pretest_sheet_id, a.*
    FROM unnest($1::uuid[], $2::uuid[]) AS u(sheet_id, pretest_sheet_id)
   CROSS JOIN LATERAL (
     SELECT count(o.score)::int AS n, sum(o.score) AS sy, sum(o.score * o.score) AS syy,
            count(*) FILTER (WHERE o.score IS NULL AND o.left_study)::int AS left_n,
            count(b.score) FILTER (WHERE o.score IS NOT NULL)::int AS np,
            sum(o.score) FILTER (WHERE b.score IS NOT NULL) AS py, sum(b.score) FILTER (WHERE o.score IS NOT NULL) AS px,
            sum(o.score * o.score) FILTER (WHERE b.score IS NOT NULL) AS pyy, sum(b.score * b.score) FILTER (WHERE o.score IS NOT NULL) AS pxx,
            sum(o.score * b.score) AS pxy
       FROM scores o LEFT JOIN scores b ON b.sheet_id = u.pretest_sheet_id AND b.student_code = o.student_code AND b.score IS NOT NULL
      WHERE o.sheet_id = u.sheet_id) a`;

// Each moment is one division of an exact numerator: (nΣx² − (Σx)²)/n keeps its digits for scores far from zero.
const moments = (a: string): [keyof SheetMoments, string][] => [
  ['sheet_id', `${a}.sheet_id`],
  ['n', `${a}.n`],
  ['left_n', `${a}.left_n`],
  ['mean', `(${a}.sy / nullif(${a}.n, 0))::float8`],
  ['m2', `((${a}.n * ${a}.syy - ${a}.sy * ${a}.sy) / nullif(${a}.n, 0))::float8`],
  ['pairs', `${a}.np`],
  ['pair_mean_y', `(${a}.py / nullif(${a}.np, 0))::float8`],
  ['pair_mean_x', `(${a}.px / nullif(${a}.np, 0))::float8`],
  ['pair_syy', `((${a}.np * ${a}.pyy - ${a}.py * ${a}.py) / nullif(${a}.np, 0))::float8`],
  ['pair_sxx', `((${a}.np * ${a}.pxx - ${a}.px * ${a}.px) / nullif(${a}.np, 0))::float8`],
  ['pair_sxy', `((${a}.np * ${a}.pxy - ${a}.px * ${a}.py) / nullif(${a}.np, 0))::float8`],
];

/** The moments of the sums in `a` as select-list columns, each name prefixed (a row holding other columns too). */
export const momentsColumns = (a: string, prefix = '') => moments(a).map(([name, expr]) => `${expr} AS ${prefix}${name}`).join(', ');

/** The moments of a row selected with `momentsColumns(a, 'stored_')`, or null when it has none (written out: a generic copy cost a quarter second at 80 000 rows). */
export function storedMomentsOf(row: object): SheetMoments | null {
  const r = row as Record<`stored_${keyof SheetMoments}`, never>;
  if (r.stored_sheet_id === null) return null;
  return {
    sheet_id: r.stored_sheet_id,
    n: r.stored_n,
    left_n: r.stored_left_n,
    mean: r.stored_mean,
    m2: r.stored_m2,
    pairs: r.stored_pairs,
    pair_mean_y: r.stored_pair_mean_y,
    pair_mean_x: r.stored_pair_mean_x,
    pair_syy: r.stored_pair_syy,
    pair_sxx: r.stored_pair_sxx,
    pair_sxy: r.stored_pair_sxy,
  };
}

/** What a sheet's rows give once they stop changing (submitted, accepted), stored so runs need not read them again. */
export async function storeSheetDigestsAndSums(manager: EntityManager, sheetIds: string[]): Promise<void> {
  await storeSheetDigests(manager, sheetIds);
  await storeSheetSums(manager, sheetIds);
}

/**
 * Stores the sums of sheets whose rows stop changing (submitted, accepted); when one of them is a baseline sheet, also
 * of its classroom's submitted or accepted sheets of the same measure in the other waves, which pair with it. Takes the
 * classrooms' writer lock first, so no write to these sheets commits between reading the rows and storing their sums.
 */
async function storeSheetSums(manager: EntityManager, sheetIds: string[]): Promise<void> {
  // The writers' lock on the sheets' classrooms, in its own statement: the sums below then read the rows as committed after it.
  await manager.query(`SELECT 1 FROM classrooms WHERE id IN (SELECT classroom_id FROM score_sheets WHERE id = ANY($1::uuid[])) ORDER BY id FOR NO KEY UPDATE`, [sheetIds]);
  const targets: { sheet_id: string; pretest_sheet_id: string | null }[] = await manager.query(
    `WITH given AS (SELECT sh.* FROM score_sheets sh WHERE sh.id = ANY($1::uuid[])),
          targets AS (
            SELECT id, study_id, classroom_id, wave_id, measure_id FROM given
            UNION
            SELECT o.id, o.study_id, o.classroom_id, o.wave_id, o.measure_id
              FROM given g JOIN waves w ON w.id = g.wave_id AND w.kind = 'baseline'
              JOIN score_sheets o ON o.classroom_id = g.classroom_id AND o.measure_id = g.measure_id AND o.wave_id <> g.wave_id
             WHERE o.state IN ('submitted', 'accepted'))
     SELECT t.id AS sheet_id, p.id AS pretest_sheet_id
       FROM targets t
       LEFT JOIN waves bw ON bw.study_id = t.study_id AND bw.kind = 'baseline' AND bw.id <> t.wave_id
       LEFT JOIN score_sheets p ON p.classroom_id = t.classroom_id AND p.measure_id = t.measure_id AND p.wave_id = bw.id`,
    [sheetIds],
  );
  if (targets.length === 0) return;
  await manager.query(
    `INSERT INTO sheet_sums (sheet_id, pretest_sheet_id, n, sy, syy, left_n, np, py, px, pyy, pxx, pxy)
     SELECT sheet_id, pretest_sheet_id, n, sy, syy, left_n, np, py, px, pyy, pxx, pxy FROM (${sheetSumsSql}) s
     ON CONFLICT (sheet_id) DO UPDATE SET pretest_sheet_id = excluded.pretest_sheet_id, n = excluded.n, sy = excluded.sy, syy = excluded.syy,
       left_n = excluded.left_n, np = excluded.np, py = excluded.py, px = excluded.px, pyy = excluded.pyy, pxx = excluded.pxx, pxy = excluded.pxy`,
    [targets.map((t) => t.sheet_id), targets.map((t) => t.pretest_sheet_id)],
  );
}

/** One sheet's count, mean and M2 of its scores, its leavers, and its students paired with a pretest: count, means and centred sums. */
export interface SheetMoments {
  sheet_id: string;
  n: number;
  left_n: number;
  mean: number | null;
  m2: number | null;
  pairs: number;
  pair_mean_y: number | null;
  pair_mean_x: number | null;
  pair_syy: number | null;
  pair_sxx: number | null;
  pair_sxy: number | null;
}

/** Sums the given row sheets now, each paired with the baseline sheet given (null: none), for readers of sheets without valid stored sums. */
export async function sumSheets(manager: EntityManager, wanted: { sheetId: string; pretestSheetId: string | null }[]): Promise<Map<string, SheetMoments>> {
  if (wanted.length === 0) return new Map();
  const rows: SheetMoments[] = await manager.query(`SELECT ${momentsColumns('a')} FROM (${sheetSumsSql}) a`, [
    wanted.map((w) => w.sheetId),
    wanted.map((w) => w.pretestSheetId),
  ]);
  return new Map(rows.map((m) => [m.sheet_id, m]));
}

/** The same moments without the pairs: those taken with a baseline sheet the reader does not read are not its pairs. */
export const withoutPairs = (m: SheetMoments): SheetMoments => ({ ...m, pairs: 0, pair_mean_y: null, pair_mean_x: null, pair_syy: null, pair_sxx: null, pair_sxy: null });
