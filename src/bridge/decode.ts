/**
 * Fetched columns, from the pieces of an Arrow IPC stream to engine column views. Pure: no
 * kernel, no DOM, so jest drives it with fixture files written by the Python side.
 *
 * Memory: each piece is viewed, never copied; a numeric column that arrives in one record
 * batch stays a view of the piece's bytes (columnsFromArrow); a column spread over several
 * batches is copied once.
 */
import * as arrow from 'apache-arrow';

import { errorMessage, isPolyadicError } from '../engine/errors';
import { columnsFromArrow } from '../engine/table';
import { formatCount, plural } from '../engine/text';
import type { ColumnView, ICategoricalColumn } from '../engine/types';
import { BridgeError } from './errors';
import type { ColumnKind, IFetchChunk, IFetchDone, TimeUnit } from './protocol';

/** How one fetched column was encoded by the kernel, from the `fetch_done` message. */
export interface IFetchedField {
  /** Column name, as listed. */
  name: string;
  /** The source library's type name (pandas, polars or Arrow), e.g. 'Int64', 'category'. */
  dtype: string;
  /** How the kernel classified the column. */
  kind: Exclude<ColumnKind, 'other'>;
  /** Arrow type as sent, in pyarrow's spelling. */
  arrowType: string;
  /** Missing values in the sent rows. */
  nullCount: number;
  /** Resolution of a datetime or timedelta column ('day' for date32); otherwise null. */
  unit: TimeUnit | null;
  /** Time zone of an aware datetime column (values are UTC instants); otherwise null. */
  timezone: string | null;
}

/** The columns of one fetch, ready for the engine, with what the panel and the record state. */
export interface IFetchedFrame {
  /** Frame variable name in the kernel. */
  name: string;
  /**
   * One view per requested column, in request order. `dtype` is the source library's type
   * name; datetimes and timedeltas are counts of their field's `unit` (int64, or int32 days).
   */
  columns: ColumnView[];
  /** How each column was encoded, in the same order as `columns`. */
  fields: IFetchedField[];
  /** Rows received. */
  rows: number;
  /** Rows of the frame in the kernel. */
  originalRows: number;
  /** Whether `rows` is a seeded random sample of `originalRows` (row order kept). */
  sampled: boolean;
  /** Seed of numpy's `default_rng` that drew the sample (reported even when not sampled). */
  seed: number;
  /** Length of the IPC stream received. */
  bytes: number;
}

/** How far a fetch has come; reported after every piece. */
export interface IFetchProgress {
  /** Frame variable name. */
  frame: string;
  piecesReceived: number;
  pieceCount: number;
  bytesReceived: number;
  bytesTotal: number;
}

/** A comm buffer (JupyterLab hands them over as DataViews) as bytes, without copying. */
export function pieceBytes(buffer: unknown): Uint8Array {
  if (ArrayBuffer.isView(buffer)) {
    return new Uint8Array(buffer.buffer, buffer.byteOffset, buffer.byteLength);
  }
  // The tag test also accepts buffers of another realm (jest's vm context), where
  // `instanceof ArrayBuffer` is false.
  if (Object.prototype.toString.call(buffer) === '[object ArrayBuffer]') {
    return new Uint8Array(buffer as ArrayBuffer);
  }
  throw new BridgeError('protocol', 'A piece of the fetched data arrived without its bytes; fetch again.');
}

/** Decode the pieces of one IPC stream (concatenated in order, they are the stream). */
export function decodePieces(pieces: readonly Uint8Array[]): arrow.Table {
  if (pieces.length === 0) {
    throw new BridgeError('protocol', 'The kernel sent no data for the fetch; fetch again.');
  }
  try {
    return arrow.tableFromIPC(pieces as Uint8Array[]);
  } catch (error) {
    throw new BridgeError(
      'protocol',
      `The kernel's data is not a readable Arrow IPC stream (${Private.errorText(error)}); fetch again, ` +
        'and check that the polyadic package in the kernel matches this extension.'
    );
  }
}

/**
 * The fetched frame of a decoded table and its `fetch_done` message: checks that the table
 * holds the announced rows and columns, names each column's type as the user knows it, and
 * orders the categories of string columns by code unit (as the engine's other readers do),
 * while categoricals keep the order their library gave them.
 */
