/**
 * The summary a record keeps of an analysis: the most synergistic and most redundant
 * multiplets and the order histograms of co-information. The same functions build the summary
 * of a new record and of a re-run in `polyadic verify`, so the two agree bit for bit when the
 * engine does.
 */

import { binIndexByEdges } from '../engine/binning';
import { linspace } from '../engine/floatmath';
import type { IMultipletRow, IStatisticsReport } from '../engine/types';
import { EVIDENCE_FIELDS } from '../results-format';
import type { IEvidenceSummary, IMultipletSummary, IOrderHistogram, IStatisticsSettings } from './types';

/** Multiplets kept on each side (synergy, redundancy) of a summary by default. */
export const DEFAULT_SUMMARY_SIZE = 10;

/** Most bins of an order histogram. */
export const MAX_HISTOGRAM_BINS = 20;

/**
 * The measures a summary keeps of a multiplet, and the evidence the engine computed for it
 * (adequacy, p, q, null, intervals, connected information); a value that is not a finite
 * number is kept as null, since JSON holds no NaN.
 */
export function multipletSummary(row: IMultipletRow): IMultipletSummary {
  const evidence: Record<string, number | null> = {};
  for (const field of EVIDENCE_FIELDS) {
    const value = row[field];
    if (value !== undefined) {
      evidence[field] = typeof value === 'number' && Number.isFinite(value) ? value : null;
    }
  }
  return {
    columns: [...row.columns],
    order: row.order,
    entropy: row.entropy,
    co_information: row.co_information,
    total_correlation: row.total_correlation,
    dual_total_correlation: row.dual_total_correlation,
    o_information: row.o_information,
    ...evidence
  };
}

/** The statistics settings a record keeps, from the engine's report of a run. */
export function statisticsSettingsOf(report: IStatisticsReport): IStatisticsSettings {
  return {
    surrogates: report.surrogates,
    seed: report.seed,
    bootstrap: report.bootstrap,
    tail: report.tail,
    alpha: report.alpha,
    beyond_pairs: report.beyond_pairs?.per_table ?? 0,
    fit_draws: report.beyond_pairs?.draws ?? 0,
    sharpen: report.sharpen
  };
}

/** What a record keeps of the evidence's scope, from the engine's report of a run. */
export function evidenceSummaryOf(report: IStatisticsReport): IEvidenceSummary {
  return {
    families: JSON.parse(JSON.stringify(report.families)),
    null_bands: report.null_bands.map(band => ({ ...band })),
    interval_level: report.interval_level,
    sharpened: report.sharpened,
    bootstrap_multiplets: report.bootstrap_multiplets,
    ...(report.beyond_pairs
      ? {
          fitted: report.beyond_pairs.fitted,
          refused: report.beyond_pairs.refused.map(refusal => ({ columns: [...refusal.columns], reason: refusal.reason }))
        }
      : {})
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
    .filter(row => row.co_information < 0)
    .sort((a, b) => a.co_information - b.co_information)
    .slice(0, size)
    .map(multipletSummary);
  const redundancy = higher
    .filter(row => row.co_information > 0)
    .sort((a, b) => b.co_information - a.co_information)
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
      byOrder[row.order].push(row.co_information);
    }
  }
  const out: IOrderHistogram[] = [];
  for (let k = 2; k <= maxOrder; k++) {
    out.push(orderHistogram(k, byOrder[k]));
  }
  return out;
}
