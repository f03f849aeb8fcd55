/**
 * The grouped table of a scan (scan-protocol.md, group step), from its Arrow IPC stream to
 * the key columns and weights the engine's scan driver bins: `k0`, `k1`, … in request order
 * (int32 bins, float64 values, utf8 texts; nulls are missing), then `weight` (int64 ≥ 1).
 * Pure: no kernel, no DOM; the frame worker runs it beside the fetch decoding.
 */
import * as arrow from 'apache-arrow';

import type { IScannedGroups, ScannedKeys } from '../engine/aggregate/scan';
import { formatCount } from '../engine/text';
import { BridgeError } from './errors';
import type { IScanDone } from './protocol';

/** Largest weight of one distinct row: the walk counts in Int32. */
const MAX_WEIGHT = 2 ** 31 - 1;

/** The key columns and weights of a decoded group table, checked against its `scan_done`. */
export function scannedGroups(table: arrow.Table, done: IScanDone): IScannedGroups {
  const fields = table.schema.fields;
  const frame = done.name;
  const bad = (why: string): never => {
    throw new BridgeError('protocol', `The grouped table of '${frame}' ${why}; run again.`, { frame });
  };
  if (fields.length < 1 || fields[fields.length - 1].name !== 'weight') {
    bad("has no 'weight' column last");
  }
  if (table.numRows !== done.distinct_rows) {
    bad(`has ${formatCount(table.numRows)} rows where the kernel announced ${formatCount(done.distinct_rows)}`);
  }
  const keys: ScannedKeys[] = [];
  for (let c = 0; c < fields.length - 1; c++) {
    const field = fields[c];
    if (field.name !== `k${c}`) {
      bad(`names its key column ${c + 1} '${field.name}' instead of 'k${c}'`);
    }
    keys.push(Private.keys(table.getChildAt(c) as arrow.Vector, field, bad));
  }
  const weightVector = table.getChildAt(fields.length - 1) as arrow.Vector;
  if (!arrow.DataType.isInt(weightVector.type) || weightVector.nullCount > 0) {
    bad('has a weight column that is not whole non-missing numbers');
  }
  const weights = new Int32Array(table.numRows);
  let total = 0;
  let i = 0;
  for (const value of weightVector) {
    const weight = Number(value);
    if (!(weight >= 1)) {
      bad(`has the weight ${String(value)} at row ${i}, where every weight is at least 1`);
    }
    if (weight > MAX_WEIGHT) {
      throw new BridgeError(
        'usage',
        `A distinct row of the scan of '${frame}' counts ${formatCount(weight)} rows, more than the walk counts in ` +
          `one row (${formatCount(MAX_WEIGHT)}); select more columns or use more bins.`,
        { frame, limit: 'weight' }
      );
    }
    weights[i++] = weight;
    total += weight;
  }
  if (total !== done.rows) {
    bad(`counts ${formatCount(total)} rows where the kernel scanned ${formatCount(done.rows)}`);
  }
  return { keys, weights };
}

namespace Private {
  /** One key column: its values as a typed array and its validity (Arrow's toArray ignores nulls). */
  export function keys(vector: arrow.Vector, field: arrow.Field, bad: (why: string) => never): ScannedKeys {
    const n = vector.length;
    const valid = vector.nullCount > 0 ? Uint8Array.from({ length: n }, (_v, i) => (vector.isValid(i) ? 1 : 0)) : null;
    const type = vector.type;
    if (arrow.DataType.isInt(type) && type.bitWidth === 32 && type.isSigned) {
      const codes = new Int32Array(n);
      for (let i = 0; i < n; i++) {
        codes[i] = valid === null || valid[i] ? (vector.get(i) as number) : -1;
      }
      return { kind: 'bins', codes, valid };
    }
    if (arrow.DataType.isFloat(type) && type.precision === arrow.Precision.DOUBLE) {
      const values = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        values[i] = valid === null || valid[i] ? (vector.get(i) as number) : 0;
      }
      return { kind: 'numbers', values, valid };
    }
    if (arrow.DataType.isUtf8(type) || arrow.DataType.isLargeUtf8(type)) {
      const values: (string | null)[] = new Array(n);
      for (let i = 0; i < n; i++) {
        values[i] = valid === null || valid[i] ? (vector.get(i) as string) : null;
      }
      return { kind: 'texts', values };
    }
    return bad(`has the key column '${field.name}' of type ${String(type)}, not int32, float64 or utf8`);
  }
}
