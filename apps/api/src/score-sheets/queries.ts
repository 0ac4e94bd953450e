import type { EntityManager } from 'typeorm';
import type { ScoreSheet, SheetState } from '@evenhand/entities';

// The score sheets' named SQL and the rows it answers (DEVELOPERS.md, "Data access").

export interface SheetRow {
  id: string;
  study_id: string;
  classroom_id: string;
  classroom_name: string;
  site_id: string;
  site_name: string;
  teacher_id: string;
  teacher_name: string;
  arm: ScoreSheet['arm'];
  wave_id: string;
  wave_name: string;
  wave_kind: ScoreSheet['waveKind'];
  opens_on: string;
  closes_on: string;
  measure_id: string;
  measure_name: string;
  scale: ScoreSheet['scale'];
  min_score: string;
  max_score: string;
  state: ScoreSheet['state'];
  mode: ScoreSheet['mode'];
  locked: boolean;
  return_reasons: string | null;
  summary_n: number | null;
  summary_mean: string | null;
  summary_sd: string | null;
  updated_at: Date;
  submitted_at: Date | null;
  rows: number;
  scored: number;
  left_count: number;
  wave_open: boolean;
  summary_allowed: boolean;
}

// Counts come from the scores table; the window is judged on the database's calendar date.
const sheetSelect = `
  SELECT sh.*, c.name AS classroom_name, c.site_id, s.name AS site_name, c.teacher_id, u.name AS teacher_name, c.arm,
         w.name AS wave_name, w.kind AS wave_kind, to_char(w.opens_on, 'YYYY-MM-DD') AS opens_on, to_char(w.closes_on, 'YYYY-MM-DD') AS closes_on,
         m.name AS measure_name, m.scale, m.min_score, m.max_score,
         (current_date BETWEEN w.opens_on AND w.closes_on) AS wave_open,
         coalesce((SELECT (pv.content->>'summaryEntryAllowed')::boolean FROM plan_versions pv
                    WHERE pv.study_id = sh.study_id ORDER BY pv.version DESC LIMIT 1), false) AS summary_allowed,
         coalesce(k.rows, 0)::int AS rows, coalesce(k.scored, 0)::int AS scored, coalesce(k.left_count, 0)::int AS left_count
    FROM score_sheets sh
    JOIN classrooms c ON c.id = sh.classroom_id
    JOIN sites s ON s.id = c.site_id
    JOIN users u ON u.id = c.teacher_id
    JOIN waves w ON w.id = sh.wave_id
    JOIN measures m ON m.id = sh.measure_id
    LEFT JOIN LATERAL (
      SELECT count(*) AS rows, count(score) AS scored, count(*) FILTER (WHERE left_study) AS left_count FROM scores WHERE sheet_id = sh.id
    ) k ON true`;

/** Every classroom has one sheet per wave and measure; missing ones are created on first look. */
export async function ensureSheets(manager: EntityManager, studyId: string): Promise<void> {
  await manager.query(
    `INSERT INTO score_sheets (study_id, classroom_id, wave_id, measure_id)
     SELECT c.study_id, c.id, w.id, m.id FROM classrooms c
       JOIN waves w ON w.study_id = c.study_id JOIN measures m ON m.study_id = c.study_id
      WHERE c.study_id = $1
     ON CONFLICT (classroom_id, wave_id, measure_id) DO NOTHING`,
    [studyId],
  );
}

/**
 * A study's sheets matching the optional filters, by school, classroom, wave and measure: all of them when the reader
 * sees the whole study, else only those of classrooms the reader teaches at their teacher schools.
 */
