/**
 * CSV and TSV input of `--via duckdb`: DuckDB reads the text file with explicit options (no
 * sniffing), the columns are classified in SQL by the in-memory reader's own rules, and the typed
 * columns are written, in file order, to a temporary Parquet file that the Parquet path then scans
 * (each summary query is one scan, so the text is parsed once; the file is removed afterwards).
 * Node reads only the header and streams the text once for a pattern DuckDB reads differently.
 *
 * The in-memory reader (readers.ts, table.ts) and how the options below match it:
 * - papaparse with `,` (CSV) or a tab (TSV), `"` quoting with `""` inside quotes: DuckDB's
 *   `delim`, `quote = '"'`, `escape = '"'`, `strict_mode` (a quote left open or a row with another
 *   number of fields is refused, as the in-memory reader refuses it).
 * - The header is the first row, names as written: Node parses the header with papaparse itself
 *   and gives DuckDB positional names (`header = true`, `columns`), so names never pass through
 *   DuckDB's renaming of empty or repeated names.
 * - Every field is read as text (`VARCHAR`); a cell is missing when it is empty once JavaScript's
 *   `trim` whitespace is removed (DuckDB reads an empty field as NULL, which is missing too).
 * - A column whose present cells are all `true`/`false` (any case, no spaces) is boolean; else one
 *   whose present cells are all numbers (table.ts's patterns, run as RE2 in DuckDB) is float64,
 *   `nan`/`inf` spelled as there and the rest by DuckDB's cast, which rounds correctly as
 *   JavaScript's `Number` does; else text, cells as written.
 * - Blank lines are skipped by both.
 *
 * Where DuckDB cannot match, the run is refused with the reason:
 * - a field that starts with spaces before its opening quote (papaparse keeps ` "x"` as text,
 *   DuckDB drops the spaces and the quotes); Node's scan finds it and names the line;
 * - a file of one column with empty lines or empty fields (papaparse skips an empty line, DuckDB
 *   reads it as an empty field, and one column cannot tell them apart);
 * - lines longer than DuckDB's `max_line_size` (2 MB) and text that is not UTF-8 (DuckDB's message).
 */

import { createReadStream, promises as fs } from 'fs';
import * as os from 'os';
import * as path from 'path';

import Papa from 'papaparse';

import { errorMessage, PolyadicError } from '../engine/errors';
import { TEXT_CELL_PATTERNS } from '../engine/table';
import { checkHeaderNames } from './readers';

/** The formats `--via duckdb` reads. */
export type DuckDBFormat = 'parquet' | 'csv' | 'tsv';

/** A DuckDB connection (the type only; the binding is loaded at run time by duckdb.ts). */
type Connection = import('@duckdb/node-api').DuckDBConnection;

/** The format of a file for `--via duckdb`, or a usage error naming the ones it reads. */
export function duckdbFormatOf(filePath: string): DuckDBFormat {
  const extension = path.extname(filePath).toLowerCase();
  if (extension === '.parquet') {
    return 'parquet';
  }
  if (extension === '.csv') {
    return 'csv';
  }
  if (extension === '.tsv' || extension === '.tab') {
    return 'tsv';
  }
  throw new PolyadicError(
    'usage',
    `--via duckdb reads Parquet (.parquet), CSV (.csv) and TSV (.tsv, .tab) files; '${filePath}' is none of them. ` +
      'Convert it, or leave out --via.',
    { option: '--via', value: filePath }
  );
}

/** The header names of a CSV/TSV file, parsed as the in-memory reader parses them (and checked). */
export async function delimitedHeader(filePath: string, format: 'csv' | 'tsv'): Promise<string[]> {
  const label = path.basename(filePath);
  const delimiter = Private.delimiterOf(format);
  const decoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: false });
  let text = '';
  let handle: fs.FileHandle;
  try {
    handle = await fs.open(filePath, 'r');
  } catch (error) {
    throw new PolyadicError('input', `File '${filePath}' cannot be read (${errorMessage(error)}).`, { value: filePath });
  }
  try {
    const buffer = Buffer.alloc(1 << 16);
    for (;;) {
      const { bytesRead } = await handle.read(buffer, 0, buffer.length, null);
      const end = bytesRead === 0;
      try {
        text += end ? decoder.decode() : decoder.decode(buffer.subarray(0, bytesRead), { stream: true });
      } catch {
        throw new PolyadicError('input', `${label} is not UTF-8 text (it holds bytes that are not UTF-8).`, { value: label });
      }
      if (text.includes('\0')) {
        throw new PolyadicError('input', `${label} is not a text file (it holds binary data).`, { value: label });
      }
      const parsed = Papa.parse<string[]>(text, { delimiter, skipEmptyLines: true, header: false, preview: 1 });
      // the header is complete once the text goes on past it (or the file ends)
      if (parsed.data.length > 0 && (end || parsed.meta.cursor < text.length)) {
        const names = parsed.data[0];
        checkHeaderNames(names, label);
        return names;
      }
      if (end) {
        throw new PolyadicError('input', `${label} is empty: it has no header row and no data.`, { line: 1 });
      }
    }
  } finally {
    await handle.close();
  }
}

