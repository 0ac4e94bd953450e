import { render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { useState } from 'react';
import { describe, expect, it, vi } from 'vitest';
import { ScoreGrid, type RowsUpdate } from '@/features/score-sheets/components/score-grid';
import { blankRow, type GridRow } from '@/features/score-sheets/grid-model';

function Harness({ initial, onPasted, scale = 'score' }: { initial: GridRow[]; onPasted?: (n: number) => void; scale?: 'score' | 'yes-no' }) {
  const [rows, setRows] = useState(initial);
  return (
    <ScoreGrid
      label="Scores"
      rows={rows}
      issues={new Map()}
      range={scale === 'yes-no' ? { minScore: 0, maxScore: 1, scale } : { minScore: 0, maxScore: 250 }}
      onRowsChange={(update: RowsUpdate) => setRows(update)}
      onPasted={onPasted}
    />
  );
}

const cell = (column: string, row: number) => screen.getByRole('textbox', { name: `${column}, row ${row}` });

describe('ScoreGrid', () => {
  it('when the measure is yes/no, then y and n fill the answer and move down, so a class is entered in one pass', async () => {
    const user = userEvent.setup();
    render(<Harness initial={[blankRow(), blankRow(), blankRow()]} scale="yes-no" />);
    await user.click(cell('Score', 1));
    await user.keyboard('ynY');
    expect([1, 2, 3].map((row) => (cell('Score', row) as HTMLInputElement).value)).toEqual(['yes', 'no', 'yes']);
    expect(cell('Score', 3)).toHaveFocus();
  });

  it('fills student codes and scores from a two-column block pasted from a spreadsheet, adding the rows it needs', async () => {
    const user = userEvent.setup();
    const onPasted = vi.fn();
    render(<Harness initial={[blankRow()]} onPasted={onPasted} />);
    await user.click(cell('Student code', 1));
    await user.paste('LV-0001\t81\r\nLV-0002\t64\r\nLV-0003\t70\r\n');
    expect(screen.getAllByRole('row')).toHaveLength(4); // header + 3
    expect(cell('Student code', 1)).toHaveValue('LV-0001');
    expect(cell('Score', 1)).toHaveValue('81');
    expect(cell('Student code', 3)).toHaveValue('LV-0003');
    expect(cell('Score', 3)).toHaveValue('70');
    expect(onPasted).toHaveBeenCalledWith(3);
  });

  it('pastes a single value into the focused cell only', async () => {
    const user = userEvent.setup();
    render(<Harness initial={[blankRow(), blankRow()]} />);
    await user.click(cell('Score', 2));
    await user.paste('42');
    expect(cell('Score', 2)).toHaveValue('42');
    expect(cell('Score', 1)).toHaveValue('');
    expect(screen.getAllByRole('row')).toHaveLength(3);
  });

  it('moves down with Enter, and adds a row when Enter is pressed on the last row', async () => {
    const user = userEvent.setup();
    render(<Harness initial={[blankRow(), blankRow()]} />);
    await user.click(cell('Score', 1));
    await user.keyboard('12{Enter}');
    expect(cell('Score', 2)).toHaveFocus();
    await user.keyboard('34{Enter}');
    expect(screen.getAllByRole('row')).toHaveLength(4);
    expect(cell('Score', 3)).toHaveFocus();
    expect(cell('Score', 1)).toHaveValue('12');
    expect(cell('Score', 2)).toHaveValue('34');
  });

  it('after tabbing along a row, starts the next row where the Tabs began', async () => {
    const user = userEvent.setup();
    render(<Harness initial={[blankRow()]} />);
    await user.click(cell('Student code', 1));
    await user.keyboard('LV-1{Tab}50{Enter}');
    expect(cell('Student code', 2)).toHaveFocus();
    await user.keyboard('LV-2{Tab}60');
    expect(cell('Score', 2)).toHaveValue('60');
  });

  it('moves between cells with the arrow keys and Tab, keeping one cell in the page’s tab order', async () => {
    const user = userEvent.setup();
    render(<Harness initial={[blankRow(), blankRow()]} />);
    await user.click(cell('Student code', 1));
    await user.keyboard('{ArrowDown}');
    expect(cell('Student code', 2)).toHaveFocus();
    await user.keyboard('{ArrowRight}');
    expect(cell('Score', 2)).toHaveFocus();
    await user.keyboard('{Tab}');
    expect(screen.getByRole('checkbox', { name: 'Left the study, row 2' })).toHaveFocus();
    await user.keyboard('{Shift>}{Tab}{/Shift}{ArrowUp}');
    expect(cell('Score', 1)).toHaveFocus();
    const tabbable = screen.getAllByRole('textbox').filter((el) => el.tabIndex === 0);
    expect(tabbable).toEqual([cell('Score', 1)]);
  });

  it('leaves the caret alone when an arrow key has text to move through', async () => {
    const user = userEvent.setup();
    render(<Harness initial={[{ ...blankRow(), studentCode: 'LV-1' }]} />);
    await user.click(cell('Student code', 1));
    await user.keyboard('{End}{ArrowLeft}');
    expect(cell('Student code', 1)).toHaveFocus();
  });
});
