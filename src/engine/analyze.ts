/**
 * One-call analysis: select columns, bin them, apply the missing-value policy, walk the lattice,
 * compute the measures and report the multiplets. Used by the CLI, the worker and verify; free of
 * I/O. The steps are exported too, so a worker pool can bin once, split the walk by first column
 * ({@link walkSubtree}) and finish with {@link analyzeCodes}.
 */

import { applyMissingPolicy, binColumn, IBinnedColumn, IPreparedCodes, parseBinSpec } from './binning';
import { checkChainRequests, chainsOfLattice, latticeSource } from './chains';
import { checkEstimator, fromNats } from './estimators';
import { PolyadicError } from './errors';
import { prepareCopulaColumns } from './copula/prepare';
import type { ILattice, ILatticeInput } from './lattice';
import { connectedInformation } from './maxent';
import { coinformationAll, computeMeasures, IMeasureArrays, multipletMeasures } from './measures';
import { checkMultipletCount, DEFAULT_MAX_MULTIPLETS, forEachMultiplet, membersOfIndex } from './multiplets';
import { chooseBootstrapped, concludeStatistics, IStatisticsOutcome } from './statistics/conclude';
import { IResolvedStatistics, resolveStatistics } from './statistics/options';
import { ISharpened, sharpenMultiplet } from './statistics/sharpen';
import {
  BOOTSTRAP_MEASURES,
  IReplicateTargets,
  ReplicateAccumulator,
  runAllReplicates
} from './statistics/replicates';
import { columnLength, unknownColumn } from './table';
import { isContinuousEstimator, walkLattice } from './walk';
import { formatCount, plural } from './text';
import type {
  ColumnView,
  EstimatorName,
  IAnalysisResult,
  IAnalyzeOptions,
  IMultipletRow,
  IStatisticsReport,
  MissingPolicy,
  Units
} from './types';
import { ENGINE_NAME, ENGINE_VERSION } from './version';

/** Largest number of columns for which the default maximum order is "all orders". */
export const ALL_ORDERS_UP_TO = 12;

/** Default maximum order above {@link ALL_ORDERS_UP_TO} columns. */
export const DEFAULT_MAX_ORDER = 3;

/** Options after checking, with every default filled in. */
export interface IResolvedOptions {
  estimator: EstimatorName;
  units: Units;
  missing: MissingPolicy;
  /** Effective maximum order (at most the number of selected columns). */
  maxOrder: number;
  maxMultiplets: number;
  top: number | null;
  /** Statistics settings, or null when none were asked for. */
  statistics: IResolvedStatistics | null;
  warnings: string[];
}

/** Analyze columns in one call (see the file comment). */
export function analyze(columns: ColumnView[], options: IAnalyzeOptions = {}): IAnalysisResult {
  return analyzeCodes(prepareColumns(columns, options), options);
}

/**
 * Select and bin the columns and apply the missing-value policy. Errors name the unknown or
 * repeated column, the bad spec, the missing value or the bad option.
 */
