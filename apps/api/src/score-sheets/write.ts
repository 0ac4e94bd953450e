import { once } from 'node:events';
import { finished } from 'node:stream/promises';
import type { PoolClient } from 'pg';
import { from as copyFrom } from 'pg-copy-streams';
import type { EntityManager } from 'typeorm';
import { scoreProblem, type RowIssue, type ScoreRow } from '@evenhand/entities';
import { AppError } from '../errors.js';
import { rowsRefused } from './rows.js';

/**
 * How a sheet's rows are written, whatever their source (the grid's JSON or a CSV upload): rows are
 * checked one by one as they arrive and streamed batch by batch into a temporary table (COPY); duplicates and codes
 * of other classrooms are then found set-wise in SQL; the sheet is brought to the staged rows with
 * three set-wise statements (delete, update, insert of only what changed), and the audit entry is
 * built in SQL from the same comparison. Node holds one batch at a time, never the whole sheet twice.
 */

/** One row as it arrived, with its line (the CSV's line, or the grid's 1-based row) and what is wrong with it. */
export interface ArrivingRow {
  line: number;
  row?: ScoreRow;
  issues: RowIssue[];
}

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

const REPORTED = 500;
const PREVIEW = 50;
const ANALYZE_FROM = 2_000;

/** Problems found so far: the first few hundred of each kind are kept, all are counted. */
class Problems {
  private kept: RowIssue[] = [];
  total = 0;
  add(issue: RowIssue) {
    this.total += 1;
    if (this.kept.length < REPORTED) this.kept.push(issue);
  }
  get list() {
    return this.kept;
  }
}

export interface Staged {
  rows: number;
  preview: ScoreRow[];
}

/**
 * Stages the rows of one write and checks them: throws a row-numbered 400 listing every problem when
 * any row is wrong, a duplicate, or registered to another classroom of the study. Nothing is written
 * to the sheet here; the staging table is emptied when the transaction ends.
 */
export async function stageRows(manager: EntityManager, sheet: SheetKeys, source: Iterable<ArrivingRow[]> | AsyncIterable<ArrivingRow[]>): Promise<Staged> {
  // One staging table per connection, emptied at every commit: a table made and dropped per write
  // would churn the system catalogs at every autosave.
  await manager.query(
    `CREATE TEMP TABLE IF NOT EXISTS staged_scores (
       line int NOT NULL, student_code varchar(40) NOT NULL, score numeric, left_study boolean NOT NULL, note varchar(500) NOT NULL
     ) ON COMMIT DELETE ROWS`,
  );
  // A transaction may write several sheets (the demo seed does).
  await manager.query(`TRUNCATE staged_scores`);
  // Room for the sorts and hashes of a large sheet's set-wise checks, for this transaction only.
  await manager.query(`SET LOCAL work_mem = '64MB'`);
  const range = { minScore: Number(sheet.min_score), maxScore: Number(sheet.max_score), scale: sheet.scale };
  const problems = new Problems();
  const preview: ScoreRow[] = [];
  let rows = 0;

  // Rows go to the staging table through COPY on the transaction's own connection, batch by batch.
  if (!manager.queryRunner) throw new Error('stageRows runs inside a transaction');
  const client = (await manager.queryRunner.connect()) as PoolClient;
  const copy = client.query(copyFrom(`COPY staged_scores (line, student_code, score, left_study, note) FROM STDIN`));
  const copied = finished(copy);
  try {
    for await (const arriving of source) {
      let text = '';
      for (const { line, row, issues } of arriving) {
        issues.forEach((i) => problems.add(i));
        if (!row) continue;
        const problem = scoreProblem(row, range);
        if (problem) problems.add({ row: line, column: 'score', message: problem });
        rows += 1;
        if (preview.length < PREVIEW) preview.push(row);
        text += `${line}\t${copyText(row.studentCode)}\t${row.score ?? '\\N'}\t${row.left ? 't' : 'f'}\t${copyText(row.note)}\n`;
      }
      if (text && !copy.write(text)) await once(copy, 'drain');
    }
    copy.end();
    await copied;
  } catch (err) {
    // Ends the COPY (as a failed one) before the connection is used for anything else.
    copy.destroy(err as Error);
    await copied.catch(() => {});
    throw err;
  }
  // Temporary tables get no statistics of their own; without them a large sheet gets poor plans.
  if (rows > ANALYZE_FROM) await manager.query(`ANALYZE staged_scores`);

  const found = [...problems.list, ...(await duplicates(manager)), ...(await codesOfOtherClassrooms(manager, sheet))];
  if (found.length) throw rowsRefused(found.sort((a, b) => a.row - b.row).slice(0, REPORTED), problems.total + found.length - problems.list.length);
  return { rows, preview };
}

/** A value in COPY's text format: backslash, tab, newline and carriage return escaped. */
const copyText = (value: string) => value.replace(/[\\\t\n\r]/g, (c) => ({ '\\': '\\\\', '\t': '\\t', '\n': '\\n', '\r': '\\r' })[c]!);

