/**
 * Data file readers of the CLI (Node): CSV/TSV text, Arrow IPC (file or stream) and Parquet,
 * each turned into the engine's column views. The file's extension decides the format; a file
 * that is not what its extension says is refused with a message that says so.
 */

import { promises as fs } from 'fs';
import * as path from 'path';

import * as arrow from 'apache-arrow';
import { parquetMetadataAsync, parquetRead, parquetSchema } from 'hyparquet';
import type { AsyncBuffer, FileMetaData, ParquetParsers, SchemaTree } from 'hyparquet';
import Papa from 'papaparse';

import { errorMessage, PolyadicError } from '../engine/errors';
import {
  checkUniqueNames,
  columnFromTextCells,
  columnFromValues,
  columnLength,
  columnsFromArrow,
  unknownColumn
} from '../engine/table';
import { plural } from '../engine/text';
import type { ColumnView } from '../engine/types';

/** File formats the CLI reads. */
export type DataFormat = 'csv' | 'tsv' | 'arrow' | 'parquet';

/** Extensions of each format (lower case, with the dot). */
export const FORMAT_EXTENSIONS: Readonly<Record<DataFormat, readonly string[]>> = {
  csv: ['.csv'],
  tsv: ['.tsv', '.tab'],
  arrow: ['.arrow', '.feather', '.arrows', '.ipc'],
  parquet: ['.parquet']
};

/** Options of a read. */
export interface IReadOptions {
  /** Columns to return, in this order; default all. Unknown names are refused. */
  columns?: string[];
}

/** What a reader returns: the selected columns and what the file held. */
export interface IDataSource {
  format: DataFormat;
  /** Every column name of the file, in file order. */
  names: string[];
  /** Number of data rows. */
  rows: number;
  /** The selected columns. */
  columns: ColumnView[];
  /** For text formats: the one-based line where a zero-based data row starts. */
  lineOfRow?: (row: number) => number;
}

/** The format a path's extension names, or a usage error listing the known extensions. */
export function dataFormatOf(filePath: string): DataFormat {
  const extension = path.extname(filePath).toLowerCase();
  for (const [format, extensions] of Object.entries(FORMAT_EXTENSIONS)) {
    if (extensions.includes(extension)) {
      return format as DataFormat;
    }
  }
  const known = Object.values(FORMAT_EXTENSIONS).flat().join(', ');
  throw new PolyadicError(
    'usage',
    `Cannot tell the format of '${filePath}' from its extension '${extension || '(none)'}'; ` +
      `use one of ${known}.`,
    { value: filePath }
  );
}

/** Read a data file in the format its extension names. */
export async function readDataFile(filePath: string, options: IReadOptions = {}): Promise<IDataSource> {
  const format = dataFormatOf(filePath);
  const label = path.basename(filePath);
  if (format === 'parquet') {
    // Parquet is read a row group at a time from the open file, never as one buffer.
    const handle = await Private.openFile(filePath);
    try {
      const stat = await handle.stat();
      return await readParquetBuffer(Private.fileBuffer(handle, stat.size), label, options);
    } finally {
      await handle.close();
    }
  }
  const bytes = await Private.readBytes(filePath);
  switch (format) {
    case 'csv':
    case 'tsv':
      return readDelimitedText(Private.decodeText(bytes, label), format, label, options);
    case 'arrow':
      return readArrowBytes(bytes, label, options);
  }
}

/**
 * Read CSV or TSV text with a header row. Blank lines are skipped; every other row must have
 * as many fields as the header (the error names the line). See `columnFromTextCells` for how
 * a column becomes numeric or categorical.
 */