export function prepareColumns(columns: ColumnView[], options: IAnalyzeOptions = {}): IPreparedCodes {
  const available = columns.map(column => column.name);
  const seen = new Set<string>();
  for (const name of available) {
    if (seen.has(name)) {
      throw new PolyadicError('input', `Two input columns are named '${name}'; column names must be unique.`, {
        column: name
      });
    }
    seen.add(name);
  }
  const names = options.columns ?? available;
  if (names.length === 0) {
    throw new PolyadicError('usage', 'No column is selected; select at least one.', { option: 'columns' });
  }
  const chosen = new Set<string>();
  for (const name of names) {
    if (!seen.has(name)) {
      throw unknownColumn(name, available);
    }
    if (chosen.has(name)) {
      throw new PolyadicError('usage', `Column '${name}' is selected twice; select each column once.`, {
        column: name,
        option: 'columns'
      });
    }
    chosen.add(name);
  }
  const warnings: string[] = [];
  const perColumn = options.binsByColumn ?? {};
  for (const name of Object.keys(perColumn)) {
    if (!seen.has(name)) {
      const error = unknownColumn(name, available);
      throw new PolyadicError('usage', `The per-column binning names an unknown column: ${error.message}`, {
        ...error.detail,
        option: 'binsByColumn'
      });
    }
    if (!chosen.has(name)) {
      warnings.push(`A binning is given for column '${name}', which is not selected; it was not used.`);
    }
  }
  const continuous = isContinuousEstimator(checkEstimator(options.estimator ?? 'plugin'));
  const defaultSpec = options.bins === undefined || continuous ? undefined : parseBinSpec(options.bins);
  const missing = checkMissing(options.missing);
  const byName = new Map(columns.map(column => [column.name, column]));
  const selected = names.map(name => byName.get(name) as ColumnView);
  const rows = columnLength(selected[0]);
  for (const column of selected) {
    if (columnLength(column) !== rows) {
      throw new PolyadicError(
        'input',
        `Column '${column.name}' has ${plural(columnLength(column), 'row')} but '${selected[0].name}' has ${formatCount(rows)}.`,
        { column: column.name }
      );
    }
  }
  if (rows === 0) {
    throw new PolyadicError('input', 'The table has no rows.');
  }
  if (continuous) {
    // No binning: rank codes, from which the walk takes the normal scores (copula/prepare.ts).
    const prepared = prepareCopulaColumns(selected, {
      missing,
      bins: options.bins,
      binsByColumn: perColumn,
      pairs: options.maxOrder === undefined || options.maxOrder >= 2
    });
    prepared.warnings = [...warnings, ...prepared.warnings];
    return prepared;
  }
  const binned: IBinnedColumn[] = selected.map(column => {
    const text = perColumn[column.name];
    // The default spec is for numbers: a text or boolean column keeps its categories unless
    // its own spec says otherwise.
    const fallback = column.kind === 'numeric' ? defaultSpec : undefined;
    return binColumn(column, text !== undefined ? text : fallback);
  });
  for (const column of binned) {
    warnings.push(...column.warnings);
  }
  const prepared = applyMissingPolicy(binned, missing);
  prepared.warnings = [...warnings, ...prepared.warnings];
  return prepared;
}

/** Check the options against a number of selected columns and fill in the defaults. */
export function resolveOptions(options: IAnalyzeOptions, columnCount: number): IResolvedOptions {
  const warnings: string[] = [];
  const estimator = checkEstimator(options.estimator ?? 'plugin');
  const units = options.units ?? 'bits';
  if (units !== 'bits' && units !== 'nats') {
    throw new PolyadicError('usage', `Unknown units '${String(units)}'; use 'bits' or 'nats'.`, {
      option: 'units',
      value: String(units)
    });
  }
  const missing = checkMissing(options.missing);
  const maxMultiplets = options.maxMultiplets ?? DEFAULT_MAX_MULTIPLETS;
  if (!(maxMultiplets >= 1)) {
    throw new PolyadicError('usage', `The multiplet limit must be at least 1, not ${maxMultiplets}.`, {
      option: 'maxMultiplets',
      value: String(maxMultiplets)
    });
  }
  let maxOrder = options.maxOrder ?? (columnCount <= ALL_ORDERS_UP_TO ? columnCount : DEFAULT_MAX_ORDER);
  if (!(Number.isInteger(maxOrder) && maxOrder >= 1)) {
    throw new PolyadicError('usage', `The maximum order must be a whole number ≥ 1, not ${maxOrder}.`, {
      option: 'maxOrder',
      value: String(maxOrder)
    });
  }
  if (maxOrder > columnCount) {
    if (options.maxOrder !== undefined) {
      warnings.push(
        `The maximum order ${maxOrder} is above the ${plural(columnCount, 'selected column')}; ` +
          `order ${columnCount} is the largest computed.`
      );
    }
    maxOrder = columnCount;
  }
  let top: number | null = null;
  if (options.top !== undefined) {
    if (!(Number.isInteger(options.top) && options.top >= 1)) {
      throw new PolyadicError('usage', `'top' must be a whole number ≥ 1, not ${options.top}.`, {
        option: 'top',
        value: String(options.top)
      });
    }
    top = options.top;
  }
  const statistics = resolveStatistics(options.statistics);
  if (statistics && statistics.beyondPairs > 0 && isContinuousEstimator(estimator)) {
    throw new PolyadicError(
      'usage',
      'The pairwise-preserving null fits count tables, and under the Gaussian-copula estimator the maximum-entropy ' +
        'fit to a multiplet\'s (k−1)-column marginals is the Gaussian itself, so its connected information is zero by ' +
        'construction. Turn the pairwise-preserving null off, or use a discrete estimator for it.',
      { option: 'beyondPairs', value: String(statistics.beyondPairs) }
    );
  }
  return { estimator, units, missing, maxOrder, maxMultiplets, top, statistics, warnings };
}