export function visibleSheetRows(
  manager: EntityManager,
  q: { studyId: string; classroomId?: string; waveId?: string; state?: string },
  reader: { wholeStudy: boolean; userId: string; teacherSites: string[] },
): Promise<SheetRow[]> {
  return manager.query(
    `${sheetSelect}
     WHERE sh.study_id = $1 AND ($2::uuid IS NULL OR sh.classroom_id = $2) AND ($3::uuid IS NULL OR sh.wave_id = $3)
       AND ($4::text IS NULL OR sh.state = $4) AND ($5 OR (c.teacher_id = $6 AND c.site_id = ANY($7)))
     ORDER BY s.name, c.name, w.opens_on, m.name`,
    [q.studyId, q.classroomId ?? null, q.waveId ?? null, q.state ?? null, reader.wholeStudy, reader.userId, reader.teacherSites],
  );
}

/** One sheet with its classroom, wave, measure, counts and whether it may be summarised, or none. */
export async function sheetRow(manager: EntityManager, id: string): Promise<SheetRow | undefined> {
  const [row]: SheetRow[] = await manager.query(`${sheetSelect} WHERE sh.id = $1`, [id]);
  return row;
}

/** A sheet's rows by student code. */
export function sheetScoreRows(manager: EntityManager, sheetId: string): Promise<{ student_code: string; score: string | null; left_study: boolean; note: string }[]> {
  return manager.query(`SELECT student_code, score, left_study, note FROM scores WHERE sheet_id = $1 ORDER BY student_code`, [sheetId]);
}

/** How many students of a sheet, still in the study, have no score yet. */
export async function studentsWithoutScore(manager: EntityManager, sheetId: string): Promise<number> {
  const [{ waiting }]: { waiting: number }[] = await manager.query(
    `SELECT count(*)::int AS waiting FROM scores WHERE sheet_id = $1 AND score IS NULL AND NOT left_study`,
    [sheetId],
  );
  return waiting;
}

export interface CellRow {
  sheet_id: string;
  classroom_id: string;
  classroom_name: string;
  site_id: string;
  site_name: string;
  teacher_id: string;
  teacher_name: string;
  teacher_email: string;
  arm: string | null;
  wave_id: string;
  wave_name: string;
  measure_id: string;
  measure_name: string;
  state: SheetState;
  rows: number;
  left_count: number;
  wave_started: boolean;
}

/** Every sheet of a study with its classroom, teacher, rows and students who left, by school, classroom, wave and measure. */
export function completionCells(manager: EntityManager, studyId: string): Promise<CellRow[]> {
  return manager.query(
    `SELECT sh.id AS sheet_id, c.id AS classroom_id, c.name AS classroom_name, s.id AS site_id, s.name AS site_name,
            u.id AS teacher_id, u.name AS teacher_name, u.email AS teacher_email, c.arm,
            w.id AS wave_id, w.name AS wave_name, m.id AS measure_id, m.name AS measure_name, sh.state,
            (CASE WHEN sh.mode = 'summary' THEN sh.summary_n ELSE (SELECT count(*) FROM scores x WHERE x.sheet_id = sh.id) END)::int AS rows,
            (SELECT count(*) FROM scores x WHERE x.sheet_id = sh.id AND x.left_study)::int AS left_count,
            (w.opens_on <= current_date) AS wave_started
       FROM score_sheets sh
       JOIN classrooms c ON c.id = sh.classroom_id JOIN sites s ON s.id = c.site_id JOIN users u ON u.id = c.teacher_id
       JOIN waves w ON w.id = sh.wave_id JOIN measures m ON m.id = sh.measure_id
      WHERE sh.study_id = $1
      ORDER BY s.name, c.name, w.opens_on, m.name`,
    [studyId],
  );
}

/**
 * A sheet's digest: the SHA-256 of its scored rows as "student_code,score" lines (the score as PostgreSQL prints
 * numeric), in byte order of student code, joined with "\n"; a sheet without scored rows hashes the empty text.
 * $1: sheet IDs; one row (id, digest) per sheet. Each sheet's rows are read by the primary key whatever the
 * planner's statistics say: as one join over thousands of sheets just after a bulk load, stale statistics once
 * chose a plan that ran for many minutes.
 */
