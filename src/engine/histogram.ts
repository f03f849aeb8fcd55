/**
 * Order histograms of co-information: per order, the co-information of every multiplet of
 * that order binned into equal-width bars. The record keeps them, the results view and the
 * analysis cell draw them, `polyadic verify` re-derives them: all from this one function.
 */

import { binIndexByEdges } from './binning';
import { linspace } from './floatmath';
import type { IMultipletRow } from './types';

/** Most bins of an order histogram. */
export const MAX_HISTOGRAM_BINS = 20;

/** One order's histogram: bin edges (one more than the counts) and the multiplets per bin. */
export interface IOrderHistogram {
  order: number;
  edges: number[];
  counts: number[];
}

/**
 * Order histogram of some values (the co-information of every multiplet of one order), binned
 * as `numpy.histogram(values, bins)` does: equal-width edges from `numpy.linspace(min, max,
 * bins + 1)`, the last bin closed, and for a constant input the range widened by 0.5 on each
 * side (numpy's `_get_outer_edges`). The bin count is ⌈√n⌉ (the square-root choice), at most
 * {@link MAX_HISTOGRAM_BINS}.
 */
export function orderHistogram(order: number, values: ArrayLike<number>): IOrderHistogram {
  const n = values.length;
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < n; i++) {
    min = Math.min(min, values[i]);
    max = Math.max(max, values[i]);
  }
  if (n === 0) {
    min = 0;
    max = 0;
  }
  if (min === max) {
    min -= 0.5;
    max += 0.5;
  }
  const bins = Math.max(1, Math.min(MAX_HISTOGRAM_BINS, Math.ceil(Math.sqrt(n))));
  const edges = linspace(min, max, bins + 1);
  const counts = new Array<number>(bins).fill(0);
  for (let i = 0; i < n; i++) {
    const bin = binIndexByEdges(edges, values[i]);
    if (bin >= 0) {
      counts[bin]++;
    }
  }
  return { order, edges, counts };
}

/**
 * Order histograms of co-information for orders 2 … maxOrder from report rows, or `undefined`
 * when the rows are not every multiplet (a result cut to its top multiplets).
 */
export function histogramsOfRows(
  rows: readonly IMultipletRow[],
  multipletCount: number,
  maxOrder: number
): IOrderHistogram[] | undefined {
  if (rows.length !== multipletCount) {
    return undefined;
  }
  const byOrder: number[][] = [];
  for (let k = 0; k <= maxOrder; k++) {
    byOrder.push([]);
  }
  for (const row of rows) {
    if (row.order >= 2 && row.order <= maxOrder) {
      byOrder[row.order].push(row.co_information);
    }
  }
  const out: IOrderHistogram[] = [];
  for (let k = 2; k <= maxOrder; k++) {
    out.push(orderHistogram(k, byOrder[k]));
  }
  return out;
}
