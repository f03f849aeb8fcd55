/**
 * The summary a record keeps of an analysis: the most synergistic and most redundant
 * multiplets and the order histograms of co-information. The same functions build the summary
 * of a new record and of a re-run in `polyadic verify`, so the two agree bit for bit when the
 * engine does.
 */

import { binIndexByEdges } from '../engine/binning';
import { linspace } from '../engine/floatmath';
import type { IMultipletRow } from '../engine/types';
import type { IMultipletSummary, IOrderHistogram } from './types';

/** Multiplets kept on each side (synergy, redundancy) of a summary by default. */
export const DEFAULT_SUMMARY_SIZE = 10;

/** Most bins of an order histogram. */
export const MAX_HISTOGRAM_BINS = 20;

/** The measures a summary keeps of a multiplet. */
export function multipletSummary(row: IMultipletRow): IMultipletSummary {
  return {
    columns: [...row.columns],
    order: row.order,
    entropy: row.entropy,
    coinformation: row.coinformation,
    total_correlation: row.total_correlation,
    dual_total_correlation: row.dual_total_correlation,
    o_information: row.o_information
  };
}

/**
 * The `size` most negative co-information multiplets of order ≥ 2 (synergy, most negative
 * first) and the `size` most positive (redundancy, most positive first). A multiplet with zero
 * co-information is on neither side. Ties keep the input order.
 */
export function topMultiplets(
  rows: readonly IMultipletRow[],
  size: number = DEFAULT_SUMMARY_SIZE
): { synergy: IMultipletSummary[]; redundancy: IMultipletSummary[] } {
  const higher = rows.filter(row => row.order >= 2);
  const synergy = higher
    .filter(row => row.coinformation < 0)
    .sort((a, b) => a.coinformation - b.coinformation)
    .slice(0, size)
    .map(multipletSummary);
  const redundancy = higher
    .filter(row => row.coinformation > 0)
    .sort((a, b) => b.coinformation - a.coinformation)
    .slice(0, size)
    .map(multipletSummary);
  return { synergy, redundancy };
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
      byOrder[row.order].push(row.coinformation);
    }
  }
  const out: IOrderHistogram[] = [];
  for (let k = 2; k <= maxOrder; k++) {
    out.push(orderHistogram(k, byOrder[k]));
  }
  return out;
}
