import { once } from 'node:events';
import { finished } from 'node:stream/promises';
import type { PoolClient } from 'pg';
import { from as copyFrom } from 'pg-copy-streams';
import type { EntityManager } from 'typeorm';
import { scoreProblem, type RowIssue, type ScoreRow } from '@evenhand/entities';
import { ClassroomEntity } from '@evenhand/entities/orm';
import { AppError } from '../errors.js';
import {
  analyzeStaging,
  auditStagedChanges,
  copyStagedSql,
  deleteUnstagedRows,
  insertStagedRows,
  prepareStaging,
  registerStagedCodes,
  stagedCodesOfOtherClassrooms,
  stagedDuplicates,
  updateChangedRows,
  type SheetKeys,
} from './queries.js';
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
  await prepareStaging(manager);
  const range = { minScore: Number(sheet.min_score), maxScore: Number(sheet.max_score), scale: sheet.scale };
  const problems = new Problems();
  const preview: ScoreRow[] = [];
  let rows = 0;

  // Rows go to the staging table through COPY on the transaction's own connection, batch by batch.
  if (!manager.queryRunner) throw new Error('stageRows runs inside a transaction');
  const client = (await manager.queryRunner.connect()) as PoolClient;
  const copy = client.query(copyFrom(copyStagedSql));
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
  if (rows > ANALYZE_FROM) await analyzeStaging(manager);

  const found = [...problems.list, ...(await duplicates(manager)), ...(await codesOfOtherClassrooms(manager, sheet))];
  if (found.length) throw rowsRefused(found.sort((a, b) => a.row - b.row).slice(0, REPORTED), problems.total + found.length - problems.list.length);
  return { rows, preview };
}

/** A value in COPY's text format: backslash, tab, newline and carriage return escaped. */
const copyText = (value: string) => value.replace(/[\\\t\n\r]/g, (c) => ({ '\\': '\\\\', '\t': '\\t', '\n': '\\n', '\r': '\\r' })[c]!);

/** A code used twice on one sheet (letter case aside), reported on every line after its first. */
async function duplicates(manager: EntityManager): Promise<RowIssue[]> {
  const rows = await stagedDuplicates(manager, REPORTED);
  return rows.map((r) => ({ row: r.line, column: 'student_code', message: `Student code ${r.student_code} is also on row ${r.first}` }));
}

/**
 * A code already registered to another classroom of the study: one student, one classroom. The message does not
 * say which classroom (nor that another one has it): the writer is a teacher, who sees only their own classrooms.
 */
async function codesOfOtherClassrooms(manager: EntityManager, sheet: SheetKeys): Promise<RowIssue[]> {
  const rows = await stagedCodesOfOtherClassrooms(manager, sheet, REPORTED);
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
  await manager.findOne(ClassroomEntity, { where: { id: sheet.classroom_id }, select: { id: true }, lock: { mode: 'for_no_key_update' } });
  await auditStagedChanges(manager, actorId, sheet, rows);
  try {
    // Two writers claiming the same new codes wait for each other here; the second is refused.
    await registerStagedCodes(manager, sheet);
  } catch (err) {
    if (isPg(err, '23505') || isPg(err, '40P01')) {
      throw AppError.conflict('Another classroom registered some of these student codes at the same moment; save again to see which');
    }
    throw err;
  }
  if (sheetWasEmpty) {
    // A first write has nothing to remove or update.
    await insertStagedRows(manager, sheet, false);
    return;
  }
  // Codes dropped from this sheet that no other sheet of the classroom uses are free again, unless a roster import
  // registered them: the district's roster, not a sheet, says who is in the class.
  await deleteUnstagedRows(manager, sheet);
  await updateChangedRows(manager, sheet.id);
  await insertStagedRows(manager, sheet, true);
}