/** The lattice input of prepared codes under the options (what a worker pool splits). */
export function latticeInput(prepared: IPreparedCodes, options: IAnalyzeOptions = {}): ILatticeInput {
  const resolved = resolveOptions(options, prepared.codes.length);
  Private.checkWeighted(prepared, resolved.estimator, resolved.statistics);
  return {
    codes: prepared.codes,
    bins: prepared.bins,
    ...(prepared.weights ? { weights: prepared.weights } : {}),
    maxOrder: resolved.maxOrder,
    estimator: resolved.estimator,
    maxMultiplets: resolved.maxMultiplets
  };
}

/**
 * Analyze columns that are already binned (see {@link prepareColumns}). A lattice computed
 * elsewhere (a worker pool) may be passed; it must come from the same codes and options. With
 * statistics requested, their replicates run in this thread unless `evidence` (merged and
 * concluded elsewhere, see {@link concludeRun}) is passed. With `withRows` false the result's
 * multiplets are left empty, to be made one at a time from the lattice ({@link multipletRows}).
 */
export function analyzeCodes(
  prepared: IPreparedCodes,
  options: IAnalyzeOptions = {},
  lattice?: ILattice,
  evidence?: IRunEvidence,
  withRows = true
): IAnalysisResult {
  const n = prepared.codes.length;
  const resolved = resolveOptions(options, n);
  const count = checkMultipletCount(n, resolved.maxOrder, resolved.maxMultiplets);
  Private.checkWeighted(prepared, resolved.estimator, resolved.statistics);
  // a chain naming a column that is not there fails before the walk, not after it
  checkChainRequests(options.chains ?? [], prepared.names, resolved.maxOrder);
  const walked = lattice ?? walkLattice(latticeInput(prepared, options));
  if (walked.indexing.maxOrder !== resolved.maxOrder || walked.indexing.columnCount !== n) {
    throw new PolyadicError('internal', 'The lattice given does not match the selection and maximum order.');
  }
  let found = evidence;
  if (!found && resolved.statistics) {
    const plan = planEvidence(prepared, options, walked);
    const accumulator = runAllReplicates(
      latticeInput(prepared, options),
      plan.targets,
      resolved.statistics,
      walked.indexing.size
    );
    found = concludeRun(prepared, options, walked, plan, accumulator);
  }
  const coinformation = found?.measures.coinformation ?? (withRows ? coinformationAll(walked) : new Float64Array(0));
  // without rows, the selection is made later, from the lattice (multipletRows)
  const selected = withRows ? selectMultiplets(walked, coinformation, resolved.top) : [];
  const units = resolved.units;
  const inUnits = (nats: number): number | null => (Number.isNaN(nats) ? null : fromNats(nats, units));
  // Adequacy counts possible joint cells of binned codes; the copula has none.
  const counted = !isContinuousEstimator(resolved.estimator);
  const bootstrapAt = new Map<number, number>();
  found?.outcome.evidence.bootstrapped.forEach((index, j) => bootstrapAt.set(index, j));
  const rowOf = Private.rowMaker(walked, coinformation, prepared.names, prepared.bins, prepared.rowsUsed, units, counted);
  const multiplets: IMultipletRow[] = !withRows
    ? []
    : selected.map(index => {
        const row = rowOf(index);
        if (found && resolved.statistics) {
          Private.addEvidence(row, index, found, resolved.statistics, bootstrapAt.get(index), inUnits);
        }
        return row;
      });
  let inadequate = 0;
  forEachMultiplet(walked.indexing, (_index, ids, order) => {
    if (order >= 2 && counted) {
      let cells = 1;
      for (let i = 0; i < order; i++) {
        cells *= prepared.bins[ids[i]];
      }
      if (prepared.rowsUsed < cells) {
        inadequate++;
      }
    }
  });
  const result: IAnalysisResult = {
    engine: { name: ENGINE_NAME, version: ENGINE_VERSION },
    rows: prepared.rows,
    rows_used: prepared.rowsUsed,
    units,
    estimator: resolved.estimator,
    max_order: resolved.maxOrder,
    columns: prepared.binnings,
    multiplets,
    multiplet_count: count,
    ...(counted ? { inadequate_count: inadequate } : {}),
    warnings: [...prepared.warnings, ...resolved.warnings, ...(found?.warnings ?? [])]
  };
  if (found && resolved.statistics) {
    result.statistics = Private.report(found, resolved.statistics, units);
  }
  if (options.chains && options.chains.length > 0) {
    result.chains = chainsOfLattice(latticeSource(walked, resolved.estimator), prepared.names, options.chains, units);
  }
  return result;
}