export function readDelimitedText(
  text: string,
  format: 'csv' | 'tsv',
  label: string,
  options: IReadOptions = {}
): IDataSource {
  const delimiter = format === 'tsv' ? '\t' : ',';
  const parsed = Papa.parse<string[]>(text, { delimiter, skipEmptyLines: true, header: false });
  const rows = parsed.data;
  if (rows.length === 0) {
    throw new PolyadicError('input', `${label} is empty: it has no header row and no data.`, {
      line: 1
    });
  }
  const quoteError = parsed.errors.find(error => error.type === 'Quotes');
  if (quoteError) {
    const line = Private.lineOfRow(text, delimiter, quoteError.row ?? 0);
    throw new PolyadicError(
      'input',
      `${label}, line ${line}: ${quoteError.message.toLowerCase()} (a quote opened and never closed).`,
      { line }
    );
  }
  const names = rows[0];
  checkHeaderNames(names, label);
  if (rows.length === 1) {
    throw new PolyadicError('input', `${label} has a header row but no data rows.`, { line: 2 });
  }
  for (let r = 1; r < rows.length; r++) {
    if (rows[r].length !== names.length) {
      const line = Private.lineOfRow(text, delimiter, r);
      throw new PolyadicError(
        'input',
        `${label}, line ${line}: ${rows[r].length} fields where the header has ${names.length}.`,
        { line, row: r - 1, value: String(rows[r].length) }
      );
    }
  }
  const selected = Private.selectNames(names, options.columns);
  const rowCount = rows.length - 1;
  const columns = selected.map(name => {
    const index = names.indexOf(name);
    const cells = new Array<string>(rowCount);
    for (let r = 0; r < rowCount; r++) {
      cells[r] = rows[r + 1][index];
    }
    return columnFromTextCells(name, cells);
  });
  const lineOfRow = (row: number): number => Private.lineOfRow(text, delimiter, row + 1);
  return { format, names, rows: rowCount, columns, lineOfRow };
}

/** Refuse a CSV/TSV header with an unnamed or a repeated column (the error names it). */
export function checkHeaderNames(names: readonly string[], label: string): void {
  names.forEach((name, index) => {
    if (name.trim() === '') {
      throw new PolyadicError(
        'input',
        `${label}, line 1: column ${index + 1} of the header has no name; give every column a name.`,
        { line: 1, column: `#${index + 1}` }
      );
    }
  });
  checkUniqueNames(names);
}

/** Read Arrow IPC bytes (file or stream format, uncompressed). */
export function readArrowBytes(bytes: Uint8Array, label: string, options: IReadOptions = {}): IDataSource {
  let table: arrow.Table;
  try {
    table = arrow.tableFromIPC(bytes);
  } catch (error) {
    const reason = errorMessage(error);
    if (/compress/i.test(reason)) {
      throw new PolyadicError(
        'input',
        `${label} is a compressed Arrow file; write it uncompressed (pyarrow: compression='uncompressed').`,
        { value: label }
      );
    }
    throw Private.notFormat(label, 'an Arrow IPC file or stream', reason);
  }
  if (table.schema.fields.length === 0) {
    throw Private.notFormat(label, 'an Arrow IPC file or stream', 'no schema found');
  }
  const names = table.schema.fields.map(field => field.name);
  checkUniqueNames(names);
  if (table.numRows === 0) {
    throw new PolyadicError('input', `${label} has columns but no rows.`, {});
  }
  const selected = Private.selectNames(names, options.columns);
  return { format: 'arrow', names, rows: table.numRows, columns: columnsFromArrow(table, selected) };
}

/**
 * Read Parquet bytes: flat columns of numbers, strings, booleans, decimals (as float64) and
 * dates/timestamps (as integers in their stored unit). Nested columns are refused.
 */
export async function readParquetBytes(
  bytes: Uint8Array,
  label: string,
  options: IReadOptions = {}
): Promise<IDataSource> {
  const buffer = bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer;
  return readParquetBuffer(buffer, label, options);
}

/**
 * Read Parquet from a buffer that hands out byte ranges (a file or bytes in memory), one row
 * group at a time. A float64 column is written straight into one Float64Array of the file's
 * length, so the peak is the columns themselves plus one row group's decoded values; other
 * columns keep their row-group parts until the end.
 */
