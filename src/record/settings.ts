/**
 * From a record back to settings: the engine options that re-run an analysis exactly (the
 * panel restores them when a record is chosen; `polyadic verify` re-runs with them), and how
 * the current data differs from the recorded fingerprint (the panel's "data changed" banner).
 */

import { DEFAULT_MAX_MULTIPLETS } from '../engine/multiplets';
import type { IStatisticsOptions } from '../engine/statistics/options';
import type { IAnalyzeOptions } from '../engine/types';
import type { IFingerprint } from './fingerprint';
import type { IAnalysisRecord, IDataComparison } from './types';

export type { IDataComparison } from './types';

/**
 * The engine options of a recorded analysis: its selection, each column's binning spec, the
 * missing-value policy, the estimator, the units and the maximum order. The multiplet limit is
 * raised to the recorded count when that is above the default, so a recorded run always fits.
 */
export function optionsFromRecord(analysis: IAnalysisRecord): IAnalyzeOptions {
  return {
    columns: [...analysis.columns],
    binsByColumn: Object.fromEntries(analysis.binning.map(binning => [binning.name, binning.spec])),
    missing: analysis.missing,
    estimator: analysis.estimator,
    units: analysis.units,
    maxOrder: analysis.max_order,
    maxMultiplets: Math.max(DEFAULT_MAX_MULTIPLETS, analysis.summary.multiplet_count)
  };
}

/**
 * The statistics options that re-run a recorded analysis' evidence exactly: its surrogates,
 * seed, bootstrap resamples, tail, level, pairwise-preserving null (multiplets per table and
 * draws) and sharpening, in the engine's names; undefined when the analysis computed none.
 * The panel restores only {@link optionsFromRecord}; `polyadic verify` adds these.
 */
export function statisticsOptionsFromRecord(analysis: IAnalysisRecord): IStatisticsOptions | undefined {
  const settings = analysis.statistics;
  if (!settings) {
    return undefined;
  }
  return {
    surrogates: settings.surrogates,
    seed: settings.seed,
    bootstrap: settings.bootstrap,
    tail: settings.tail,
    alpha: settings.alpha,
    beyondPairs: settings.beyond_pairs,
    fitDraws: settings.fit_draws,
    sharpen: settings.sharpen
  };
}

/**
 * Compare the fingerprint of the current data (the recorded columns, in the recorded order)
 * with the record's.
 */
export function compareFingerprint(analysis: IAnalysisRecord, current: IFingerprint): IDataComparison {
  const digests = new Map(current.columns.map(column => [column.name, column.sha256]));
  const changedColumns: string[] = [];
  const missingColumns: string[] = [];
  for (const column of analysis.source.columns) {
    const now = digests.get(column.name);
    if (now === undefined) {
      missingColumns.push(column.name);
    } else if (column.sha256 !== undefined && column.sha256 !== now) {
      changedColumns.push(column.name);
    }
  }
  return {
    same: current.encoding === analysis.source.fingerprint.encoding && current.sha256 === analysis.source.fingerprint.sha256,
    changedColumns,
    missingColumns
  };
}