/** What a run's replicates need, computed once from the observed lattice (see {@link planEvidence}). */
export interface IEvidencePlan {
  measures: IMeasureArrays;
  targets: IReplicateTargets;
}

/** The evidence of a run, ready to be written into its rows. */
export interface IRunEvidence {
  measures: IMeasureArrays;
  outcome: IStatisticsOutcome;
  /** Connected information (nats) and its p-value by lattice index, for the multiplets fitted. */
  connected: Map<number, { value: number; pValue: number | null }>;
  /** Multiplets the pairwise-preserving null was refused for, with the reason. */
  refused: { columns: string[]; reason: string }[];
  warnings: string[];
}

/**
 * The observed measures and what the replicates compare against: step one of the statistics,
 * run where the lattice is (the worker that finishes a run, or this thread).
 */
export function planEvidence(prepared: IPreparedCodes, options: IAnalyzeOptions, lattice: ILattice): IEvidencePlan {
  const resolved = resolveOptions(options, prepared.codes.length);
  const measures = computeMeasures(lattice);
  const statistics = resolved.statistics;
  const reported = resolved.top === null ? null : selectMultiplets(lattice, measures.coinformation, resolved.top);
  const bootstrapped = chooseBootstrapped(
    lattice.indexing,
    measures.coinformation,
    statistics?.bootstrap ?? 0,
    reported
  );
  return {
    measures,
    targets: { coinformation: measures.coinformation, oInformation: measures.oInformation, bootstrapped }
  };
}

/**
 * The last step of the statistics: merged replicates into p, q, intervals and bands, and the
 * pairwise-preserving null of the most extreme multiplets of order ≥ 3.
 */