export function fetchedFrame(table: arrow.Table, done: IFetchDone, bytes?: number): IFetchedFrame {
  const frame = Private.text(done.name, 'name');
  const rows = Private.count(done.rows, 'rows');
  const originalRows = Private.count(done.original_rows, 'original_rows');
  const seed = Private.count(done.seed, 'seed');
  if (typeof done.sampled !== 'boolean') {
    throw Private.malformed('sampled');
  }
  if (!Array.isArray(done.columns)) {
    throw Private.malformed('columns');
  }
  const fields = done.columns.map(Private.field);
  const names = fields.map(field => field.name);
  const sent = table.schema.fields.map(field => field.name);
  if (sent.length !== names.length || sent.some((name, i) => name !== names[i])) {
    throw new BridgeError(
      'protocol',
      `The kernel announced the columns ${Private.quoteList(names)} but sent ${Private.quoteList(sent)}; fetch again.`,
      { frame }
    );
  }
  if (table.numRows !== rows) {
    throw new BridgeError(
      'protocol',
      `The kernel announced ${plural(rows, 'row')} of '${frame}' but sent ${formatCount(table.numRows)}; fetch again.`,
      { frame }
    );
  }
  let views: ColumnView[];
  try {
    views = columnsFromArrow(table, names);
  } catch (error) {
    if (isPolyadicError(error)) {
      throw new BridgeError('protocol', error.message, { frame, ...error.detail });
    }
    throw error;
  }
  const columns = views.map((view, i) => Private.adopt(view, fields[i], frame));
  return {
    name: frame,
    columns,
    fields,
    rows,
    originalRows,
    sampled: done.sampled,
    seed,
    bytes: bytes ?? Private.count(done.bytes_total, 'bytes_total')
  };
}

/**
 * Collects the pieces of one fetch in order, checking the counts the kernel announces, and
 * turns them into an {@link IFetchedFrame} when the `fetch_done` message arrives.
 */
export class FetchAssembler {
  /** Start collecting the pieces of a fetch of frame `frame`. */
  constructor(readonly frame: string) {}

  /** Pieces received so far. */
  get piecesReceived(): number {
    return this._accepted;
  }

  /** Take the next piece; returns the progress including it. */
  add(chunk: IFetchChunk, buffer: unknown): IFetchProgress {
    const { progress, piece } = this.accept(chunk, buffer);
    this._pieces.push(piece);
    return progress;
  }

  /**
   * Check the next piece and count it without keeping it (the caller passes its bytes on,
   * to a decoding worker); returns the progress including it and the piece's bytes.
   */
  accept(chunk: IFetchChunk, buffer: unknown): { progress: IFetchProgress; piece: Uint8Array } {
    const index = Private.count(chunk.batch_index, 'batch_index');
    const count = Private.count(chunk.batch_count, 'batch_count');
    const total = Private.count(chunk.bytes_total, 'bytes_total');
    if (index !== this._accepted) {
      throw new BridgeError(
        'protocol',
        `Piece ${index + 1} of '${this.frame}' arrived where piece ${this._accepted + 1} was expected; fetch again.`,
        { frame: this.frame }
      );
    }
    if ((this._count !== null && count !== this._count) || index >= count) {
      throw new BridgeError(
        'protocol',
        `The kernel changed the number of pieces of '${this.frame}' during the fetch; fetch again.`,
        { frame: this.frame }
      );
    }
    if (this._total !== null && total !== this._total) {
      throw new BridgeError(
        'protocol',
        `The kernel changed the size of '${this.frame}' during the fetch; fetch again.`,
        { frame: this.frame }
      );
    }
    const piece = pieceBytes(buffer);
    this._count = count;
    this._total = total;
    this._received += piece.byteLength;
    if (chunk.bytes_sent !== this._received || this._received > total) {
      throw new BridgeError(
        'protocol',
        `Bytes of '${this.frame}' were lost on the way (${this._received} received, ` +
          `${String(chunk.bytes_sent)} sent); fetch again.`,
        { frame: this.frame }
      );
    }
    this._accepted++;
    return {
      progress: {
        frame: this.frame,
        piecesReceived: this._accepted,
        pieceCount: count,
        bytesReceived: this._received,
        bytesTotal: total
      },
      piece
    };
  }

  /** Check that every announced piece and byte came, once the kernel says the fetch is done. */
  verify(done: Pick<IFetchDone, 'batch_count' | 'bytes_total'>): void {
    const count = Private.count(done.batch_count, 'batch_count');
    const total = Private.count(done.bytes_total, 'bytes_total');
    if (count !== this._accepted || total !== this._received) {
      throw new BridgeError(
        'protocol',
        `The fetch of '${this.frame}' ended after ${this._accepted} of ${count} pieces ` +
          `(${this._received} of ${total} bytes); fetch again.`,
        { frame: this.frame }
      );
    }
  }

  /** Decode the collected pieces once the kernel says the fetch is done. */
  finish(done: IFetchDone): IFetchedFrame {
    this.verify(done);
    return fetchedFrame(decodePieces(this._pieces), done, this._received);
  }

  private _pieces: Uint8Array[] = [];
  private _accepted = 0;
  private _received = 0;
  private _count: number | null = null;
  private _total: number | null = null;
}

/** Plural name of a time unit, for sentences. */
export function timeUnitName(unit: TimeUnit): string {
  return Private.UNIT_NAMES[unit];
}

/**
 * What the numbers of a datetime or timedelta column count, as a phrase the panel and the
 * record can state (e.g. "nanoseconds since 1970-01-01 00:00"); null for other columns.
 */