async function readParquetBuffer(file: AsyncBuffer, label: string, options: IReadOptions): Promise<IDataSource> {
  let metadata: FileMetaData;
  let schema: SchemaTree;
  try {
    metadata = await parquetMetadataAsync(file, { parsers: Private.PARQUET_PARSERS });
    schema = parquetSchema(metadata);
  } catch (error) {
    throw Private.notFormat(label, 'a Parquet file', errorMessage(error));
  }
  const names = schema.children.map(child => child.element.name);
  checkUniqueNames(names);
  const rows = Number(metadata.num_rows);
  if (rows === 0) {
    throw new PolyadicError('input', `${label} has columns but no rows.`, {});
  }
  const selected = Private.selectNames(names, options.columns);
  const dtypes = new Map<string, string>();
  for (const name of selected) {
    dtypes.set(name, Private.parquetDtype(schema.children[names.indexOf(name)]));
  }
  const doubles = new Map<string, Private.DoubleColumn>();
  const chunks = new Map<string, { rowStart: number; data: ArrayLike<unknown> }[]>();
  for (const name of selected) {
    if (dtypes.get(name) === 'float64') {
      doubles.set(name, new Private.DoubleColumn(name, rows));
    } else {
      chunks.set(name, []);
    }
  }
  try {
    let groupStart = 0;
    for (const group of metadata.row_groups) {
      const groupEnd = groupStart + Number(group.num_rows);
      await parquetRead({
        file,
        metadata,
        columns: selected,
        rowStart: groupStart,
        rowEnd: groupEnd,
        parsers: Private.PARQUET_PARSERS,
        onChunk: chunk => {
          const double = doubles.get(chunk.columnName);
          if (double) {
            double.write(chunk.rowStart, chunk.columnData);
          } else {
            chunks.get(chunk.columnName)?.push({ rowStart: chunk.rowStart, data: chunk.columnData });
          }
        }
      });
      groupStart = groupEnd;
    }
  } catch (error) {
    if (error instanceof PolyadicError) {
      throw error;
    }
    throw Private.notFormat(label, 'a readable Parquet file', errorMessage(error));
  }
  const columns = selected.map(name => {
    const double = doubles.get(name);
    let column: ColumnView;
    if (double) {
      column = double.view();
    } else {
      const parts = chunks.get(name)!.sort((a, b) => a.rowStart - b.rowStart);
      const values = parts.length === 1 ? parts[0].data : Private.concatParts(parts.map(part => part.data));
      column = columnFromValues(name, values, dtypes.get(name));
    }
    const length = double ? double.written : columnLength(column);
    if (length !== rows) {
      throw new PolyadicError(
        'input',
        `${label}: column '${name}' has ${plural(length, 'value')} where the file has ${plural(rows, 'row')}.`,
        { column: name }
      );
    }
    return column;
  });
  return { format: 'parquet', names, rows, columns };
}

/** Module-private helpers. */
namespace Private {
  /** Keep dates and timestamps as integers in their stored unit (the dtype names the unit). */
  export const PARQUET_PARSERS: Partial<ParquetParsers> = {
    timestampFromMilliseconds: (millis: bigint) => millis,
    timestampFromMicroseconds: (micros: bigint) => micros,
    timestampFromNanoseconds: (nanos: bigint) => nanos,
    dateFromDays: (days: number) => days
  };

  /** Read a whole file, turning file-system errors into input errors naming the path. */
  export async function readBytes(filePath: string): Promise<Uint8Array> {
    try {
      return await fs.readFile(filePath);
    } catch (error) {
      throw fileError(filePath, error);
    }
  }

  /** Open a file for reading, with the same errors as {@link readBytes}. */
  export async function openFile(filePath: string): Promise<fs.FileHandle> {
    try {
      const handle = await fs.open(filePath, 'r');
      const stat = await handle.stat();
      if (stat.isDirectory()) {
        await handle.close();
        throw Object.assign(new Error('is a directory'), { code: 'EISDIR' });
      }
      return handle;
    } catch (error) {
      throw fileError(filePath, error);
    }
  }

  /** A file-system error as an input error naming the path. */
  function fileError(filePath: string, error: unknown): PolyadicError {
    const code = (error as NodeJS.ErrnoException).code;
    const reason =
      code === 'ENOENT'
        ? 'does not exist'
        : code === 'EISDIR'
          ? 'is a directory, not a file'
          : code === 'EACCES'
            ? 'cannot be read (permission denied)'
            : `cannot be read (${(error as Error).message})`;
    return new PolyadicError('input', `File '${filePath}' ${reason}.`, { value: filePath });
  }