export function concludeRun(
  prepared: IPreparedCodes,
  options: IAnalyzeOptions,
  lattice: ILattice,
  plan: IEvidencePlan,
  accumulator: ReplicateAccumulator
): IRunEvidence {
  const resolved = resolveOptions(options, prepared.codes.length);
  const statistics = resolved.statistics;
  if (!statistics) {
    throw new PolyadicError('internal', 'Statistics concluded for an analysis that asked for none.');
  }
  const members = new Int32Array(lattice.indexing.maxOrder);
  const sharpen = (index: number): ISharpened => {
    const order = membersOfIndex(lattice.indexing, index, members);
    const ids = Array.from(members.subarray(0, order));
    return sharpenMultiplet(
      ids.map(c => prepared.codes[c]),
      ids.map(c => prepared.bins[c]),
      resolved.estimator,
      statistics.sharpen,
      // Its own stream per multiplet: a function of the seed and the multiplet alone.
      ((statistics.seed ^ 0x5a5a5a5a) + Math.imul(index, 0x85ebca6b)) >>> 0
    );
  };
  const outcome = concludeStatistics(lattice, plan.measures, accumulator, statistics, plan.targets.bootstrapped, sharpen);
  const warnings: string[] = [];
  const family = outcome.families.co_information;
  if (family && statistics.sharpen === 0) {
    // The smallest p is 1/(N + 1) (twice that two-sided), so no q can be below floor · m.
    const floor = (statistics.tail === 'two' ? 2 : 1) / (statistics.surrogates + 1);
    if (floor * family.count > statistics.alpha) {
      const needed = Math.ceil(((statistics.tail === 'two' ? 2 : 1) * family.count) / statistics.alpha);
      warnings.push(
        `With ${plural(statistics.surrogates, 'surrogate')} and ${plural(family.count, 'tested multiplet')}, no ` +
          `q-value can fall below ${statistics.alpha}: the smallest p-value is ${floor.toPrecision(3)}. Sharpen the ` +
          `p-values at their floor with at least ${formatCount(needed)} fresh surrogates, or use more surrogates.`
      );
    }
  }
  const connected = new Map<number, { value: number; pValue: number | null }>();
  const refused: { columns: string[]; reason: string }[] = [];
  if (statistics.beyondPairs > 0) {
    const chosen = Private.extremeOfOrder(lattice, plan.measures.coinformation, statistics.beyondPairs, 3);
    for (const index of chosen) {
      const order = membersOfIndex(lattice.indexing, index, members);
      const ids = Array.from(members.subarray(0, order));
      const names = ids.map(c => prepared.names[c]);
      try {
        const fit = connectedInformation(
          ids.map(c => prepared.codes[c]),
          // Each multiplet draws from its own stream, a function of the seed and its index alone.
          {
            names,
            draws: statistics.fitDraws,
            seed: (statistics.seed + Math.imul(index, 0x9e3779b1)) >>> 0,
            ...(prepared.weights ? { weights: prepared.weights } : {})
          }
        );
        connected.set(index, { value: fit.value, pValue: fit.pValue });
      } catch (error) {
        if (error instanceof PolyadicError && error.kind === 'limit') {
          refused.push({ columns: names, reason: error.message });
        } else {
          throw error;
        }
      }
    }
    if (refused.length > 0) {
      warnings.push(
        `The pairwise-preserving null was not fitted for ${refused.length} multiplet` +
          `${refused.length === 1 ? '' : 's'} whose joint table is too large; the first: ${refused[0].reason}`
      );
    }
  }
  return { measures: plan.measures, outcome, connected, refused, warnings };
}

/**
 * Indices of the multiplets to report, by order and then lexicographically; or, with `top`,
 * the `top` lowest co-informations of order ≥ 2 (lowest first) followed by the `top` highest
 * (highest first) that are not already among the lowest. Ties keep the order-then-lexicographic
 * order.
 */
export function selectMultiplets(lattice: ILattice, coinformation: Float64Array, top: number | null): number[] {
  const byOrder: number[][] = [];
  for (let k = 0; k <= lattice.indexing.maxOrder; k++) {
    byOrder.push([]);
  }
  const lowestOrder = top === null ? 1 : 2;
  forEachMultiplet(lattice.indexing, (index, _members, order) => {
    if (order >= lowestOrder) {
      byOrder[order].push(index);
    }
  });
  const all = byOrder.flat();
  if (top === null) {
    return all;
  }
  // Array sort is stable, so ties stay in order-then-lexicographic order.
  const lowest = all.slice().sort((a, b) => coinformation[a] - coinformation[b]).slice(0, top);
  const taken = new Set(lowest);
  const highest = all
    .slice()
    .sort((a, b) => coinformation[b] - coinformation[a])
    .slice(0, top)
    .filter(index => !taken.has(index));
  return [...lowest, ...highest];
}

function checkMissing(policy: MissingPolicy | undefined): MissingPolicy {
  const value = policy ?? 'drop';
  if (value !== 'drop' && value !== 'category' && value !== 'error') {
    throw new PolyadicError(
      'usage',
      `Unknown missing-value policy '${String(value)}'; use 'drop', 'category' or 'error'.`,
      { option: 'missing', value: String(value) }
    );
  }
  return value;
}

