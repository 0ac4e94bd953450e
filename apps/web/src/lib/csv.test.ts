import { describe, expect, it } from 'vitest';
import { csvCell, toCsv } from '@/lib/csv';

describe('csvCell', () => {
  it('keeps a spreadsheet from running text that starts like a formula', () => {
    expect(csvCell('=HYPERLINK("x")')).toBe(`"'=HYPERLINK(""x"")"`);
    expect(csvCell('+1+2')).toBe("'+1+2");
    expect(csvCell('-2+3')).toBe("'-2+3");
    expect(csvCell('@SUM(A1)')).toBe("'@SUM(A1)");
  });

  it('leaves numbers, negative ones too, as numbers', () => {
    expect(csvCell(-0.315)).toBe('-0.315');
    expect(csvCell('-1.5e-8')).toBe('-1.5e-8');
    expect(csvCell(Infinity)).toBe('');
  });

  it('quotes commas, quotes and line breaks', () => {
    expect(toCsv([['statistic', 'value'], ['site', 'Alderquill, "North"']])).toBe('statistic,value\r\nsite,"Alderquill, ""North"""\r\n');
  });
});