/** A code used twice on one sheet (letter case aside), reported on every line after its first. */
async function duplicates(manager: EntityManager): Promise<RowIssue[]> {
  const rows: { line: number; student_code: string; first: number }[] = await manager.query(
    `SELECT line, student_code, first FROM (
       SELECT line, student_code, min(line) OVER (PARTITION BY upper(student_code)) AS first FROM staged_scores
     ) d WHERE line <> first ORDER BY line LIMIT ${REPORTED}`,
  );
  return rows.map((r) => ({ row: r.line, column: 'student_code', message: `Student code ${r.student_code} is also on row ${r.first}` }));
}

/**
 * A code already registered to another classroom of the study: one student, one classroom. The message does not
 * say which classroom (nor that another one has it): the writer is a teacher, who sees only their own classrooms.
 */
async function codesOfOtherClassrooms(manager: EntityManager, sheet: SheetKeys): Promise<RowIssue[]> {
  const rows: { line: number; student_code: string }[] = await manager.query(
    `SELECT n.line, n.student_code
       FROM staged_scores n JOIN students st ON st.study_id = $1 AND st.student_code = n.student_code
      WHERE st.classroom_id <> $2 ORDER BY n.line LIMIT ${REPORTED}`,
    [sheet.study_id, sheet.classroom_id],
  );
  return rows.map((r) => ({ row: r.line, column: 'student_code', message: `Student code ${r.student_code} cannot be used in this classroom` }));
}

const isPg = (err: unknown, code: string) => (err as { code?: string; driverError?: { code?: string } }).code === code || (err as { driverError?: { code?: string } }).driverError?.code === code;

/**
 * Brings the sheet's scores to the staged rows and registers new codes to its classroom; codes no
 * sheet of the classroom uses any more are released. Every changed score or attrition mark is
 * recorded as old → new in one audit entry. Call after stageRows, in the same transaction.
 */
export async function applyStaged(manager: EntityManager, actorId: string, sheet: SheetKeys, rows: number, sheetWasEmpty: boolean): Promise<void> {
  // One writer per classroom at a time (the key triggers take the same lock): the codes it releases
  // and registers cannot cross another writer's.
  await manager.query(`SELECT 1 FROM classrooms WHERE id = $1 FOR NO KEY UPDATE`, [sheet.classroom_id]);
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
  try {
    // Two writers claiming the same new codes wait for each other here; the second is refused.
    await manager.query(
      `INSERT INTO students (study_id, student_code, classroom_id)
       SELECT $1, n.student_code, $2 FROM staged_scores n
        WHERE NOT EXISTS (SELECT 1 FROM students st WHERE st.study_id = $1 AND st.student_code = n.student_code)`,
      [sheet.study_id, sheet.classroom_id],
    );
  } catch (err) {
    if (isPg(err, '23505') || isPg(err, '40P01')) {
      throw AppError.conflict('Another classroom registered some of these student codes at the same moment; save again to see which');
    }
    throw err;
  }
  if (sheetWasEmpty) {
    // A first write has nothing to remove or update.
    await insertNew(manager, sheet, false);
    return;
  }
  // Codes dropped from this sheet that no other sheet of the classroom uses are free again. The
  // outer statement still sees the rows its CTE deletes, hence `sh.id <> $1`.
  await manager.query(
    `WITH gone AS (
       DELETE FROM scores s WHERE s.sheet_id = $1 AND NOT EXISTS (SELECT 1 FROM staged_scores n WHERE n.student_code = s.student_code)
       RETURNING s.student_code)
     DELETE FROM students st USING gone
      WHERE st.study_id = $2 AND st.classroom_id = $3 AND st.student_code = gone.student_code
        AND NOT EXISTS (SELECT 1 FROM score_sheets sh JOIN scores x ON x.sheet_id = sh.id AND x.student_code = st.student_code
                         WHERE sh.classroom_id = $3 AND sh.id <> $1)`,
    [sheet.id, sheet.study_id, sheet.classroom_id],
  );
  await manager.query(
    `UPDATE scores s SET score = n.score, left_study = n.left_study, note = n.note
       FROM staged_scores n
      WHERE s.sheet_id = $1 AND s.student_code = n.student_code
        AND (s.score IS DISTINCT FROM n.score OR s.left_study <> n.left_study OR s.note <> n.note)`,
    [sheet.id],
  );
  await insertNew(manager, sheet, true);
}

async function insertNew(manager: EntityManager, sheet: SheetKeys, skipExisting: boolean) {
  await manager.query(
    `INSERT INTO scores (sheet_id, study_id, classroom_id, wave_id, measure_id, student_code, score, left_study, note)
     SELECT $1, $2, $3, $4, $5, n.student_code, n.score, n.left_study, n.note FROM staged_scores n
      ${skipExisting ? 'WHERE NOT EXISTS (SELECT 1 FROM scores s WHERE s.sheet_id = $1 AND s.student_code = n.student_code)' : ''}`,
    [sheet.id, sheet.study_id, sheet.classroom_id, sheet.wave_id, sheet.measure_id],
  );
}