  /** Byte ranges of an open file, read on demand (hyparquet's AsyncBuffer). */
  export function fileBuffer(handle: fs.FileHandle, size: number): AsyncBuffer {
    return {
      byteLength: size,
      async slice(start: number, end: number = size): Promise<ArrayBuffer> {
        const out = new Uint8Array(Math.max(0, end - start));
        let at = 0;
        while (at < out.length) {
          const { bytesRead } = await handle.read(out, at, out.length - at, start + at);
          if (bytesRead === 0) {
            throw new Error(`the file ended at byte ${start + at} of ${size}`);
          }
          at += bytesRead;
        }
        return out.buffer;
      }
    };
  }

  /**
   * A float64 column filled a chunk at a time: the same view {@link columnFromValues} makes of
   * the whole column (a null is NaN and marked missing; NaN itself is a value).
   */
  export class DoubleColumn {
    constructor(
      readonly name: string,
      rows: number
    ) {
      this._values = new Float64Array(rows);
    }

    /** Values written so far. */
    written = 0;

    write(rowStart: number, data: ArrayLike<unknown>): void {
      const values = this._values;
      if (rowStart + data.length > values.length) {
        throw new PolyadicError(
          'input',
          `Column '${this.name}' has more values than the file has rows.`,
          { column: this.name }
        );
      }
      if (data instanceof Float64Array) {
        values.set(data, rowStart);
      } else {
        for (let i = 0; i < data.length; i++) {
          const value = data[i];
          if (value === null || value === undefined) {
            values[rowStart + i] = NaN;
            this._missing ??= new Uint8Array(values.length);
            this._missing[rowStart + i] = 1;
          } else if (typeof value === 'number') {
            values[rowStart + i] = value;
          } else {
            // not a float64 after all: the whole-column reader names the value and its row
            columnFromValues(this.name, [value], 'float64');
            values[rowStart + i] = Number(value);
          }
        }
      }
      this.written += data.length;
    }

    view(): ColumnView {
      return { kind: 'numeric', name: this.name, dtype: 'float64', values: this._values, missing: this._missing };
    }

    private _values: Float64Array;
    private _missing: Uint8Array | null = null;
  }

  /** Decode UTF-8 text, refusing binary files (and naming the format they look like). */
  export function decodeText(bytes: Uint8Array, label: string): string {
    const head = bytes.subarray(0, 65536);
    if (head.includes(0)) {
      const magic = new TextDecoder('latin1').decode(bytes.subarray(0, 6));
      const looks = magic.startsWith('PAR1')
        ? ' (it looks like Parquet: name it .parquet)'
        : magic === 'ARROW1'
          ? ' (it looks like Arrow IPC: name it .arrow)'
          : '';
      throw notFormat(label, 'a text file', `it holds binary data${looks}`);
    }
    try {
      return new TextDecoder('utf-8', { fatal: true, ignoreBOM: false }).decode(bytes);
    } catch {
      throw notFormat(label, 'UTF-8 text', 'it holds bytes that are not UTF-8');
    }
  }

  /** The error for a file that is not the format its extension names. */
  export function notFormat(label: string, what: string, reason: string): PolyadicError {
    return new PolyadicError('input', `${label} is not ${what} (${reason.replace(/\s+/g, ' ').trim()}).`, {
      value: label
    });
  }

  /** The requested names (default all), each checked against the file's names. */
  export function selectNames(names: string[], requested: string[] | undefined): string[] {
    if (!requested) {
      return names;
    }
    for (const name of requested) {
      if (!names.includes(name)) {
        throw unknownColumn(name, names);
      }
    }
    return requested;
  }