/**
 * The multiplet rows of a result computed without them (analyzeCodes with `withRows` false, no
 * statistics), one at a time from its lattice: the same rows, in the same order, as
 * analyzeCodes would have listed, without holding them all (the CLI streams its output so).
 */
export function* multipletRows(result: IAnalysisResult, lattice: ILattice, top: number | null): Generator<IMultipletRow> {
  if (result.statistics) {
    throw new PolyadicError('internal', 'Rows with evidence come with the result, not from the lattice.');
  }
  const coinformation = coinformationAll(lattice);
  const rowOf = Private.rowMaker(
    lattice,
    coinformation,
    result.columns.map(column => column.name),
    lattice.bins,
    result.rows_used,
    result.units,
    !isContinuousEstimator(result.estimator)
  );
  for (const index of selectMultiplets(lattice, coinformation, top)) {
    yield rowOf(index);
  }
}

namespace Private {
  /** The row of a multiplet (without evidence), by index. */
  export function rowMaker(
    lattice: ILattice,
    coinformation: Float64Array,
    names: string[],
    bins: number[],
    rowsUsed: number,
    units: Units,
    counted: boolean
  ): (index: number) => IMultipletRow {
    const members = new Int32Array(lattice.indexing.maxOrder);
    return index => {
      const order = membersOfIndex(lattice.indexing, index, members);
      const measures = multipletMeasures(lattice, members, order, coinformation);
      let cells = 1;
      for (let i = 0; i < order; i++) {
        cells *= bins[members[i]];
      }
      const row: IMultipletRow = {
        columns: Array.from(members.subarray(0, order), c => names[c]),
        order,
        entropy: fromNats(measures.entropy, units),
        co_information: fromNats(measures.coinformation, units),
        total_correlation: fromNats(measures.totalCorrelation, units),
        dual_total_correlation: fromNats(measures.dualTotalCorrelation, units),
        o_information: fromNats(measures.oInformation, units),
        s_information: fromNats(measures.sInformation, units)
      };
      if (counted) {
        row.adequacy = rowsUsed / cells;
      }
      return row;
    };
  }

  /**
   * Weighted rows (an aggregated source's distinct rows with counts) give the count estimators'
   * lattice exactly; what needs the rows one by one is refused with the reason.
   */
  export function checkWeighted(prepared: IPreparedCodes, estimator: EstimatorName, statistics: IResolvedStatistics | null): void {
    if (!prepared.weights) {
      return;
    }
    if (prepared.weights.length !== (prepared.codes[0]?.length ?? 0)) {
      throw new PolyadicError('internal', `${prepared.weights.length} row weights for ${prepared.codes[0]?.length ?? 0} rows.`);
    }
    if (isContinuousEstimator(estimator)) {
      throw new PolyadicError(
        'usage',
        'The Gaussian-copula estimator works from each row\'s values, and this source gives distinct binned rows with ' +
          'their counts. Choose a count estimator (plugin, miller-madow, chao-shen or shrinkage).',
        { option: 'estimator', value: estimator }
      );
    }
    // The bootstrap resamples the weights (multinomial.ts) and the pairwise-preserving null fits
    // count tables; surrogates (and sharpening, which draws fresh ones) shuffle each column's rows.
    for (const [key, value] of [
      ['sharpen', statistics?.sharpen ?? 0],
      ['surrogates', statistics?.surrogates ?? 0]
    ] as const) {
      if (value > 0) {
        throw new PolyadicError(
          'usage',
          `${key === 'surrogates' ? 'Independence surrogates' : 'Sharpening'} ${key === 'surrogates' ? 'shuffle' : 'draws fresh surrogates that shuffle'} ` +
            "each column's rows on its own, and this source gives distinct joint rows with their counts, which cannot be " +
            'shuffled column by column. Turn it off; the bootstrap and the pairwise-preserving null work on this source.',
          { option: key, value: String(value) }
        );
      }
    }
  }

