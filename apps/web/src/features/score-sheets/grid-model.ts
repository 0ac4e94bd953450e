import { lacksScore, MISSING_SCORE, parseYesNo, scoreProblem, YES_NO_PROBLEM, scoreRowSchema, type MeasureRange, type RowIssue, type ScoreRow, type ScoreRowInput } from '@evenhand/entities';
import { toCsv } from '@/lib/csv';

/** One row of the grid as typed: the score stays text, so "eighty" or "12,5" are kept until fixed. */
export interface GridRow {
  id: string;
  studentCode: string;
  score: string;
  left: boolean;
  note: string;
}

/** The grid's editable columns, in order; paste fills them left to right. */
export const gridColumns = ['studentCode', 'score', 'left', 'note'] as const;
export type GridColumn = (typeof gridColumns)[number];

export const columnLabels: Record<GridColumn, string> = {
  studentCode: 'Student code',
  score: 'Score',
  left: 'Left the study',
  note: 'Note',
};

/** What is wrong with each cell of a row; absent cells are fine. */
export type CellIssues = Partial<Record<GridColumn, string>>;

let lastId = 0;
export function newRowId(): string {
  lastId += 1;
  return `row-${lastId}`;
}

export function blankRow(): GridRow {
  return { id: newRowId(), studentCode: '', score: '', left: false, note: '' };
}

type Scale = MeasureRange['scale'];

/** A yes/no answer as the grid shows it. */
const yesNoText = (score: number) => (score === 1 ? 'yes' : score === 0 ? 'no' : String(score));

export function rowsFromSheet(rows: readonly ScoreRow[], scale?: Scale): GridRow[] {
  const grid = rows.map((r) => ({
    id: newRowId(),
    studentCode: r.studentCode,
    score: r.score === null ? '' : scale === 'yes-no' ? yesNoText(r.score) : String(r.score),
    left: r.left,
    note: r.note,
  }));
  return grid.length ? grid : [blankRow()];
}

export function isBlank(row: GridRow): boolean {
  return !row.studentCode.trim() && !row.score.trim() && !row.left && !row.note.trim();
}

/**
 * '' is no score; a decimal comma is read as a point (as the CSV upload does); anything else not a number is NaN.
 * A yes/no measure reads yes/no, y/n, 1/0 or true/false as 1 and 0 (the shared `parseYesNo`), anything else as NaN.
 */
