import { scoreRowSchema, type RowIssue, type ScoreRow } from '@evenhand/entities';
import { AppError } from '../errors.js';

export interface MeasureRange {
  minScore: number;
  maxScore: number;
}

const FORMULA = /^[=+\-@\t\r]/;

/**
 * Checks every row against the measure's range and for duplicate codes; returns all problems at
 * once (row numbers are the grid's 1-based rows, or the CSV's line numbers when given).
 */
export function checkRows(rows: ScoreRow[], range: MeasureRange, lineOf: (index: number) => number = (i) => i + 1): RowIssue[] {
  const issues: RowIssue[] = [];
  const firstSeen = new Map<string, number>();
  rows.forEach((r, i) => {
    const row = lineOf(i);
    const key = r.studentCode.toUpperCase();
    const earlier = firstSeen.get(key);
    if (earlier !== undefined) issues.push({ row, column: 'student_code', message: `Student code ${r.studentCode} is also on row ${earlier}` });
    else firstSeen.set(key, row);
    if (r.score === null) {
      if (!r.left) issues.push({ row, column: 'score', message: 'Enter a score, or mark the student as having left the study' });
    } else if (r.score < range.minScore || r.score > range.maxScore) {
      issues.push({ row, column: 'score', message: `The score ${r.score} is outside the measure's range ${range.minScore}–${range.maxScore}` });
    }
  });
  return issues;
}

export function rowsRefused(issues: RowIssue[]): AppError {
  return new AppError('validation_failed', `${issues.length} problem(s) found; nothing was saved`, { rows: issues.slice(0, 500), total: issues.length });
}

const truthy = new Set(['1', 'true', 'yes', 'y', 'x', 'left']);
const falsy = new Set(['', '0', 'false', 'no', 'n']);

/** Turns one CSV record (student_code, score, left?, note?) into a row, or says why it cannot. */
export function rowFromCsv(values: Record<string, string>, line: number): { row?: ScoreRow; issues: RowIssue[] } {
  const issues: RowIssue[] = [];
  const rawScore = (values.score ?? '').trim();
  const rawLeft = (values.left ?? '').trim().toLowerCase();
  if (FORMULA.test(rawScore) && Number.isNaN(Number(rawScore))) {
    issues.push({ row: line, column: 'score', message: 'This looks like a spreadsheet formula, not a score' });
  }
  // Accept a decimal comma only when it cannot be a thousands separator of a larger number.
  const normalised = /^-?\d+,\d+$/.test(rawScore) ? rawScore.replace(',', '.') : rawScore;
  const score = normalised === '' ? null : Number(normalised);
  if (score !== null && !Number.isFinite(score) && !issues.length) issues.push({ row: line, column: 'score', message: `“${rawScore.slice(0, 40)}” is not a number` });
  if (!truthy.has(rawLeft) && !falsy.has(rawLeft)) issues.push({ row: line, column: 'left', message: 'Write yes or no in the “left” column' });
  if (issues.length) return { issues };
  const parsed = scoreRowSchema.safeParse({ studentCode: values.student_code ?? '', score, left: truthy.has(rawLeft), note: values.note ?? '' });
  if (!parsed.success) {
    const column: Record<string, string> = { studentCode: 'student_code', note: 'note' };
    return { issues: parsed.error.issues.map((i) => ({ row: line, column: column[String(i.path[0])] ?? String(i.path[0]), message: i.message })) };
  }
  return { row: parsed.data, issues };
}
