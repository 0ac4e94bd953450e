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
    throw AppError.validation('The file is not UTF-8 text; upload a CSV file saved with UTF-8 encoding');
  }
  const reader = readerFor(text, requiredColumns);
  try {
    for (let offset = 0; offset < text.length && !reader.failure; offset += SLICE) {
      const batch = await reader.feed(text.slice(offset, offset + SLICE));
      if (batch.length) yield batch;
    }
    const last = await reader.end();
    if (last.length) yield last;
  } finally {
    reader.destroy();
  }
}

/**
 * The same reading as `csvBatches` for a file that arrives as a stream (a file inside a zip): chunks are
 * decoded as they come, so neither the file nor its records are ever held whole.
 */
export async function* csvStreamBatches(chunks: AsyncIterable<Buffer>, requiredColumns: string[]): AsyncGenerator<CsvRecord[]> {
  const decoder = new TextDecoder('utf-8', { fatal: true });
  const decode = (chunk: Buffer, stream: boolean) => {
    if (chunk.includes(0)) throw AppError.validation('This does not look like a CSV file (it contains binary data)');
    try {
      return decoder.decode(chunk, { stream });
    } catch {
      throw AppError.validation('The file is not UTF-8 text; upload a CSV file saved with UTF-8 encoding');
    }
  };
  let reader: RecordReader | null = null;
  let head = '';
  try {
    for await (const chunk of chunks) {
      let text = decode(chunk, true);
      if (!reader) {
        // The delimiter is chosen from the whole first line.
        head += text;
        if (!head.includes('\n')) continue;
        reader = readerFor(head, requiredColumns);
        text = head;
      }
      const batch = await reader.feed(text);
      if (batch.length) yield batch;
    }
    let text = decode(Buffer.alloc(0), false);
    if (!reader) {
      reader = readerFor(head + text, requiredColumns);
      text = head + text;
    }
    const batch = await reader.feed(text);
    if (batch.length) yield batch;
    const last = await reader.end();
    if (last.length) yield last;
  } finally {
    reader?.destroy();
  }
}

/** A reader for a file that starts with `text`: comma or semicolon, whichever the first line uses more. */
function readerFor(text: string, requiredColumns: string[]): RecordReader {
  if (!text.trim()) throw AppError.validation('The file is empty');
  const firstLine = text.replace(/^\uFEFF/, '').split(/\r?\n/, 1)[0];
  const delimiter = (firstLine.match(/;/g)?.length ?? 0) > (firstLine.match(/,/g)?.length ?? 0) ? ';' : ',';
  if (firstLine.split(delimiter).length > MAX_CSV_COLUMNS) throw AppError.validation(`The file has more than ${MAX_CSV_COLUMNS} columns`);
  return new RecordReader(delimiter, requiredColumns);
}

/** csv-parse with the options every upload uses, handing over records in batches with their lines. */
class RecordReader {
  private readonly parser;
  private readonly parsed: { line: number; record: string[] }[] = [];
  private readonly ended: Promise<void>;
  private columns: string[] | null = null;
  failure: Error | null = null;

  constructor(delimiter: string, private readonly requiredColumns: string[]) {
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
    this.parser = parse(options);
    this.parser.on('data', (item) => this.parsed.push(item));
    this.parser.on('error', (err) => (this.failure ??= err));
    this.ended = finished(this.parser).catch(() => {}); // a failure is read from `failure`
  }

  async feed(text: string): Promise<CsvRecord[]> {
    this.parser.write(text);
    // The parser hands its records over on the next turn of the event loop.
    await new Promise((resolve) => setImmediate(resolve));
    return this.take();
  }

  async end(): Promise<CsvRecord[]> {
    this.parser.end();
    await this.ended;
    const last = this.take();
    if (!this.columns) throw AppError.validation('The file is empty');
    return last;
  }

  destroy() {
    this.parser.destroy();
  }

  private take(): CsvRecord[] {
    if (this.failure) throw AppError.validation(`The CSV could not be read: ${this.failure.message}`);
    const batch: CsvRecord[] = [];
    for (const item of this.parsed.splice(0)) {
      if (!this.columns) {
        const columns = item.record.map((h) => h.toLowerCase());
        const missing = this.requiredColumns.filter((c) => !columns.includes(c));
        if (missing.length) throw AppError.validation(`The header row lacks the column(s) ${missing.join(', ')}`, missing.map((c) => ({ path: c, message: 'Missing column' })));
        this.columns = columns;
        continue;
      }
      const values: Record<string, string> = {};
      for (let j = 0; j < this.columns.length; j++) values[this.columns[j]] = item.record[j] ?? '';
      batch.push({ line: item.line, values });
    }
    return batch;
  }
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
