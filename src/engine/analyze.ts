/**
 * One-call analysis: select columns, bin them, apply the missing-value policy, walk the lattice,
 * compute the measures and report the multiplets. Used by the CLI, the worker and verify; free of
 * I/O. The steps are exported too, so a worker pool can bin once, split the walk by first column
 * ({@link walkSubtree}) and finish with {@link analyzeCodes}.
 */

import { applyMissingPolicy, binColumn, IBinnedColumn, IPreparedCodes, parseBinSpec } from './binning';
import { checkEstimator, fromNats } from './estimators';
import { PolyadicError } from './errors';
import { computeLattice, ILattice, ILatticeInput } from './lattice';
import { coinformationAll, multipletMeasures } from './measures';
import { checkMultipletCount, DEFAULT_MAX_MULTIPLETS, forEachMultiplet, membersOfIndex } from './multiplets';
import { columnLength, unknownColumn } from './table';
import { formatCount, plural } from './text';
import type {
  ColumnView,
  EstimatorName,
  IAnalysisResult,
  IAnalyzeOptions,
  IMultipletRow,
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
  const defaultSpec = options.bins === undefined ? undefined : parseBinSpec(options.bins);
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
  return { estimator, units, missing, maxOrder, maxMultiplets, top, warnings };
}

/** The lattice input of prepared codes under the options (what a worker pool splits). */
export function latticeInput(prepared: IPreparedCodes, options: IAnalyzeOptions = {}): ILatticeInput {
  const resolved = resolveOptions(options, prepared.codes.length);
  return {
    codes: prepared.codes,
    bins: prepared.bins,
    maxOrder: resolved.maxOrder,
    estimator: resolved.estimator,
    maxMultiplets: resolved.maxMultiplets
  };
}

/**
 * Analyze columns that are already binned (see {@link prepareColumns}). A lattice computed
 * elsewhere (a worker pool) may be passed; it must come from the same codes and options.
 */
export function analyzeCodes(
  prepared: IPreparedCodes,
  options: IAnalyzeOptions = {},
  lattice?: ILattice
): IAnalysisResult {
  const n = prepared.codes.length;
  const resolved = resolveOptions(options, n);
  const count = checkMultipletCount(n, resolved.maxOrder, resolved.maxMultiplets);
  const walked =
    lattice ??
    computeLattice({
      codes: prepared.codes,
      bins: prepared.bins,
      maxOrder: resolved.maxOrder,
      estimator: resolved.estimator,
      maxMultiplets: resolved.maxMultiplets
    });
  if (walked.indexing.maxOrder !== resolved.maxOrder || walked.indexing.columnCount !== n) {
    throw new PolyadicError('internal', 'The lattice given does not match the selection and maximum order.');
  }
  const coinformation = coinformationAll(walked);
  const selected = Private.selectMultiplets(walked, coinformation, resolved.top);
  const members = new Int32Array(resolved.maxOrder);
  const units = resolved.units;
  const multiplets: IMultipletRow[] = selected.map(index => {
    const order = membersOfIndex(walked.indexing, index, members);
    const measures = multipletMeasures(walked, members, order, coinformation);
    return {
      columns: Array.from(members.subarray(0, order), c => prepared.names[c]),
      order,
      entropy: fromNats(measures.entropy, units),
      coinformation: fromNats(measures.coinformation, units),
      total_correlation: fromNats(measures.totalCorrelation, units),
      dual_total_correlation: fromNats(measures.dualTotalCorrelation, units),
      o_information: fromNats(measures.oInformation, units),
      s_information: fromNats(measures.sInformation, units)
    };
  });
  return {
    engine: { name: ENGINE_NAME, version: ENGINE_VERSION },
    rows: prepared.rows,
    rows_used: prepared.rowsUsed,
    units,
    estimator: resolved.estimator,
    max_order: resolved.maxOrder,
    columns: prepared.binnings,
    multiplets,
    multiplet_count: count,
    warnings: [...prepared.warnings, ...resolved.warnings]
  };
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

namespace Private {
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
}