export const sheetDigestsSql = `
  SELECT ids.id, sha256(convert_to(coalesce(
           (SELECT string_agg(x.student_code || ',' || x.score::text, E'\\n' ORDER BY x.student_code COLLATE "C")
              FROM scores x WHERE x.sheet_id = ids.id AND x.score IS NOT NULL), ''), 'UTF8')) AS digest
    FROM unnest($1::uuid[]) AS ids(id)`;

/** Stores the digests of sheets whose rows stop changing (submitted, accepted), so runs need not hash them again. */
export async function storeSheetDigests(manager: EntityManager, sheetIds: string[]): Promise<void> {
  await manager.query(`UPDATE score_sheets sh SET rows_sha256 = d.digest FROM (${sheetDigestsSql}) d WHERE sh.id = d.id AND sh.rows_sha256 IS NULL`, [sheetIds]);
}

// Writing a sheet's rows through the staging table (see write.ts for the order of the steps).

/** The keys and range of the sheet a write goes to. */
export interface SheetKeys {
  id: string;
  study_id: string;
  classroom_id: string;
  wave_id: string;
  measure_id: string;
  scale: 'score' | 'yes-no';
  min_score: string;
  max_score: string;
}

/** An empty staging table for one write, with room for the sorts and hashes of its set-wise checks. */
export async function prepareStaging(manager: EntityManager): Promise<void> {
  // One staging table per connection, emptied at every commit: a table made and dropped per write
  // would churn the system catalogs at every autosave.
  await manager.query(
    `CREATE TEMP TABLE IF NOT EXISTS staged_scores (
       line int NOT NULL, student_code varchar(40) NOT NULL, score numeric, left_study boolean NOT NULL, note varchar(500) NOT NULL
     ) ON COMMIT DELETE ROWS`,
  );
  // A transaction may write several sheets (the demo seed does).
  await manager.query(`TRUNCATE staged_scores`);
  // For this transaction only.
  await manager.query(`SET LOCAL work_mem = '64MB'`);
}

/** The COPY that streams rows into the staging table, in its text format. */
export const copyStagedSql = `COPY staged_scores (line, student_code, score, left_study, note) FROM STDIN`;

/** Gives the staging table statistics: temporary tables get none of their own, and a large sheet then gets poor plans. */
export async function analyzeStaging(manager: EntityManager): Promise<void> {
  await manager.query(`ANALYZE staged_scores`);
}

/** Staged lines whose code (letter case aside) is on an earlier line, with that first line; at most `limit`. */
export function stagedDuplicates(manager: EntityManager, limit: number): Promise<{ line: number; student_code: string; first: number }[]> {
  return manager.query(
    `SELECT line, student_code, first FROM (
       SELECT line, student_code, min(line) OVER (PARTITION BY upper(student_code)) AS first FROM staged_scores
     ) d WHERE line <> first ORDER BY line LIMIT ${limit}`,
  );
}

/** Staged lines whose code is registered to another classroom of the study; at most `limit`. */
export function stagedCodesOfOtherClassrooms(manager: EntityManager, sheet: SheetKeys, limit: number): Promise<{ line: number; student_code: string }[]> {
  return manager.query(
    `SELECT n.line, n.student_code
       FROM staged_scores n JOIN students st ON st.study_id = $1 AND st.student_code = n.student_code
      WHERE st.classroom_id <> $2 ORDER BY n.line LIMIT ${limit}`,
    [sheet.study_id, sheet.classroom_id],
  );
}

