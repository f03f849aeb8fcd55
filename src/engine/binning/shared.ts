/** Helpers the numeric and the categorical binning share. */

import { PolyadicError } from '../errors';
import { plural } from '../text';
import type { BinMethod, ColumnView, IColumnBinning } from '../types';
import type { IBinnedColumn } from './types';

export function refuseAllMissing(column: ColumnView, rows: number): never {
  throw new PolyadicError(
    'input',
    rows === 0
      ? `Column '${column.name}' has no rows.`
      : `Column '${column.name}' has no value: all ${plural(rows, 'row')} are missing. Leave it out of the selection.`,
    { column: column.name }
  );
}

/** Result skeleton with codes −1 (missing) everywhere. */
export function emptyResult(
  column: ColumnView,
  rows: number,
  method: BinMethod,
  specText: string,
  missingCount: number,
  firstMissingRow: number
): IBinnedColumn {
  return {
    name: column.name,
    codes: new Int32Array(rows).fill(-1),
    bins: 0,
    binning: { name: column.name, bins: 0, binning: { method, spec: specText } },
    missingCount,
    firstMissingRow,
    warnings: []
  };
}

/** Number of codes in 0 … bins − 1 that some row has. */
export function occupiedCodes(codes: Int32Array, bins: number): number {
  const seen = new Uint8Array(bins);
  let occupied = 0;
  for (let i = 0; i < codes.length; i++) {
    const code = codes[i];
    if (code >= 0 && !seen[code]) {
      seen[code] = 1;
      occupied++;
    }
  }
  return occupied;
}

/** Order strings by Unicode code point (as Python's `sorted` does), not UTF-16 unit. */
export function compareCodePoints(a: string, b: string): number {
  const n = Math.min(a.length, b.length);
  for (let i = 0; i < n; i++) {
    const ca = a.charCodeAt(i);
    const cb = b.charCodeAt(i);
    if (ca !== cb) {
      const surrogateA = ca >= 0xd800 && ca <= 0xdfff;
      const surrogateB = cb >= 0xd800 && cb <= 0xdfff;
      if (surrogateA !== surrogateB) {
        // A surrogate pair encodes a code point above every BMP unit.
        return surrogateA ? 1 : -1;
      }
      return ca - cb;
    }
  }
  return a.length - b.length;
}

/** A deep copy of a column's binning (its edges and categories arrays are copied). */
export function copyBinning(binning: IColumnBinning): IColumnBinning {
  const inner = { ...binning.binning };
  if (inner.edges) {
    inner.edges = inner.edges.slice();
  }
  if (inner.categories) {
    inner.categories = inner.categories.slice();
  }
  return { ...binning, binning: inner };
}
