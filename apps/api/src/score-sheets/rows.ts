import { YES_NO_PROBLEM, parseYesNo, scoreRowSchema, type RowIssue, type ScoreRow } from '@evenhand/entities';
import { AppError } from '../errors.js';

/** The whole write refused, with the problems found (the first few hundred) and how many there were. */
export function rowsRefused(issues: RowIssue[], total = issues.length): AppError {
  return new AppError('validation_failed', `${total} problem(s) found; nothing was saved`, { rows: issues.slice(0, 500), total });
}

const FORMULA = /^[=+\-@\t\r]/;
const truthy = new Set(['1', 'true', 'yes', 'y', 'x', 'left']);
const falsy = new Set(['', '0', 'false', 'no', 'n']);

/**
 * Turns one CSV record (student_code, score, left?, note?) into a row, or says why it cannot. A yes/no measure's
 * score column takes yes/no, y/n, 1/0 or true/false, stored as 1 and 0.
 */
export function rowFromCsv(values: Record<string, string>, line: number, scale: 'score' | 'yes-no' = 'score'): { row?: ScoreRow; issues: RowIssue[] } {
  const issues: RowIssue[] = [];
  const rawScore = (values.score ?? '').trim();
  const rawLeft = (values.left ?? '').trim().toLowerCase();
  if (FORMULA.test(rawScore) && Number.isNaN(Number(rawScore))) {
    issues.push({ row: line, column: 'score', message: 'This looks like a spreadsheet formula, not a score' });
  }
  // Accept a decimal comma only when it cannot be a thousands separator of a larger number.
  const normalised = /^-?\d+,\d+$/.test(rawScore) ? rawScore.replace(',', '.') : rawScore;
  const answer = scale === 'yes-no' ? parseYesNo(rawScore) : null;
  if (answer === undefined) issues.push({ row: line, column: 'score', message: YES_NO_PROBLEM });
  const score = scale === 'yes-no' ? (answer ?? null) : normalised === '' ? null : Number(normalised);
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