/** Records every score or attrition mark the staged rows change on the sheet, old → new, as one audit entry (none if nothing changes). */
export async function auditStagedChanges(manager: EntityManager, actorId: string, sheet: SheetKeys, rows: number): Promise<void> {
  // Built as text: per-row jsonb objects made a 100 000-row audit entry the slowest step of an upload.
  await manager.query(
    `WITH now_on AS (SELECT student_code, score, left_study FROM scores WHERE sheet_id = $1),
          changes AS (
            SELECT coalesce(n.student_code, c.student_code) AS code,
                   CASE WHEN c.student_code IS NULL THEN 'null' ELSE format('{"score":%s,"left":%s}', coalesce(to_json(c.score)::text, 'null'), to_json(c.left_study)) END AS was,
                   CASE WHEN n.student_code IS NULL THEN 'null' ELSE format('{"score":%s,"left":%s}', coalesce(to_json(n.score)::text, 'null'), to_json(n.left_study)) END AS becomes
              FROM staged_scores n FULL JOIN now_on c ON c.student_code = n.student_code
             WHERE c.student_code IS NULL OR n.student_code IS NULL OR c.score IS DISTINCT FROM n.score OR c.left_study <> n.left_study)
     INSERT INTO audit_events (actor_id, study_id, action, entity_type, entity_id, after)
     SELECT $2, $3, 'scores.changed', 'score_sheet', $1,
            format('{"rows":%s,"changes":[%s]}', $4::int, string_agg(format('{"studentCode":%s,"from":%s,"to":%s}', to_json(code), was, becomes), ',' ORDER BY code COLLATE "C"))::jsonb
       FROM changes HAVING count(*) > 0`,
    [sheet.id, actorId, sheet.study_id, rows],
  );
}

/** Registers the staged codes the study does not know yet to the sheet's classroom. */
export async function registerStagedCodes(manager: EntityManager, sheet: SheetKeys): Promise<void> {
  await manager.query(
    `INSERT INTO students (study_id, student_code, classroom_id)
     SELECT $1, n.student_code, $2 FROM staged_scores n
      WHERE NOT EXISTS (SELECT 1 FROM students st WHERE st.study_id = $1 AND st.student_code = n.student_code)`,
    [sheet.study_id, sheet.classroom_id],
  );
}

/** Deletes the sheet's rows not staged, and frees their codes when no other sheet of the classroom uses them and no roster import registered them. */
export async function deleteUnstagedRows(manager: EntityManager, sheet: SheetKeys): Promise<void> {
  // The outer statement still sees the rows its CTE deletes, hence `sh.id <> $1`.
  await manager.query(
    `WITH gone AS (
       DELETE FROM scores s WHERE s.sheet_id = $1 AND NOT EXISTS (SELECT 1 FROM staged_scores n WHERE n.student_code = s.student_code)
       RETURNING s.student_code)
     DELETE FROM students st USING gone
      WHERE st.study_id = $2 AND st.classroom_id = $3 AND st.student_code = gone.student_code
        AND NOT EXISTS (SELECT 1 FROM score_sheets sh JOIN scores x ON x.sheet_id = sh.id AND x.student_code = st.student_code
                         WHERE sh.classroom_id = $3 AND sh.id <> $1)
        AND st.roster_link IS NULL`,
    [sheet.id, sheet.study_id, sheet.classroom_id],
  );
}

/** Brings the sheet's rows that the staged rows change (score, attrition mark or note) to the staged values. */
export async function updateChangedRows(manager: EntityManager, sheetId: string): Promise<void> {
  await manager.query(
    `UPDATE scores s SET score = n.score, left_study = n.left_study, note = n.note
       FROM staged_scores n
      WHERE s.sheet_id = $1 AND s.student_code = n.student_code
        AND (s.score IS DISTINCT FROM n.score OR s.left_study <> n.left_study OR s.note <> n.note)`,
    [sheetId],
  );
}

/** Inserts the staged rows into the sheet; with `skipExisting`, only those whose code it does not have yet. */
export async function insertStagedRows(manager: EntityManager, sheet: SheetKeys, skipExisting: boolean): Promise<void> {
  await manager.query(
    `INSERT INTO scores (sheet_id, study_id, classroom_id, wave_id, measure_id, student_code, score, left_study, note)
     SELECT $1, $2, $3, $4, $5, n.student_code, n.score, n.left_study, n.note FROM staged_scores n
      ${skipExisting ? 'WHERE NOT EXISTS (SELECT 1 FROM scores s WHERE s.sheet_id = $1 AND s.student_code = n.student_code)' : ''}`,
    [sheet.id, sheet.study_id, sheet.classroom_id, sheet.wave_id, sheet.measure_id],
  );
}