export function describeTimeUnit(field: IFetchedField): string | null {
  if (field.unit === null) {
    return null;
  }
  const unit = Private.UNIT_NAMES[field.unit];
  if (field.kind !== 'datetime') {
    return unit;
  }
  if (field.timezone !== null) {
    return `${unit} since 1970-01-01 00:00 UTC (time zone ${field.timezone})`;
  }
  return field.unit === 'day' ? `${unit} since 1970-01-01` : `${unit} since 1970-01-01 00:00`;
}

/** Module-private helpers. */
namespace Private {
  /** Plural names of the time units. */
  export const UNIT_NAMES: Record<TimeUnit, string> = {
    day: 'days',
    s: 'seconds',
    ms: 'milliseconds',
    us: 'microseconds',
    ns: 'nanoseconds'
  };

  const KINDS = new Set<string>(['numeric', 'categorical', 'string', 'bool', 'datetime', 'timedelta']);

  /** The error for a field of a kernel message that is missing or of the wrong type. */
  export function malformed(field: string): BridgeError {
    return new BridgeError(
      'protocol',
      `The kernel's reply has no valid '${field}'; check that the polyadic package in the kernel ` +
        'matches this extension, then fetch again.',
      { field }
    );
  }

  /** A whole number ≥ 0 from a kernel message. */
  export function count(value: unknown, field: string): number {
    if (typeof value !== 'number' || !Number.isSafeInteger(value) || value < 0) {
      throw malformed(field);
    }
    return value;
  }

  /** A string from a kernel message. */
  export function text(value: unknown, field: string): string {
    if (typeof value !== 'string') {
      throw malformed(field);
    }
    return value;
  }

  /** One column's encoding from the `columns` of a `fetch_done` message. */
  export function field(value: unknown, index: number): IFetchedField {
    if (typeof value !== 'object' || value === null) {
      throw malformed(`columns[${index}]`);
    }
    const entry = value as Record<string, unknown>;
    const kind = entry.kind;
    if (typeof kind !== 'string' || !KINDS.has(kind)) {
      throw malformed(`columns[${index}].kind`);
    }
    const timed = kind === 'datetime' || kind === 'timedelta';
    const unit = entry.unit;
    if (timed ? typeof unit !== 'string' || !(unit in UNIT_NAMES) : unit !== undefined && unit !== null) {
      throw malformed(`columns[${index}].unit`);
    }
    const timezone = entry.timezone;
    if (timezone !== undefined && timezone !== null && typeof timezone !== 'string') {
      throw malformed(`columns[${index}].timezone`);
    }
    return {
      name: text(entry.name, `columns[${index}].name`),
      dtype: text(entry.dtype, `columns[${index}].dtype`),
      kind: kind as IFetchedField['kind'],
      arrowType: text(entry.arrow_type, `columns[${index}].arrow_type`),
      nullCount: count(entry.null_count, `columns[${index}].null_count`),
      unit: timed ? (unit as TimeUnit) : null,
      timezone: typeof timezone === 'string' ? timezone : null
    };
  }

  /** A column view with its source dtype, checked against the announced kind. */
  export function adopt(view: ColumnView, field: IFetchedField, frame: string): ColumnView {
    const numeric = field.kind === 'numeric' || field.kind === 'datetime' || field.kind === 'timedelta';
    if (numeric !== (view.kind === 'numeric')) {
      throw new BridgeError(
        'protocol',
        `Column '${field.name}' of '${frame}' was announced as ${field.kind} but arrived as ${field.arrowType}; fetch again.`,
        { frame, column: field.name }
      );
    }
    if (view.kind === 'categorical' && field.kind === 'string') {
      return { ...sortedCategories(view), dtype: field.dtype };
    }
    return { ...view, dtype: field.dtype };
  }

  /** The same column with its categories in code-unit order and its codes renumbered. */
  export function sortedCategories(column: ICategoricalColumn): ICategoricalColumn {
    const { categories } = column;
    const order = categories
      .map((_, code) => code)
      .sort((a, b) => (categories[a] < categories[b] ? -1 : categories[a] > categories[b] ? 1 : 0));
    if (order.every((code, position) => code === position)) {
      return column;
    }
    const rank = new Int32Array(categories.length);
    order.forEach((code, position) => {
      rank[code] = position;
    });
    const codes = new Int32Array(column.codes.length);
    for (let i = 0; i < codes.length; i++) {
      const code = column.codes[i];
      codes[i] = code < 0 ? code : rank[code];
    }
    return { ...column, codes, categories: order.map(code => categories[code]) };
  }

  /** Column names as a quoted list, for messages. */
  export function quoteList(names: readonly string[]): string {
    return names.length === 0 ? '(none)' : names.map(name => `'${name}'`).join(', ');
  }

  /** The text of a thrown value. */
  export function errorText(error: unknown): string {
    return errorMessage(error);
  }
}