/** A staged Parquet copy of a CSV/TSV file and how to remove it. */
export interface IStagedText {
  /** The temporary Parquet file (typed columns, the text's rows in order). */
  parquet: string;
  /** Data rows of the text file. */
  rows: number;
  /** Remove the temporary directory. */
  remove(): Promise<void>;
}

/**
 * Read a CSV/TSV file with DuckDB, classify and convert its columns as the in-memory reader does
 * and write them to a temporary Parquet file (see the file comment). Errors name the line, the
 * column or DuckDB's own message.
 */
export async function stageDelimitedText(connection: Connection, filePath: string, format: 'csv' | 'tsv'): Promise<IStagedText> {
  const label = path.basename(filePath);
  const names = await delimitedHeader(filePath, format);
  await Private.refuseSpaceBeforeQuote(filePath, format, label);
  const read =
    `read_csv(${Private.quoteString(filePath)}, delim = ${Private.quoteString(Private.delimiterOf(format))}, ` +
    `quote = '"', escape = '"', header = true, auto_detect = false, strict_mode = true, null_padding = false, ` +
    `columns = {${names.map((_name, i) => `'c${i}': 'VARCHAR'`).join(', ')}})`;
  const ws = Private.WHITESPACE;
  const decimal = TEXT_CELL_PATTERNS.decimal.source.slice(1, -1);
  const special = TEXT_CELL_PATTERNS.special.source.slice(1, -1);
  const numberPattern = Private.quoteString(`${ws}*(?:${decimal}|(?i:${special}))${ws}*`);
  const booleanPattern = Private.quoteString(`(?i:${TEXT_CELL_PATTERNS.boolean.source.slice(1, -1)})`);
  const missing = (i: number): string => `(c${i} IS NULL OR regexp_full_match(c${i}, ${Private.quoteString(`${ws}*`)}))`;
  const tallies = names
    .map(
      (_name, i) =>
        `count(*) FILTER (WHERE NOT ${missing(i)}), ` +
        `count(*) FILTER (WHERE NOT ${missing(i)} AND NOT regexp_full_match(c${i}, ${booleanPattern})), ` +
        `count(*) FILTER (WHERE NOT ${missing(i)} AND NOT regexp_full_match(c${i}, ${numberPattern})), ` +
        `count(*) FILTER (WHERE c${i} IS NULL)`
    )
    .join(', ');
  let counts: number[];
  try {
    const result = await connection.runAndReadAll(`SELECT count(*), ${tallies} FROM ${read}`);
    counts = (result.getRowsJS()[0] as unknown[]).map(Number);
  } catch (error) {
    throw new PolyadicError('input', `DuckDB cannot read '${label}' as ${format.toUpperCase()}: ${Private.firstLines(errorMessage(error))}`, {
      value: label
    });
  }
  const rows = counts[0];
  if (rows === 0) {
    throw new PolyadicError('input', `${label} has a header row but no data rows.`, { line: 2 });
  }
  if (names.length === 1 && counts[4] > 0) {
    throw new PolyadicError(
      'input',
      `${label} has one column and empty lines or empty fields: the in-memory reader skips an empty line and DuckDB ` +
        'reads it as an empty field, and with one column they cannot be told apart; remove the empty lines, or leave out --via.',
      { column: names[0] }
    );
  }
  const selects = names.map((name, i) => {
    const [present, notBoolean, notNumber] = counts.slice(1 + 4 * i, 4 + 4 * i);
    const cell = `c${i}`;
    let value: string;
    if (present > 0 && notBoolean === 0) {
      value = `lower(${cell}) = 'true'`;
    } else if (notNumber === 0) {
      const core = `regexp_extract(${cell}, ${Private.quoteString(`^${ws}*((?s).*?)${ws}*$`)}, 1)`;
      value =
        `CASE WHEN regexp_full_match(${core}, '(?i)[+-]?nan') THEN CAST('NaN' AS DOUBLE) ` +
        `WHEN regexp_full_match(${core}, '(?i)\\+?inf(inity)?') THEN CAST('inf' AS DOUBLE) ` +
        `WHEN regexp_full_match(${core}, '(?i)-inf(inity)?') THEN CAST('-inf' AS DOUBLE) ` +
        `ELSE CAST(${core} AS DOUBLE) END`;
    } else {
      value = cell;
    }
    return `CASE WHEN ${missing(i)} THEN NULL ELSE ${value} END AS ${Private.quoteName(name)}`;
  });
  const dir = await fs.mkdtemp(path.join(os.tmpdir(), 'polyadic-csv-'));
  const remove = (): Promise<void> => fs.rm(dir, { recursive: true, force: true });
  const parquet = path.join(dir, 'staged.parquet');
  try {
    await connection.run(`COPY (SELECT ${selects.join(', ')} FROM ${read}) TO ${Private.quoteString(parquet)} (FORMAT parquet)`);
  } catch (error) {
    await remove();
    throw new PolyadicError('input', `DuckDB cannot convert '${label}': ${Private.firstLines(errorMessage(error))}`, { value: label });
  }
  return { parquet, rows, remove };
}

