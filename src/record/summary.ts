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
  // One pass keeping the `size` best of each side in order: a full lattice has hundreds of
  // thousands of rows, and sorting them all for ten would hold the page.
  const synergy = new Private.Best(size, -1);
  const redundancy = new Private.Best(size, 1);
  for (const row of rows) {
    if (row.order < 2) {
      continue;
    }
    if (row.co_information < 0) {
      synergy.offer(row);
    } else if (row.co_information > 0) {
      redundancy.offer(row);
    }
  }
  return { synergy: synergy.kept.map(multipletSummary), redundancy: redundancy.kept.map(multipletSummary) };
}


namespace Private {
  /**
   * The `size` rows of largest `sign · co_information` offered, largest first; of equal values
   * the one offered first comes first (as a stable sort followed by a cut would keep them).
   */
  export class Best {
    constructor(
      private readonly _size: number,
      private readonly _sign: number
    ) {}

    /** The rows kept, best first. */
    readonly kept: IMultipletRow[] = [];

    /** Keep `row` if it is among the best so far. */
    offer(row: IMultipletRow): void {
      const kept = this.kept;
      const value = this._sign * row.co_information;
      if (kept.length >= this._size && (this._size <= 0 || value <= this._sign * kept[kept.length - 1].co_information)) {
        return;
      }
      // after every kept row at least as good: ties keep the order of offer
      let low = 0;
      let high = kept.length;
      while (low < high) {
        const middle = (low + high) >> 1;
        if (this._sign * kept[middle].co_information >= value) {
          low = middle + 1;
        } else {
          high = middle;
        }
      }
      kept.splice(low, 0, row);
      if (kept.length > this._size) {
        kept.pop();
      }
    }
  }
}