  /**
   * One-based text line where data row `row` (0 = header) starts, found by re-parsing up to
   * that row; quoted fields may span lines, so the row index alone does not give the line.
   */
  export function lineOfRow(text: string, delimiter: string, row: number): number {
    let start = 0;
    let index = 0;
    Papa.parse<string[]>(text, {
      delimiter,
      skipEmptyLines: true,
      preview: row + 1,
      step: (result, parser) => {
        if (index === row) {
          parser.abort();
          return;
        }
        start = result.meta.cursor;
        index++;
      }
    });
    // the cursor stops after the previous row's line break; skipped blank lines follow it
    while (start < text.length && (text[start] === '\n' || text[start] === '\r')) {
      start++;
    }
    let line = 1;
    for (let i = 0; i < start; i++) {
      if (text.charCodeAt(i) === 10) {
        line++;
      }
    }
    return line;
  }

  /** Parquet's schema as a dtype name; nested and unreadable columns are refused. */
  export function parquetDtype(node: SchemaTree): string {
    const { element } = node;
    const logical = element.logical_type;
    const converted = element.converted_type;
    const refuse = (what: string): never => {
      throw new PolyadicError(
        'input',
        `Column '${element.name}' has Parquet type ${what}, which Polyadic cannot read; ` +
          'convert it to a number, a string, a boolean or a category first.',
        { column: element.name, value: what }
      );
    };
    if (node.children.length > 0 || element.repetition_type === 'REPEATED') {
      return refuse(logical?.type ?? converted ?? 'group (nested)');
    }
    if (logical?.type === 'TIMESTAMP') {
      return `timestamp[${{ MILLIS: 'ms', MICROS: 'us', NANOS: 'ns' }[logical.unit]}${logical.isAdjustedToUTC ? ', tz=UTC' : ''}]`;
    }
    if (converted === 'TIMESTAMP_MILLIS') return 'timestamp[ms]';
    if (converted === 'TIMESTAMP_MICROS') return 'timestamp[us]';
    if (element.type === 'INT96') return 'timestamp[ns]';
    if (logical?.type === 'DATE' || converted === 'DATE') return 'date32[day]';
    if (logical?.type === 'DECIMAL' || converted === 'DECIMAL') {
      return `decimal(${element.precision ?? '?'}, ${element.scale ?? 0})`;
    }
    if (logical?.type === 'INTEGER') {
      return `${logical.isSigned ? 'int' : 'uint'}${logical.bitWidth}`;
    }
    if (logical?.type === 'FLOAT16') return 'float16';
    if (logical?.type === 'STRING' || logical?.type === 'ENUM' || converted === 'UTF8') return 'string';
    if (logical && ['JSON', 'BSON', 'UUID', 'INTERVAL', 'VARIANT', 'GEOMETRY', 'GEOGRAPHY', 'TIME'].includes(logical.type)) {
      return refuse(logical.type);
    }
    if (converted && ['JSON', 'BSON', 'INTERVAL', 'TIME_MILLIS', 'TIME_MICROS'].includes(converted)) {
      return refuse(converted);
    }
    switch (element.type) {
      case 'BOOLEAN':
        return 'bool';
      case 'INT32':
        return 'int32';
      case 'INT64':
        return 'int64';
      case 'FLOAT':
        return 'float32';
      case 'DOUBLE':
        return 'float64';
      case 'BYTE_ARRAY':
        return 'string';
      default:
        return refuse(element.type ?? 'unknown');
    }
  }

  /** Join the row-group parts of a column (typed arrays of one kind stay typed). */
  export function concatParts(parts: ArrayLike<unknown>[]): ArrayLike<unknown> {
    const total = parts.reduce((sum, part) => sum + part.length, 0);
    const first = parts[0];
    const sameTyped =
      ArrayBuffer.isView(first) && parts.every(part => part.constructor === first.constructor);
    if (sameTyped) {
      const Typed = first.constructor as new (length: number) => { set(a: ArrayLike<unknown>, o: number): void };
      const out = new Typed(total);
      let at = 0;
      for (const part of parts) {
        out.set(part, at);
        at += part.length;
      }
      return out as unknown as ArrayLike<unknown>;
    }
    const out = new Array<unknown>(total);
    let at = 0;
    for (const part of parts) {
      for (let i = 0; i < part.length; i++) {
        out[at++] = part[i];
      }
    }
    return out;
  }
}
