/**
 * Weighted distinct rows: what an engine that scans the rows (DuckDB, Spark) hands over after
 * binning and `GROUP BY` of every selected column. Each distinct joint row of codes comes with
 * the number of input rows that have it; counts of every multiplet, hence every entropy, follow
 * from these alone (DESIGN.md §3, weighted rows).
 */

import { applyMissingPolicy, IBinnedColumn, IPreparedCodes } from '../binning';
import { droppedRowsWarning } from '../binning/missing';
import { PolyadicError } from '../errors';
import type { MissingPolicy } from '../types';

/** Prepared codes over distinct rows, with the number of input rows behind each. */
export interface IWeightedCodes extends IPreparedCodes {
  /** Input rows per distinct row (all ≥ 1); `rowsUsed` is their sum. */
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

/**
 * Plain prepared codes, one row per input row, from weighted distinct rows: each distinct row
 * repeated as often as its weight, in distinct-row order. The entropies do not depend on the row
 * order. For walks that take no weights; the memory is that of the codes of every kept row.
 */
export function expandWeighted(weighted: IWeightedCodes): IPreparedCodes {
  const { weights } = weighted;
  const total = weighted.rowsUsed;
  if (!Number.isSafeInteger(total) || total > 2 ** 31 - 1) {
    throw new PolyadicError('limit', `${total} rows are too many to expand for a walk without weights.`);
  }
  const codes = weighted.codes.map(source => {
    const out = new Int32Array(total);
    let at = 0;
    for (let i = 0; i < source.length; i++) {
      out.fill(source[i], at, at + weights[i]);
      at += weights[i];
    }
    return out;
  });
  const { weights: _weights, ...plain } = weighted;
  return { ...plain, codes };
}
