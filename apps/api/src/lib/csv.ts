import { parse } from 'csv-parse';
import { AppError } from '../errors.js';

export const MAX_CSV_COLUMNS = 200;

export interface CsvRecord {
  /** The line the record ends on in the file (the header is line 1). */
  line: number;
  values: Record<string, string>;
}

/**
 * Reads an uploaded CSV with a header row, one record at a time: UTF-8 with or without BOM, comma or
 * semicolon, CRLF or LF. Refuses binary files, other encodings, a header without the required columns,
 * and files without data rows (as 400s, thrown while iterating, so a caller's transaction rolls back).
 */
export async function* csvRecords(buffer: Buffer, requiredColumns: string[]): AsyncGenerator<CsvRecord> {
  if (buffer.includes(0)) throw AppError.validation('This does not look like a CSV file (it contains binary data)');
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(buffer);
  } catch {
    throw AppError.validation('The file is not UTF-8 text; save it as “CSV UTF-8” and upload it again');
  }
  if (!text.trim()) throw AppError.validation('The file is empty');
  const firstLine = text.replace(/^\uFEFF/, '').split(/\r?\n/, 1)[0];
  const delimiter = (firstLine.match(/;/g)?.length ?? 0) > (firstLine.match(/,/g)?.length ?? 0) ? ';' : ',';
  if (firstLine.split(delimiter).length > MAX_CSV_COLUMNS) throw AppError.validation(`The file has more than ${MAX_CSV_COLUMNS} columns`);

  // With `info`, each record comes with the line it ends on.
  const parser = parse({ bom: true, delimiter, skip_empty_lines: true, relax_column_count: true, relax_quotes: true, trim: true, info: true });
  parser.end(text);
  let columns: string[] | null = null;
  try {
    for await (const { record, info } of parser as AsyncIterable<{ record: string[]; info: { lines: number } }>) {
      if (!columns) {
        columns = record.map((h) => h.toLowerCase());
        const missing = requiredColumns.filter((c) => !columns!.includes(c));
        if (missing.length) throw AppError.validation(`The header row lacks the column(s) ${missing.join(', ')}`, missing.map((c) => ({ path: c, message: 'Missing column' })));
        continue;
      }
      const values: Record<string, string> = {};
      columns.forEach((c, j) => (values[c] = record[j] ?? ''));
      yield { line: info.lines, values };
    }
  } catch (err) {
    if (err instanceof AppError) throw err;
    throw AppError.validation(`The CSV could not be read: ${(err as Error).message}`);
  } finally {
    parser.destroy();
  }
  if (!columns) throw AppError.validation('The file is empty');
}

/** A small CSV (an import of at most `maxRows` records) read whole; one bad record refuses the file. */
export async function readSmallCsv(buffer: Buffer, requiredColumns: string[], maxRows: number, what: string): Promise<CsvRecord[]> {
  const rows: CsvRecord[] = [];
  for await (const record of csvRecords(buffer, requiredColumns)) {
    if (rows.length === maxRows) throw AppError.validation(`Import at most ${maxRows.toLocaleString('en-US')} ${what} at a time`);
    rows.push(record);
  }
  if (!rows.length) throw AppError.validation('The file has a header row but no data rows');
  return rows;
}