  /** The `count` lowest and `count` highest co-informations among multiplets of order ≥ `least`. */
  export function extremeOfOrder(lattice: ILattice, coinformation: Float64Array, count: number, least: number): number[] {
    const candidates: number[] = [];
    forEachMultiplet(lattice.indexing, (index, _members, order) => {
      if (order >= least) {
        candidates.push(index);
      }
    });
    const ascending = candidates.slice().sort((a, b) => coinformation[a] - coinformation[b] || a - b);
    const chosen = new Set(ascending.slice(0, count));
    for (let i = ascending.length - 1, added = 0; i >= 0 && added < count; i--, added++) {
      chosen.add(ascending[i]);
    }
    return Array.from(chosen);
  }

  /** Write the evidence of multiplet `index` into its row (values in the result's units). */
  export function addEvidence(
    row: IMultipletRow,
    index: number,
    found: IRunEvidence,
    statistics: IResolvedStatistics,
    bootstrapRow: number | undefined,
    inUnits: (nats: number) => number | null
  ): void {
    const e = found.outcome.evidence;
    const orNull = (value: number): number | null => (Number.isNaN(value) ? null : value);
    if (statistics.surrogates > 0) {
      row.p_value = orNull(e.pValue[index]);
      row.q_value = orNull(e.qValue[index]);
      row.null_mean = inUnits(e.nullMean[index]);
      row.null_sd = inUnits(e.nullSd[index]);
      row.p_surrogates = orNull(e.pSurrogates[index]);
      row.co_information_corrected = Number.isNaN(e.nullMean[index])
        ? null
        : inUnits(found.measures.coinformation[index] - e.nullMean[index]);
      row.o_information_p_value = orNull(e.oPValue[index]);
      row.o_information_q_value = orNull(e.oQValue[index]);
      row.o_information_null_mean = inUnits(e.oNullMean[index]);
      row.o_information_null_sd = inUnits(e.oNullSd[index]);
    }
    if (statistics.bootstrap > 0) {
      const at = (measure: number, end: number): number | null =>
        bootstrapRow === undefined ? null : inUnits(e.intervals[(bootstrapRow * BOOTSTRAP_MEASURES.length + measure) * 2 + end]);
      row.ci_low = at(1, 0);
      row.ci_high = at(1, 1);
      row.same_sign = bootstrapRow === undefined ? null : orNull(e.sameSign[bootstrapRow]);
      row.entropy_ci_low = at(0, 0);
      row.entropy_ci_high = at(0, 1);
      row.total_correlation_ci_low = at(2, 0);
      row.total_correlation_ci_high = at(2, 1);
      row.dual_total_correlation_ci_low = at(3, 0);
      row.dual_total_correlation_ci_high = at(3, 1);
      row.o_information_ci_low = at(4, 0);
      row.o_information_ci_high = at(4, 1);
      row.s_information_ci_low = at(5, 0);
      row.s_information_ci_high = at(5, 1);
    }
    if (statistics.beyondPairs > 0) {
      const fit = found.connected.get(index);
      row.connected_information = fit ? inUnits(fit.value) : null;
      row.connected_p_value = fit ? fit.pValue : null;
    }
  }

  /** The statistics block of a result. */
  export function report(found: IRunEvidence, statistics: IResolvedStatistics, units: Units): IStatisticsReport {
    return {
      surrogates: statistics.surrogates,
      seed: statistics.seed,
      tail: statistics.tail,
      bootstrap: statistics.bootstrap,
      alpha: statistics.alpha,
      interval_level: 1 - statistics.alpha,
      families: found.outcome.families,
      null_bands: found.outcome.bands.map(band => ({
        order: band.order,
        low: fromNats(band.low, units),
        high: fromNats(band.high, units),
        mean: fromNats(band.mean, units),
        values: band.values
      })),
      sharpen: statistics.sharpen,
      sharpened: found.outcome.sharpened,
      bootstrap_multiplets: found.outcome.evidence.bootstrapped.length,
      beyond_pairs:
        statistics.beyondPairs > 0
          ? {
              per_table: statistics.beyondPairs,
              draws: statistics.fitDraws,
              fitted: found.connected.size,
              refused: found.refused
            }
          : null
    };
  }
}