// A sheet's stored sums (./sums.ts).

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
// Stored sums carry the same moments as generated columns (migration 1796700000000), so a reader of many takes them as they are.
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

/**
 * The moments of the stored sums in `a` (a sheet_sums row of the row's own `sheet_id`) as select-list columns named as
 * SheetMoments names them, so the row itself serves as the sheet's moments, and `stored_present` saying whether there
 * are any. The pairs only where `pairsRead` holds, else none: pairs taken with a baseline sheet the reader does not read
 * are not its pairs (and not sending them spares a run at 80 000 classrooms half a million numbers to parse).
 */
export const storedMomentsColumns = (a: string, pairsRead: string) =>
  [
    `${a}.sheet_id IS NOT NULL AS stored_present`,
    ...moments(a)
      .filter(([name]) => name !== 'sheet_id')
      .map(([name]) => {
        const column = `${a}.${name === 'pairs' ? 'np' : name}`;
        if (name === 'pairs') return `CASE WHEN ${pairsRead} THEN ${column} ELSE 0 END AS ${name}`;
        return name.startsWith('pair_') ? `CASE WHEN ${pairsRead} THEN ${column} END AS ${name}` : `${column} AS ${name}`;
      }),
  ].join(', ');

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

/** Each given sheet's moments, summed now. $1 sheet IDs, $2 the pretest sheet paired with each (null: none). */
export const sheetMomentsSql = `SELECT ${moments('a').map(([name, expr]) => `${expr} AS ${name}`).join(', ')} FROM (${sheetSumsSql}) a`;

/** The writers' lock on the given sheets' classrooms. $1 sheet IDs. */
export const lockSheetClassroomsSql = `SELECT 1 FROM classrooms WHERE id IN (SELECT classroom_id FROM score_sheets WHERE id = ANY($1::uuid[])) ORDER BY id FOR NO KEY UPDATE`;

/**
 * The sheets whose sums to store for the given ones, each with the pretest sheet it pairs with: the given sheets, and
 * when one is a baseline sheet, its classroom's submitted or accepted sheets of the same measure in the other waves. $1 sheet IDs.
 */
export const sumTargetsSql = `
  WITH given AS (SELECT sh.* FROM score_sheets sh WHERE sh.id = ANY($1::uuid[])),
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
    LEFT JOIN score_sheets p ON p.classroom_id = t.classroom_id AND p.measure_id = t.measure_id AND p.wave_id = bw.id`;

/** Stores (or replaces) the sums of sheets, each with its pretest sheet. $1 sheet IDs, $2 pretest sheets. */
export const storeSheetSumsSql = `
  INSERT INTO sheet_sums (sheet_id, pretest_sheet_id, n, sy, syy, left_n, np, py, px, pyy, pxx, pxy)
  SELECT sheet_id, pretest_sheet_id, n, sy, syy, left_n, np, py, px, pyy, pxx, pxy FROM (${sheetSumsSql}) s
  ON CONFLICT (sheet_id) DO UPDATE SET pretest_sheet_id = excluded.pretest_sheet_id, n = excluded.n, sy = excluded.sy, syy = excluded.syy,
    left_n = excluded.left_n, np = excluded.np, py = excluded.py, px = excluded.px, pyy = excluded.pyy, pxx = excluded.pxx, pxy = excluded.pxy`;

/** Digests of the given sheets as lowercase hex. $1 sheet IDs. */
export const sheetDigestsHexSql = `SELECT id, encode(digest, 'hex') AS digest FROM (${sheetDigestsSql}) d`;
