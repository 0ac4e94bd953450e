import { describe, expect, it } from 'vitest';
import {
  blankRow,
  checkGrid,
  issuesFromServer,
  parseScore,
  pasteBlock,
  rowsWithoutScore,
  templateCsv,
  toScoreRows,
  type GridRow,
} from '@/features/score-sheets/grid-model';

const range = { minScore: 0, maxScore: 250 };
const row = (studentCode: string, score: string, extra: Partial<GridRow> = {}): GridRow => ({ ...blankRow(), studentCode, score, ...extra });

describe('a yes/no measure’s grid', () => {
  const yesNo = { minScore: 0, maxScore: 1, scale: 'yes-no' as const };
  it('reads pasted yes/no, y/n, 1/0 and true/false as 1 and 0, and flags anything else with the answers it takes', () => {
    const pasted = pasteBlock([blankRow()], 0, 0, 'A1\tYes\nA2\tn\nA3\t1\nA4\tfalse\nA5\tmaybe\n').rows;
    expect(toScoreRows(pasted, 'yes-no').rows.map((r) => r.score)).toEqual([1, 0, 1, 0, Number.NaN]);
    const issues = checkGrid(pasted, yesNo);
    expect([...issues.values()]).toEqual([{ score: 'Answer yes or no (y/n, yes/no, 1/0 or true/false)' }]);
    expect(issues.has(pasted[4].id)).toBe(true);
  });
});

describe('parseScore', () => {
  it('reads numbers, a decimal comma and nothing; anything else is not a number', () => {
    expect(parseScore('81.5')).toBe(81.5);
    expect(parseScore(' 12,5 ')).toBe(12.5);
    expect(parseScore('')).toBeNull();
    expect(parseScore('eighty')).toBeNaN();
    expect(parseScore('1,234,5')).toBeNaN();
  });
});

describe('checkGrid', () => {
  it('flags a score outside the measure’s range; a row without a score is a draft, not a problem', () => {
    const rows = [row('LV-1', '251'), row('LV-2', ''), row('LV-3', '', { left: true }), row('LV-4', '250')];
    const issues = checkGrid(rows, range);
    expect(issues.get(rows[0].id)).toEqual({ score: "The score 251 is outside the measure's range 0–250" });
    expect(issues.has(rows[1].id)).toBe(false);
    expect(issues.has(rows[2].id)).toBe(false);
    expect(issues.has(rows[3].id)).toBe(false);
    expect([...rowsWithoutScore(rows).keys()]).toEqual([rows[1].id]);
  });

  it('flags a student code used twice on both rows, whatever its case', () => {
    const rows = [row('LV-7', '10'), row('LV-8', '20'), row('lv-7', '30')];
    const issues = checkGrid(rows, range);
    expect(issues.get(rows[0].id)?.studentCode).toBe('This code is also on row 3');
    expect(issues.get(rows[2].id)?.studentCode).toBe('This code is also on row 1');
    expect(issues.has(rows[1].id)).toBe(false);
  });

  it('uses the shared row schema: a name instead of a code, and text instead of a number, are refused', () => {
    const rows = [row('Maria Lopez', '50'), row('LV-9', 'eighty')];
    const issues = checkGrid(rows, range);
    expect(issues.get(rows[0].id)?.studentCode).toMatch(/not a name/);
    expect(issues.get(rows[1].id)?.score).toBe('Enter a number');
  });

  it('ignores blank rows', () => {
    expect(checkGrid([blankRow(), row('LV-1', '5'), blankRow()], range).size).toBe(0);
  });
});

describe('toScoreRows and issuesFromServer', () => {
  it('skips blank rows and maps the server’s row numbers back onto the grid', () => {
    const rows = [row('LV-1', '5'), blankRow(), row('LV-2', '6')];
    const sent = toScoreRows(rows);
    expect(sent.rows).toEqual([
      { studentCode: 'LV-1', score: 5, left: false, note: '' },
      { studentCode: 'LV-2', score: 6, left: false, note: '' },
    ]);
    const issues = issuesFromServer(
      { rows: [{ row: 2, column: 'student_code', message: 'Student code LV-2 cannot be used in this classroom' }] },
      rows,
      sent.gridIndex,
    );
    expect([...issues.keys()]).toEqual([rows[2].id]);
    expect(issues.get(rows[2].id)?.studentCode).toMatch(/cannot be used in this classroom/);
  });

  it('also maps validation issues named by path', () => {
    const rows = [row('LV-1', '5')];
    const issues = issuesFromServer({ issues: [{ path: 'rows.0.note', message: 'Too long' }] }, rows, [0]);
    expect(issues.get(rows[0].id)).toEqual({ note: 'Too long' });
  });
});

describe('pasteBlock', () => {
  it('fills codes and scores from a two-column block, adding rows as needed', () => {
    const rows = [row('', '')];
    const { rows: next, pasted } = pasteBlock(rows, 0, 0, 'LV-1\t81\r\nLV-2\t64\r\nLV-3\t70\r\n');
    expect(pasted).toBe(3);
    expect(next.map((r) => [r.studentCode, r.score])).toEqual([
      ['LV-1', '81'],
      ['LV-2', '64'],
      ['LV-3', '70'],
    ]);
    expect(next[0].id).toBe(rows[0].id);
  });

  it('starts at the focused cell, keeps the other columns, reads yes as left, and skips a copied header row', () => {
    const rows = [row('LV-1', '5', { note: 'keep' }), row('LV-2', '6')];
    const { rows: next } = pasteBlock(rows, 0, 1, 'score\tleft\n90\tno\n\tyes\n');
    expect(next.map((r) => [r.studentCode, r.score, r.left, r.note])).toEqual([
      ['LV-1', '90', false, 'keep'],
      ['LV-2', '', true, ''],
    ]);
  });
});

describe('templateCsv', () => {
  it('writes the upload’s columns with a BOM and neutralises cells a spreadsheet would run as formulas', () => {
    const csv = templateCsv([
      { studentCode: 'LV-1', score: -3, left: false, note: '=HYPERLINK("x")' },
      { studentCode: 'LV-2', score: null, left: true, note: '@moved, away' },
    ]);
    expect(csv).toBe('\uFEFFstudent_code,score,left,note\r\nLV-1,-3,no,"\'=HYPERLINK(""x"")"\r\nLV-2,,yes,"\'@moved, away"\r\n');
  });
});