export function parseScore(text: string, scale?: Scale): number | null {
  if (scale === 'yes-no') return parseYesNo(text) ?? Number.NaN;
  const t = text.trim();
  if (!t) return null;
  const normalised = /^-?\d+,\d+$/.test(t) ? t.replace(',', '.') : t;
  return /^[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i.test(normalised) ? Number(normalised) : Number.NaN;
}

/** The rows the API receives (blank rows are skipped), and for each the grid row it came from. */
export function toScoreRows(rows: readonly GridRow[], scale?: Scale): { rows: ScoreRowInput[]; gridIndex: number[] } {
  const out: ScoreRowInput[] = [];
  const gridIndex: number[] = [];
  rows.forEach((row, i) => {
    if (isBlank(row)) return;
    out.push({ studentCode: row.studentCode.trim(), score: parseScore(row.score, scale), left: row.left, note: row.note.trim() });
    gridIndex.push(i);
  });
  return { rows: out, gridIndex };
}

const schemaColumn: Record<string, GridColumn> = { studentCode: 'studentCode', score: 'score', left: 'left', note: 'note' };

/**
 * Every problem of every row, keyed by row id: the shared row schema, the measure's range (the shared
 * `scoreProblem`), and student codes used twice (flagged on both rows). The API runs the same checks
 * and refuses the whole sheet if one fails. A row still waiting for its score is not a problem in a
 * draft (see `rowsWithoutScore`).
 */
export function checkGrid(rows: readonly GridRow[], range: MeasureRange): Map<string, CellIssues> {
  const issues = new Map<string, CellIssues>();
  const add = (row: GridRow, column: GridColumn, message: string) => {
    const cell = issues.get(row.id) ?? {};
    cell[column] ??= message;
    issues.set(row.id, cell);
  };
  const byCode = new Map<string, number[]>();
  rows.forEach((row, i) => {
    if (isBlank(row)) return;
    const score = parseScore(row.score, range.scale);
    const parsed = scoreRowSchema.safeParse({ studentCode: row.studentCode, score, left: row.left, note: row.note });
    if (!parsed.success) {
      for (const issue of parsed.error.issues) {
        const column = schemaColumn[String(issue.path[0])];
        if (column) add(row, column, column !== 'score' ? issue.message : range.scale === 'yes-no' ? YES_NO_PROBLEM : 'Enter a number');
      }
    }
    if (score === null || Number.isFinite(score)) {
      const problem = scoreProblem({ score, left: row.left }, range);
      if (problem) add(row, 'score', problem);
    }
    const code = row.studentCode.trim().toUpperCase();
    if (code) byCode.set(code, [...(byCode.get(code) ?? []), i]);
  });
  for (const indexes of byCode.values()) {
    if (indexes.length < 2) continue;
    for (const i of indexes) {
      const others = indexes.filter((j) => j !== i).map((j) => j + 1);
      add(rows[i], 'studentCode', `This code is also on row${others.length > 1 ? 's' : ''} ${others.join(', ')}`);
    }
  }
  return issues;
}

/** Rows the teacher has started but not scored (nor marked as left): the sheet saves, but cannot be submitted. */
export function rowsWithoutScore(rows: readonly GridRow[]): Map<string, CellIssues> {
  const waiting = new Map<string, CellIssues>();
  for (const row of rows) {
    if (!isBlank(row) && !row.score.trim() && lacksScore({ score: null, left: row.left })) waiting.set(row.id, { score: MISSING_SCORE });
  }
  return waiting;
}

/** Counts what a check found, for the save status: "2 rows need fixing (row 3: …)". */
export function describeIssues(rows: readonly GridRow[], issues: Map<string, CellIssues>): string | null {
  if (!issues.size) return null;
  const first = rows.findIndex((r) => issues.has(r.id));
  const cell = issues.get(rows[first].id)!;
  const message = Object.values(cell)[0];
  const n = issues.size;
  return `${n} row${n === 1 ? ' needs' : 's need'} fixing (row ${first + 1}: ${message})`;
}

const csvColumn: Record<string, GridColumn> = { student_code: 'studentCode', score: 'score', left: 'left', note: 'note' };

/**
 * Puts the API's refusals onto the grid's cells. `details.rows` number the rows as sent (1-based),
 * `details.issues` name them as `rows.3.studentCode`; both are mapped back through `gridIndex`.
 */
export function issuesFromServer(
  details: unknown,
  rows: readonly GridRow[],
  gridIndex: readonly number[],
): Map<string, CellIssues> {
  const out = new Map<string, CellIssues>();
  const add = (sentIndex: number, column: GridColumn, message: string) => {
    const row = rows[gridIndex[sentIndex]];
    if (!row) return;
    const cell = out.get(row.id) ?? {};
    cell[column] ??= message;
    out.set(row.id, cell);
  };
  if (typeof details !== 'object' || details === null) return out;
  const d = details as { rows?: RowIssue[]; issues?: { path: string; message: string }[] };
  for (const issue of Array.isArray(d.rows) ? d.rows : []) {
    add(issue.row - 1, (issue.column && csvColumn[issue.column]) || 'studentCode', issue.message);
  }
  for (const issue of Array.isArray(d.issues) ? d.issues : []) {
    const match = /^rows\.(\d+)(?:\.(\w+))?/.exec(issue.path);
    if (match) add(Number(match[1]), schemaColumn[match[2] ?? ''] ?? 'studentCode', issue.message);
  }
  return out;
}

const truthy = new Set(['1', 'true', 'yes', 'y', 'x', 'left', '✓']);

/** Splits text copied from a spreadsheet into rows of cells (tab between cells, a line per row). */
export function parseClipboard(text: string): string[][] {
  const lines = text.replace(/\r\n?/g, '\n').split('\n');
  if (lines.length > 1 && lines[lines.length - 1] === '') lines.pop();
  return lines.map((line) => line.split('\t'));
}

const headerWords = /^(student[ _]?code|code|score|left|left the study|note)$/i;

/**
 * Pastes a block of cells into the grid from (row, column) rightwards and downwards, adding rows
 * as needed; columns past the note are ignored and a copied header row is skipped.
 */
export function pasteBlock(rows: readonly GridRow[], startRow: number, startColumn: number, text: string): { rows: GridRow[]; pasted: number } {
  let block = parseClipboard(text);
  if (block.length > 1 && headerWords.test(block[0][0]?.trim() ?? '')) block = block.slice(1);
  const next = [...rows];
  block.forEach((cells, k) => {
    const index = startRow + k;
    const row = { ...(next[index] ?? blankRow()) };
    cells.forEach((raw, j) => {
      const column = gridColumns[startColumn + j];
      if (!column) return;
      const value = raw.trim();
      if (column === 'left') row.left = truthy.has(value.toLowerCase());
      else row[column] = value;
    });
    next[index] = row;
  });
  return { rows: next, pasted: block.length };
}

/** A CSV in the upload's format from the rows given, with a BOM so spreadsheets open it as UTF-8. */
export function templateCsv(rows: readonly ScoreRow[]): string {
  return `\uFEFF${toCsv([['student_code', 'score', 'left', 'note'], ...rows.map((r) => [r.studentCode, r.score, r.left ? 'yes' : 'no', r.note])])}`;
}
