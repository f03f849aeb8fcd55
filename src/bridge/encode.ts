/**
 * Multiplet tables on their way back to the kernel: rows → Arrow IPC stream → chunks small
 * enough for the Jupyter server, which refuses browser→kernel messages over 10 MiB.
 * The kernel decodes them with `polyadic._results.decode_multiplets`.
 */
import * as arrow from 'apache-arrow';

import type { IMultipletRow } from '../engine/types';
import { BridgeError } from './errors';
import { CoreMultipletField, EVIDENCE_FIELDS, MULTIPLET_FIELDS } from '../results-format';
import { RESULTS_CHUNK_MAX_BYTES } from './protocol';

/** The fields every multiplet row carries, in table order (polyadic/_results.py; the CLI's too). */
export { MULTIPLET_FIELDS };

/** The measure fields of a multiplet row: every field after `columns` and `order`. */
const MEASURES = MULTIPLET_FIELDS.slice(2) as ReadonlyArray<Exclude<CoreMultipletField, 'columns' | 'order'>>;

/**
 * A multiplet table column by column, in typed arrays only, so it moves to a worker by
 * transfer: each row's columns as indices into `names` (`members[memberStart[i]] …
 * members[memberStart[i + 1] - 1]`), the order, the measures, and further fields with a
 * presence flag per row (0: the row lacks the value or holds null).
 */
export interface IMultipletColumns {
  /** Rows of the table. */
  rows: number;
  /** The column names the multiplets are made of, each once. */
  names: string[];
  /** Start of each row's members in `members`; rows + 1 entries. */
  memberStart: Int32Array;
  /** Indices into `names`. */
  members: Int32Array;
  order: Int32Array;
  /** The measures, in {@link MULTIPLET_FIELDS} order. */
  measures: { name: string; values: Float64Array }[];
  /** Further fields in table order: evidence fields first, then others by first appearance. */
  extras: { name: string; values: Float64Array; present: Uint8Array }[];
}

/**
 * Reads multiplet rows into {@link IMultipletColumns}, a slice at a time, so a caller on the
 * main thread can yield between slices. Rows are checked as they are read: the error names the
 * row (0-based) and the field at fault.
 */
export class MultipletColumnsBuilder {
  /** Prepare for `rows` rows. */
  constructor(readonly rows: number) {
    this._order = new Int32Array(rows);
    this._memberStart = new Int32Array(rows + 1);
    this._members = new Int32Array(Math.max(16, rows * 2));
    this._measures = MEASURES.map(name => ({ name, values: new Float64Array(rows) }));
  }

  /** Rows read so far. */
  get done(): number {
    return this._next;
  }

  /** Read `rows[this.done]` up to (not including) `end`. */
  add(rows: readonly IMultipletRow[], end: number): void {
    const stop = Math.min(end, this.rows, rows.length);
    for (let index = this._next; index < stop; index++) {
      const row = rows[index];
      Private.checkRow(row, index);
      const names = row.columns;
      let at = this._memberStart[index];
      if (at + names.length > this._members.length) {
        const grown = new Int32Array(Math.max(this._members.length * 2, at + names.length));
        grown.set(this._members);
        this._members = grown;
      }
      for (const name of names) {
        let code = this._codes.get(name);
        if (code === undefined) {
          code = this._names.length;
          this._codes.set(name, code);
          this._names.push(name);
        }
        this._members[at++] = code;
      }
      this._memberStart[index + 1] = at;
      this._order[index] = row.order;
      for (let m = 0; m < MEASURES.length; m++) {
        this._measures[m].values[index] = row[MEASURES[m]];
      }
      for (const [name, value] of Object.entries(row)) {
        if (KNOWN.has(name)) {
          continue;
        }
        if (value !== null && value !== undefined && typeof value !== 'number') {
          throw Private.bad(index, name, `must be a number or null, got ${Private.describe(value)}`);
        }
        let extra = this._extras.get(name);
        if (extra === undefined) {
          extra = { name, values: new Float64Array(this.rows), present: new Uint8Array(this.rows) };
          this._extras.set(name, extra);
        }
        if (typeof value === 'number') {
          extra.values[index] = value;
          extra.present[index] = 1;
        }
      }
    }
    this._next = Math.max(this._next, stop);
  }

  /** The table; every row must have been read. */
  finish(): IMultipletColumns {
    if (this._next !== this.rows) {
      throw new BridgeError('usage', `Only ${this._next} of ${this.rows} multiplet rows were read.`);
    }
    const extras = [...this._extras.values()];
    const evidence = EVIDENCE_FIELDS.filter(name => this._extras.has(name));
    const first = new Set<string>(evidence);
    const ordered = [
      ...evidence.map(name => this._extras.get(name)!),
      ...extras.filter(extra => !first.has(extra.name))
    ];
    return {
      rows: this.rows,
      names: this._names,
      memberStart: this._memberStart,
      members: this._members.slice(0, this._memberStart[this.rows]),
      order: this._order,
      measures: this._measures,
      extras: ordered
    };
  }

  private _next = 0;
  private _order: Int32Array;
  private _memberStart: Int32Array;
  private _members: Int32Array;
  private _measures: { name: string; values: Float64Array }[];
  private _extras = new Map<string, { name: string; values: Float64Array; present: Uint8Array }>();
  private _codes = new Map<string, number>();
  private _names: string[] = [];
}

