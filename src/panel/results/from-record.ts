/**
 * A results view from a recorded analysis: after a reload the run's full result is gone, but the
 * notebook's record keeps its strongest multiplets, its order histograms and its evidence, which
 * is what a restored view shows until the analysis is run again.
 */
import type { IAnalysisResult, IMultipletRow, IStatisticsReport } from '../../engine/types';
import type { IAnalysisRecord, IMultipletSummary } from '../../record/types';

/**
 * The result a record describes: its synergy and redundancy multiplets (once each), the
 * recorded counts, binning and evidence settings. Measures the record does not keep
 * (S-information) are NaN, which the tables show as blank.
 */
export function resultFromRecord(record: IAnalysisRecord): IAnalysisResult {
  const summary = record.summary;
  const seen = new Set<string>();
  const multiplets: IMultipletRow[] = [];
  for (const row of [...summary.synergy, ...summary.redundancy]) {
    const key = JSON.stringify(row.columns);
    if (!seen.has(key)) {
      seen.add(key);
      multiplets.push(Private.row(row));
    }
  }
  const result: IAnalysisResult = {
    engine: { ...record.engine },
    rows: record.source.rows,
    rows_used: summary.rows_used,
    units: record.units,
    estimator: record.estimator,
    max_order: record.max_order,
    columns: record.binning.map(column => ({
      name: column.name,
      bins: column.bins,
      binning: {
        method: column.method,
        spec: column.spec,
        ...(column.edges ? { edges: column.edges.slice() } : {}),
        ...(column.categories ? { categories: column.categories.slice() } : {}),
        ...(column.missing_code !== undefined ? { missing_code: column.missing_code } : {})
      }
    })),
    multiplets,
    multiplet_count: summary.multiplet_count,
    warnings: []
  };
  if (summary.inadequate_count !== undefined) {
    result.inadequate_count = summary.inadequate_count;
  }
  const statistics = record.statistics;
  const evidence = summary.evidence;
  if (statistics && evidence) {
    const report: IStatisticsReport = {
      surrogates: statistics.surrogates,
      seed: statistics.seed,
      tail: statistics.tail,
      bootstrap: statistics.bootstrap,
      alpha: statistics.alpha,
      interval_level: evidence.interval_level,
      families: evidence.families,
      null_bands: evidence.null_bands,
      sharpen: statistics.sharpen,
      sharpened: evidence.sharpened,
      bootstrap_multiplets: evidence.bootstrap_multiplets,
      beyond_pairs:
        statistics.beyond_pairs > 0
          ? {
              per_table: statistics.beyond_pairs,
              draws: statistics.fit_draws,
              fitted: evidence.fitted ?? 0,
              refused: evidence.refused ?? []
            }
          : null
    };
    result.statistics = report;
  }
  return result;
}

namespace Private {
  /** A table row from a recorded multiplet. */
  export function row(summary: IMultipletSummary): IMultipletRow {
    return { s_information: Number.NaN, ...summary, columns: summary.columns.slice() };
  }
}
