import { finished } from 'node:stream/promises';
import { parse, type Options } from 'csv-parse';
import { AppError } from '../errors.js';

export const MAX_CSV_COLUMNS = 200;

export interface CsvRecord {
  /** The line the record ends on in the file (the header is line 1). */
  line: number;
  values: Record<string, string>;
}

const SLICE = 64 * 1024;

/**
 * Reads an uploaded CSV with a header row, in batches of records: UTF-8 with or without BOM, comma or
 * semicolon, CRLF or LF. Refuses binary files, other encodings and a header without the required
 * columns (as 400s, thrown while iterating, so a caller's transaction rolls back). The text is fed to
 * the parser a slice at a time and each slice's records are handed on before the next, so the parsed
 * records never pile up.
 */
export async function* csvBatches(buffer: Buffer, requiredColumns: string[]): AsyncGenerator<CsvRecord[]> {
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

  // `on_record` hands over the line each record ends on; the `info` option does too, at three times the cost.
  const options: Options = {
    bom: true,
    delimiter,
    skip_empty_lines: true,
    relax_column_count: true,
    relax_quotes: true,
    trim: true,
    on_record: (record: string[], context: { lines: number }) => ({ line: context.lines, record }) as unknown as string[],
  };
  const parser = parse(options);
  const parsed: { line: number; record: string[] }[] = [];
  let failure: Error | null = null;
  parser.on('data', (item) => parsed.push(item));
  parser.on('error', (err) => (failure ??= err));
  const ended = finished(parser).catch(() => {}); // a failure is read from `failure`

  let columns: string[] | null = null;
  const take = (): CsvRecord[] => {
    if (failure) throw AppError.validation(`The CSV could not be read: ${(failure as Error).message}`);
    const batch: CsvRecord[] = [];
    for (const item of parsed.splice(0)) {
      if (!columns) {
        columns = item.record.map((h) => h.toLowerCase());
        const missing = requiredColumns.filter((c) => !columns!.includes(c));
        if (missing.length) throw AppError.validation(`The header row lacks the column(s) ${missing.join(', ')}`, missing.map((c) => ({ path: c, message: 'Missing column' })));
        continue;
      }
      const values: Record<string, string> = {};
      for (let j = 0; j < columns.length; j++) values[columns[j]] = item.record[j] ?? '';
      batch.push({ line: item.line, values });
    }
    return batch;
  };
  try {
    for (let offset = 0; offset < text.length && !failure; offset += SLICE) {
      parser.write(text.slice(offset, offset + SLICE));
      // The parser hands its records over on the next turn of the event loop.
      await new Promise((resolve) => setImmediate(resolve));
      const batch = take();
      if (batch.length) yield batch;
    }
    parser.end();
    await ended;
    const last = take();
    if (last.length) yield last;
  } finally {
    parser.destroy();
  }
  if (!columns) throw AppError.validation('The file is empty');
}

/** A small CSV (an import of at most `maxRows` records) read whole; one bad record refuses the file. */
export async function readSmallCsv(buffer: Buffer, requiredColumns: string[], maxRows: number, what: string): Promise<CsvRecord[]> {
  const rows: CsvRecord[] = [];
  for await (const batch of csvBatches(buffer, requiredColumns)) {
    rows.push(...batch);
    if (rows.length > maxRows) throw AppError.validation(`Import at most ${maxRows.toLocaleString('en-US')} ${what} at a time`);
  }
  if (!rows.length) throw AppError.validation('The file has a header row but no data rows');
  return rows;
}
