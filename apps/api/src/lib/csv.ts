import { parse } from 'csv-parse/sync';
import { AppError } from '../errors.js';

export const MAX_CSV_COLUMNS = 200;

/**
 * Decodes and parses an uploaded CSV with a header row: UTF-8 with or without BOM, comma or
 * semicolon, CRLF or LF. Refuses binary files, other encodings, and files without data rows.
 * Rows come back with their line number in the file (the header is line 1).
 */
export function parseCsv(buffer: Buffer, requiredColumns: string[]): { columns: string[]; rows: { line: number; values: Record<string, string> }[] } {
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
  let records: { record: string[]; info: { lines: number } }[];
  try {
    // With `info`, each record comes with the line it ends on.
    records = parse(text, { bom: true, delimiter, skip_empty_lines: true, relax_column_count: true, relax_quotes: true, trim: true, info: true }) as unknown as typeof records;
  } catch (err) {
    throw AppError.validation(`The CSV could not be read: ${(err as Error).message}`);
  }
  const [header, ...data] = records;
  const columns = header.record.map((h) => h.toLowerCase());
  const missing = requiredColumns.filter((c) => !columns.includes(c));
  if (missing.length) throw AppError.validation(`The header row lacks the column(s) ${missing.join(', ')}`, missing.map((c) => ({ path: c, message: 'Missing column' })));
  if (!data.length) throw AppError.validation('The file has a header row but no data rows');
  return {
    columns,
    rows: data.map(({ record, info }) => ({ line: info.lines, values: Object.fromEntries(columns.map((c, j) => [c, record[j] ?? ''])) })),
  };
}