/** The typed arrays of a column-wise table, for a transfer list. */
export function multipletBuffers(table: IMultipletColumns): ArrayBuffer[] {
  const views: ArrayBufferView[] = [table.memberStart, table.members, table.order];
  for (const measure of table.measures) {
    views.push(measure.values);
  }
  for (const extra of table.extras) {
    views.push(extra.values, extra.present);
  }
  return [...new Set(views.map(view => view.buffer as ArrayBuffer))];
}

/**
 * The multiplet table as an Arrow IPC stream: `columns` as List<Utf8>, `order` as Int32, the
 * measures as Float64, further fields as Float64 with nulls where a row had no value. Built
 * straight from typed arrays (each name is UTF-8 encoded once), so it runs in a worker.
 */
export function encodeMultipletColumns(table: IMultipletColumns): Uint8Array {
  const { rows } = table;
  const encoder = new TextEncoder();
  const encoded = table.names.map(name => encoder.encode(name));
  const items = table.members.length;
  const offsets = new Int32Array(items + 1);
  let size = 0;
  for (let i = 0; i < items; i++) {
    size += encoded[table.members[i]].byteLength;
    offsets[i + 1] = size;
  }
  const text = new Uint8Array(size);
  for (let i = 0; i < items; i++) {
    text.set(encoded[table.members[i]], offsets[i]);
  }
  const utf8 = new arrow.Utf8();
  const item = arrow.makeData({ type: utf8, length: items, nullCount: 0, valueOffsets: offsets, data: text });
  const list = arrow.makeData({
    type: new arrow.List(new arrow.Field('item', utf8, false)),
    length: rows,
    nullCount: 0,
    valueOffsets: table.memberStart,
    child: item
  });
  const columns: Record<string, arrow.Vector> = {
    columns: arrow.makeVector(list),
    order: arrow.makeVector(table.order)
  };
  for (const measure of table.measures) {
    columns[measure.name] = arrow.makeVector(measure.values);
  }
  for (const extra of table.extras) {
    const bitmap = new Uint8Array((rows + 7) >> 3);
    let nulls = 0;
    for (let i = 0; i < rows; i++) {
      if (extra.present[i] === 1) {
        bitmap[i >> 3] |= 1 << (i & 7);
      } else {
        nulls++;
      }
    }
    columns[extra.name] = arrow.makeVector(
      arrow.makeData({
        type: new arrow.Float64(),
        length: rows,
        nullCount: nulls,
        data: extra.values,
        ...(nulls > 0 ? { nullBitmap: bitmap } : {})
      })
    );
  }
  return arrow.tableToIPC(new arrow.Table(columns), 'stream');
}

/**
 * The multiplet table as an Arrow IPC stream ({@link encodeMultipletColumns} of all rows at
 * once). Further fields of the rows become Float64 columns after the measures: first the
 * evidence fields (adequacy, p, q, null, intervals, connected information) that any row
 * carries, in the CLI's CSV order ({@link EVIDENCE_FIELDS}), then any other field in order of
 * first appearance. A value a row lacks or holds as null (not computed for it) is an Arrow null.
 * Rows are checked first: the error names the row (0-based) and the field at fault.
 */
export function encodeMultiplets(rows: readonly IMultipletRow[]): Uint8Array {
  const builder = new MultipletColumnsBuilder(rows.length);
  builder.add(rows, rows.length);
  return encodeMultipletColumns(builder.finish());
}

/**
 * Cut bytes into consecutive views of at most `limit` bytes each (no copies); the last may be
 * shorter. An empty input gives one empty chunk, so a chunk count is never 0.
 */
export function splitBytes(bytes: Uint8Array, limit: number = RESULTS_CHUNK_MAX_BYTES): Uint8Array[] {
  if (!Number.isSafeInteger(limit) || limit < 1) {
    throw new BridgeError('usage', `The chunk size must be a whole number of bytes ≥ 1, got ${limit}.`, {
      option: 'chunkBytes'
    });
  }
  const chunks: Uint8Array[] = [];
  for (let start = 0; start < bytes.byteLength; start += limit) {
    chunks.push(bytes.subarray(start, Math.min(start + limit, bytes.byteLength)));
  }
  return chunks.length > 0 ? chunks : [bytes.subarray(0, 0)];
}

const KNOWN = new Set<string>(MULTIPLET_FIELDS);

/** Module-private helpers. */
namespace Private {
  /** Check the core fields of one row. */
  export function checkRow(row: IMultipletRow, index: number): void {
    if (typeof row !== 'object' || row === null) {
      throw bad(index, undefined, 'is not an object');
    }
    const names: unknown = row.columns;
    if (!Array.isArray(names) || names.some(name => typeof name !== 'string')) {
      throw bad(index, 'columns', 'must be a list of column names');
    }
    if (!Number.isSafeInteger(row.order) || row.order !== names.length) {
      throw bad(index, 'order', `must be the number of columns (${names.length}), got ${String(row.order)}`);
    }
    for (const name of MEASURES) {
      if (typeof row[name] !== 'number') {
        throw bad(index, name, `must be a number, got ${describe(row[name])}`);
      }
    }
  }

  export function bad(row: number, field: string | undefined, problem: string): BridgeError {
    const where = field === undefined ? `Multiplet row ${row}` : `Field '${field}' of multiplet row ${row}`;
    return new BridgeError('usage', `${where} ${problem}.`, { row, ...(field ? { field } : {}) });
  }

  export function describe(value: unknown): string {
    return value === null ? 'null' : Array.isArray(value) ? 'a list' : typeof value;
  }
}
