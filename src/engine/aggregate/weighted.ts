/**
 * Weighted distinct rows: what an engine that scans the rows (DuckDB, Spark) hands over after
 * binning and `GROUP BY` of every selected column. Each distinct joint row of codes comes with
 * the number of input rows that have it; counts of every multiplet, hence every entropy, follow
 * from these alone (DESIGN.md §3, weighted rows).
 */

import { applyMissingPolicy, IBinnedColumn, IPreparedCodes } from '../binning';
import { droppedRowsWarning, nothingLeftError } from '../binning/missing';
import type { MissingPolicy } from '../types';

/** Prepared codes over distinct rows, with the number of input rows behind each (see IPreparedCodes.weights). */
export interface IWeightedCodes extends IPreparedCodes {
  weights: Int32Array;
}

/**
 * The missing-value policy over binned columns whose codes are one per distinct row (−1 =
 * missing) with `weights` input rows each; `missingCount` and `firstMissingRow` of each column
 * count input rows. Messages are those of {@link applyMissingPolicy}.
 */
export function applyWeightedMissingPolicy(
  columns: IBinnedColumn[],
  weights: Int32Array,
  policy: MissingPolicy
): IWeightedCodes {
  let rows = 0;
  for (let i = 0; i < weights.length; i++) {
    rows += weights[i];
  }
  if (policy === 'drop' && weights.length > 0 && !Private.anyComplete(columns)) {
    // the message counts the input's rows, not the distinct ones
    throw nothingLeftError(rows, columns);
  }
  const prepared = applyMissingPolicy(columns, policy);
  if (prepared.rowIndex === null) {
    return { ...prepared, rows, rowsUsed: rows, weights };
  }
  // `drop` kept the distinct rows with no missing code.
  const kept = new Int32Array(prepared.rowIndex.length);
  let rowsUsed = 0;
  prepared.rowIndex.forEach((row, j) => {
    kept[j] = weights[row];
    rowsUsed += weights[row];
  });
  return {
    ...prepared,
    rows,
    rowsUsed,
    rowIndex: null,
    weights: kept,
    warnings: [droppedRowsWarning(rows, rowsUsed)]
  };
}

namespace Private {
  /** Whether some distinct row has a code in every column. */
  export function anyComplete(columns: IBinnedColumn[]): boolean {
    const rows = columns.length ? columns[0].codes.length : 0;
    for (let i = 0; i < rows; i++) {
      if (columns.every(column => column.codes[i] >= 0)) {
        return true;
      }
    }
    return false;
  }
}
