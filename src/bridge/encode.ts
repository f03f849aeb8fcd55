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
 * The multiplet table as an Arrow IPC stream: `columns` as List<Utf8>, `order` as Int32, the
 * measures as Float64. Further fields of the rows become Float64 columns after them: first
 * the evidence fields (adequacy, p, q, null, intervals, connected information) that any row
 * carries, in the CLI's CSV order ({@link EVIDENCE_FIELDS}), then any other field in order of
 * first appearance. A value a row lacks or holds as null (not computed for it) is an Arrow null.
 * Rows are checked first: the error names the row (0-based) and the field at fault.
 */
export function encodeMultiplets(rows: readonly IMultipletRow[]): Uint8Array {
  const extras = Private.checkRows(rows);
  const columns: Record<string, arrow.Vector> = {
    columns: arrow.vectorFromArray(
      rows.map(row => row.columns),
      new arrow.List(new arrow.Field('item', new arrow.Utf8(), false))
    ),
    order: arrow.makeVector(Int32Array.from(rows, row => row.order))
  };
  for (const name of MEASURES) {
    columns[name] = arrow.makeVector(Float64Array.from(rows, row => row[name]));
  }
  for (const name of extras) {
    columns[name] = arrow.vectorFromArray(
      rows.map(row => {
        // `name` is a field checkRows found on some row and checked to be a number or null.
        const value: unknown = Reflect.get(row, name);
        return typeof value === 'number' ? value : null;
      }),
      new arrow.Float64()
    );
  }
  return arrow.tableToIPC(new arrow.Table(columns), 'stream');
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

/** Module-private helpers. */
namespace Private {
  const KNOWN = new Set<string>(MULTIPLET_FIELDS);

  /**
   * Check every row; return the extra field names: the evidence fields in EVIDENCE_FIELDS
   * order, then the others in order of first appearance.
   */
  export function checkRows(rows: readonly IMultipletRow[]): string[] {
    const extras = new Set<string>();
    rows.forEach((row, index) => {
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
      for (const [name, value] of Object.entries(row)) {
        if (KNOWN.has(name)) {
          continue;
        }
        if (value !== null && value !== undefined && typeof value !== 'number') {
          throw bad(index, name, `must be a number or null, got ${describe(value)}`);
        }
        extras.add(name);
      }
    });
    const evidence = EVIDENCE_FIELDS.filter(name => extras.has(name));
    const known = new Set<string>(evidence);
    return [...evidence, ...[...extras].filter(name => !known.has(name))];
  }

  function bad(row: number, field: string | undefined, problem: string): BridgeError {
    const where = field === undefined ? `Multiplet row ${row}` : `Field '${field}' of multiplet row ${row}`;
    return new BridgeError('usage', `${where} ${problem}.`, { row, ...(field ? { field } : {}) });
  }

  function describe(value: unknown): string {
    return value === null ? 'null' : Array.isArray(value) ? 'a list' : typeof value;
  }
}
