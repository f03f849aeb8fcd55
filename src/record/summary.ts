/**
 * The summary a record keeps of an analysis: the most synergistic and most redundant
 * multiplets and the order histograms of co-information. The same functions build the summary
 * of a new record and of a re-run in `polyadic verify`, so the two agree bit for bit when the
 * engine does.
 */

import type { IMultipletRow, IStatisticsReport } from '../engine/types';
import { EVIDENCE_FIELDS } from '../results-format';
import type { IEvidenceSummary, IMultipletSummary, IStatisticsSettings } from './types';

/** Multiplets kept on each side (synergy, redundancy) of a summary by default. */
export const DEFAULT_SUMMARY_SIZE = 10;

// The order histograms are the engine's (engine/histogram.ts); re-exported for the record's callers.
export { histogramsOfRows, MAX_HISTOGRAM_BINS, orderHistogram } from '../engine/histogram';

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