namespace Private {
  /**
   * JavaScript's `String.prototype.trim` whitespace as an RE2 class (ECMAScript's WhiteSpace and
   * LineTerminator: tab, VT, FF, BOM, every Zs space, LF, CR, LS, PS).
   */
  export const WHITESPACE = '[\\t\\n\\x{0B}\\f\\r\\x{FEFF}\\x{2028}\\x{2029}\\p{Zs}]';

  /** The field delimiter of a format, as the in-memory reader uses it. */
  export function delimiterOf(format: 'csv' | 'tsv'): string {
    return format === 'tsv' ? '\t' : ',';
  }

  /** A SQL string literal. */
  export function quoteString(text: string): string {
    return `'${text.replace(/'/g, "''")}'`;
  }

  /** A SQL identifier in double quotes. */
  export function quoteName(name: string): string {
    return `"${name.replace(/"/g, '""')}"`;
  }

  /** DuckDB's message up to its list of fixes (which name DuckDB's options, not ours). */
  export function firstLines(message: string): string {
    return message.split(/\n\s*Possible fixes:/)[0].replace(/\s+/g, ' ').trim();
  }

  /**
   * Stream the file once and refuse a field that starts with spaces or tabs before a quote (at
   * the start of a line or after a delimiter), naming the line. Conservative: the same bytes
   * inside a quoted field are refused too.
   */
  export async function refuseSpaceBeforeQuote(filePath: string, format: 'csv' | 'tsv', label: string): Promise<void> {
    const delimiter = delimiterOf(format) === '\t' ? '\\t' : ',';
    const blank = format === 'tsv' ? ' ' : ' \\t';
    const pattern = new RegExp(`[${delimiter}\\n\\r][${blank}]+"`);
    const tail = new RegExp(`[${delimiter}\\n\\r][${blank}]*$`);
    const newlines = (text: string): number => text.match(/\n/g)?.length ?? 0;
    // a line break before the file, so that its first field is one after a break
    let carry = '\n';
    let line = 0;
    for await (const chunk of createReadStream(filePath, { encoding: 'latin1', highWaterMark: 1 << 20 })) {
      const text = carry + (chunk as string);
      const found = pattern.exec(text);
      if (found) {
        const at = line + newlines(text.slice(0, found.index + 1));
        throw new PolyadicError(
          'input',
          `${label}, line ${at}: a field starts with spaces before its opening quote; the in-memory reader keeps such a ` +
            'field as text, quotes and all, and DuckDB drops the spaces and the quotes, so --via duckdb refuses it. ' +
            'Remove the spaces before the quote, or leave out --via.',
          { line: at }
        );
      }
      const kept = tail.exec(text);
      line += newlines(text);
      carry = kept ? kept[0] : '';
      line -= newlines(carry);
    }
  }
}
