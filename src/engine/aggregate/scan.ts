/**
 * Planning a scanned source: one driver for every engine that keeps the rows and scans them
 * (DuckDB from the CLI, a DuckDB relation or a Spark DataFrame in the kernel). The engine asks
 * a scanner three things, in this order: each column's facts (counts, extremes, levels), the
 * details a binning rule needs (exact order statistics, numpy's std and skewness, distinct
 * values), then the grouped binned table (the distinct joint keys with their counts). The
 * binning itself is decided here, by the same planNumeric/summaryNeeds/categorical checks the
 * in-memory engine uses, so the edges are the same bits; the keys are turned into codes, the
 * binned columns get the in-memory warnings (merged levels, occupancy) from weighted counts,
 * and the missing-value policy runs on the weighted rows.
 */

import { checkCategoricalSpec } from '../binning/categorical';
import { occupancyWarning } from '../binning/column';
import {
  INumericSummary,
  mergedLevelsWarning,
  NumericPlan,
  planNumeric,
  summaryNeeds
} from '../binning/numeric';
import { compareCodePoints, refuseAllMissing } from '../binning/shared';
import { formatBinSpec, MAX_BIN_COUNT, parseBinSpec } from '../binning/spec';
import type { IBinnedColumn } from '../binning/types';
import { PolyadicError } from '../errors';
import { formatCount } from '../text';
import type { IAnalyzeOptions, IBinSpec, MissingPolicy } from '../types';
import { applyWeightedMissingPolicy, IWeightedCodes } from './weighted';

/** Most distinct joint rows a scan hands to the walk by default (our choice: 5 million rows of 20 Int32 codes and a weight are about 420 MB). */
export const MAX_DISTINCT_ROWS = 5_000_000;

/** How a scanner reads a column (the kernel listing's kinds). */
export type ScannedKind = 'numeric' | 'bool' | 'string' | 'categorical' | 'datetime' | 'timedelta' | 'other';

/** The scanning engine and its version. */
export interface IScanEngine {
  name: string;
  version: string;
}

/** What a scan knows of one column before any binning (see the scan contract's IColumnFacts). */
export interface IScannedColumnFacts {
  name: string;
  /** The engine's (or the reader's) type name, as messages show it. */
  dtype: string;
  kind: ScannedKind;
  /** Nulls, plus NaN in float columns. */
  missingCount: number;
  /** 0-based row of the first missing value in the source's row order, −1 if none. */
  firstMissingRow: number;
  /** Non-missing values. */
  count: number;
  /** Distinct non-missing values, counted up to AUTO_MAX_LEVELS + 1. */
  levels: number;
  /** numpy would see an integer dtype. */
  integer: boolean;
  /** A 64-bit integer beyond ±2^53 changed when read as float64. */
  rounded: boolean;
  /** The first ±Inf in row order. */
  infinite: { row: number; value: number } | null;
  /** Over non-missing values (±Inf included); null for text or an all-missing column. */
  min: number | null;
  max: number | null;
}

/** The facts of a scan: the source's rows, its engine, and the asked columns in the asked order. */
export interface IScannedFacts {
  rows: number;
  engine: IScanEngine;
  columns: IScannedColumnFacts[];
}

/** What a binning rule needs of a numeric column beyond its facts (see summaryNeeds). */
export interface IScanDetailRequest {
  name: string;
  /** 0-based ranks among the non-missing values, ascending. */
  ranks: number[];
  std: boolean;
  skewness: boolean;
  distinct: boolean;
}

/** The answer to one {@link IScanDetailRequest}. */
export interface IScannedColumnDetails {
  name: string;
  /** The rank-th smallest non-missing value, per requested rank. */
  orderStatistics: number[];
  /** Exactly `numpy.std(x)` over the non-missing values in row order, or null if not asked. */
  std: number | null;
  /** Exactly `numpy.mean(((x − mean) / std) ** 3)`, or null if not asked or std is 0. */
  skewness: number | null;
  /** Distinct values ascending (−0 as 0) and the rows holding each, or null if not asked. */
  distinct: { values: Float64Array; counts: Float64Array } | null;
}

/**
 * One key of the grouped table: with `edges`, the bin of each value (numpy.histogram's rule,
 * −1 outside the edges); with `edges: null`, the value itself. `uniform` tells a scanner that
 * the edges are equal-width over [first, last] (it may then compute the bin as numpy does for
 * equal widths; both rules give the same bin).
 */
export interface IScanGroupKey {
  name: string;
  edges: number[] | null;
  uniform?: { first: number; last: number };
}

/** One key column of the grouped table, one entry per distinct row; `valid[i] === 0` (or a null text) is missing. */
export type ScannedKeys =
  | { kind: 'bins'; codes: Int32Array; valid: Uint8Array | null }
  | { kind: 'numbers'; values: Float64Array; valid: Uint8Array | null }
  | { kind: 'texts'; values: (string | null)[] };

/** The grouped table: the key columns in request order and each distinct row's count. */
export interface IScannedGroups {
  keys: ScannedKeys[];
  weights: Int32Array;
}

/** The first value outside [lo, hi] in row order, for the refusal of `edges:` (optional). */
export interface IOutsideValue {
  row: number;
  value: number;
}

/**
 * An engine that scans the rows: three steps of the scan contract (facts, details, group). A
 * scanner refuses a column it cannot read (naming it) and reports the engine's failures as
 * errors the user can read.
 */
export interface IColumnScanner {
  /** Words naming the source in messages, e.g. `fixture.parquet` or `'df'`. */
  readonly label: string;
  facts(columns: string[]): Promise<IScannedFacts>;
  details(requests: IScanDetailRequest[]): Promise<IScannedColumnDetails[]>;
  /** The grouped table, or null when it has more than `maxDistinctRows` distinct rows. */
  group(keys: IScanGroupKey[], maxDistinctRows: number): Promise<IScannedGroups | null>;
  /** The first value of `name` outside [lo, hi] in row order (scanners that can say where). */
  firstOutside?(name: string, lo: number, hi: number): Promise<IOutsideValue | null>;
}

/** How one selected column is binned from its scan. */
export interface IScanColumnPlan {
  name: string;
  dtype: string;
  kind: ScannedKind;
  /** The spec as the record keeps it. */
  specText: string;
  missingCount: number;
  firstMissingRow: number;
  /** Numeric binning, or null for text and boolean categories. */
  plan: NumericPlan | null;
  /** The key the group step computes for it. */
  key: IScanGroupKey;
}

/** A planned scan: the source's rows and engine, and each column's plan in selection order. */
export interface IScanPlan {
  rows: number;
  engine: IScanEngine;
  columns: IScanColumnPlan[];
}

/** Stages a scan reports while it runs (for a run line). */
export type ScanStage = 'facts' | 'details' | 'group' | 'binning';

/** Options of {@link planScan} and {@link scanWeightedCodes}. */
export interface IScanOptions {
  /** Default {@link MAX_DISTINCT_ROWS}. */
  maxDistinctRows?: number;
  /** Called as each stage starts. */
  onStage?: (stage: ScanStage) => void;
}

/** Most edges of one column a scan bins (a scanner may bin in SQL: a nested CASE of that many comparisons). */
export const MAX_SCAN_BINS = 4096;

/**
 * Plan the binning of `columns` of a scanned source under `options` (bins, binsByColumn):
 * facts, then the details the rules need, then the engine's own planning. Errors as the
 * in-memory binning's: an empty source, an all-missing column, a numeric spec on text, ±Inf,
 * a value outside `edges:`; plus a column kind a scan cannot bin.
 */
export async function planScan(
  scanner: IColumnScanner,
  columns: string[],
  options: IAnalyzeOptions,
  scanOptions: IScanOptions = {}
): Promise<IScanPlan> {
  scanOptions.onStage?.('facts');
  const facts = await scanner.facts(columns);
  if (facts.rows === 0) {
    throw new PolyadicError('input', `${scanner.label} has columns but no rows.`, {});
  }
  const specs = new Map<string, { given: IBinSpec; specText: string }>();
  for (const column of facts.columns) {
    Private.checkKind(column);
    if (column.missingCount === facts.rows) {
      refuseAllMissing({ kind: 'numeric', name: column.name, dtype: column.dtype, values: new Float64Array(0), missing: null }, facts.rows);
    }
    const given = Private.givenSpec(column, options);
    const specText = formatBinSpec(given);
    if (!Private.isNumeric(column)) {
      checkCategoricalSpec(column, given.method === 'auto' ? { method: 'categorical' } : given, specText);
    }
    specs.set(column.name, { given, specText });
  }
  const requests: IScanDetailRequest[] = [];
  for (const column of facts.columns) {
    if (Private.isNumeric(column)) {
      const needs = summaryNeeds(specs.get(column.name)!.given, column.count, column.levels);
      // ±Inf refuses every rule that needs ranks or moments (planNumeric says so), so skip them
      const ranks = column.infinite === null ? needs.ranks : [];
      const std = needs.std && column.infinite === null;
      if (ranks.length > 0 || std || needs.distinct) {
        requests.push({ name: column.name, ranks, std, skewness: std && needs.skewness, distinct: needs.distinct });
      }
    }
  }
  const details = new Map<string, IScannedColumnDetails>();
  if (requests.length > 0) {
    scanOptions.onStage?.('details');
    for (const found of await scanner.details(requests)) {
      details.set(found.name, found);
    }
  }
  const planned: IScanColumnPlan[] = [];
  for (const column of facts.columns) {
    const { given, specText } = specs.get(column.name)!;
    const base = {
      name: column.name,
      dtype: column.dtype,
      kind: column.kind,
      specText,
      missingCount: column.missingCount,
      firstMissingRow: column.firstMissingRow
    };
    if (!Private.isNumeric(column)) {
      planned.push({ ...base, plan: null, key: { name: column.name, edges: null } });
      continue;
    }
    const request = requests.find(r => r.name === column.name);
    const plan = planNumeric(column, given, specText, MAX_BIN_COUNT, Private.summary(column, request, details.get(column.name)));
    if (plan.kind !== 'categorical' && plan.edges.length - 1 > MAX_SCAN_BINS) {
      throw new PolyadicError(
        'limit',
        `Column '${column.name}': ${plan.specText} gives ${formatCount(plan.edges.length - 1)} bins, above the ` +
          `${formatCount(MAX_SCAN_BINS)} a scanned source bins; choose fewer bins for this column.`,
        { column: column.name, option: 'bins', value: specText }
      );
    }
    if (plan.kind === 'edges') {
      await Private.refuseOutside(scanner, column, plan.edges, plan.specText);
    }
    const key: IScanGroupKey =
      plan.kind === 'categorical'
        ? { name: column.name, edges: null }
        : plan.kind === 'uniform'
          ? { name: column.name, edges: plan.edges, uniform: { first: plan.first, last: plan.last } }
          : { name: column.name, edges: plan.edges };
    planned.push({ ...base, plan, key });
  }
  return { rows: facts.rows, engine: facts.engine, columns: planned };
}

/**
 * The binned columns over the grouped table: keys mapped to codes in the engine's order (code
 * points for text, ascending numbers, false before true), distinct rows whose codes coincide
 * merged (e.g. −0 and 0), and the in-memory binning's warnings from weighted counts. Returns
 * the columns and the merged weights.
 */
export function binnedColumns(
  columns: IScanColumnPlan[],
  grouped: IScannedGroups
): { columns: IBinnedColumn[]; weights: Int32Array } {
  if (grouped.keys.length !== columns.length) {
    throw new PolyadicError('internal', `The grouped table has ${grouped.keys.length} key columns for ${columns.length} selected columns.`);
  }
  const binned = columns.map((column, c) => Private.binKeys(column, grouped.keys[c], grouped.weights.length));
  const { columns: merged, weights } = Private.mergeRows(binned, grouped.weights);
  merged.forEach((column, c) => {
    const occupiedWeights = new Float64Array(column.bins);
    column.codes.forEach((code, i) => {
      if (code >= 0) {
        occupiedWeights[code] += weights[i];
      }
    });
    let occupied = 0;
    let present = 0;
    occupiedWeights.forEach(w => {
      occupied += w > 0 ? 1 : 0;
      present += w;
    });
    const plan = columns[c].plan;
    if (plan !== null) {
      const warning = mergedLevelsWarning(column.name, plan, occupied);
      if (warning) {
        column.warnings.push(warning);
      }
    }
    const categorical = column.binning.binning.method === 'categorical';
    // As many occupied codes as present rows means each weight is 1: an identifier.
    const warning = occupancyWarning(column.name, categorical, occupied, present);
    if (warning) {
      column.warnings.push(warning);
    }
  });
  return { columns: merged, weights };
}

/** The weighted codes of a planned scan's grouped table under a missing-value policy, with every warning. */
export function weightedCodes(plan: IScanPlan, grouped: IScannedGroups, missing: MissingPolicy): IWeightedCodes {
  const { columns, weights } = binnedColumns(plan.columns, grouped);
  const prepared = applyWeightedMissingPolicy(columns, weights, missing);
  prepared.warnings = [...columns.flatMap(column => column.warnings), ...prepared.warnings];
  return prepared;
}

/** The error when the grouped table passes the cap on distinct rows. */
export function distinctRowsError(label: string, maxDistinctRows: number): PolyadicError {
  return new PolyadicError(
    'limit',
    `The selected columns of ${label} have more than ${formatCount(maxDistinctRows)} distinct binned rows, above what ` +
      'a scan hands to the walk; select fewer columns or use fewer bins.',
    { limit: 'distinct_rows', count: maxDistinctRows }
  );
}

/**
 * Plan, group and bin a scanned source: the weighted codes the lattice walk takes (see
 * {@link planScan}, {@link weightedCodes}). Past the cap on distinct rows, a limit error.
 */
export async function scanWeightedCodes(
  scanner: IColumnScanner,
  columns: string[],
  options: IAnalyzeOptions,
  scanOptions: IScanOptions = {}
): Promise<{ prepared: IWeightedCodes; plan: IScanPlan }> {
  const maxDistinctRows = scanOptions.maxDistinctRows ?? MAX_DISTINCT_ROWS;
  const plan = await planScan(scanner, columns, options, scanOptions);
  scanOptions.onStage?.('group');
  const grouped = await scanner.group(
    plan.columns.map(column => column.key),
    maxDistinctRows
  );
  if (grouped === null) {
    throw distinctRowsError(scanner.label, maxDistinctRows);
  }
  scanOptions.onStage?.('binning');
  return { prepared: weightedCodes(plan, grouped, options.missing ?? 'drop'), plan };
}

namespace Private {
  /** Numbers go through planNumeric; booleans and text are categories. */
  export function isNumeric(column: IScannedColumnFacts): boolean {
    return column.kind === 'numeric';
  }

  /** Refuse a kind a scan cannot bin, naming the column and the way out. */
  export function checkKind(column: IScannedColumnFacts): void {
    if (column.kind === 'datetime' || column.kind === 'timedelta' || column.kind === 'other') {
      const what = column.kind === 'other' ? `the type ${column.dtype}` : `${column.kind} values (${column.dtype})`;
      throw new PolyadicError(
        'input',
        `Column '${column.name}' holds ${what}, which a scan does not bin; cast it in the engine first ` +
          '(e.g. a date or duration to epoch seconds, a number or a string), or leave it out.',
        { column: column.name, value: column.dtype }
      );
    }
  }

  /** The spec given for a column: per column, else the numeric default, else auto (categorical for text). */
  export function givenSpec(column: IScannedColumnFacts, options: IAnalyzeOptions): IBinSpec {
    const text = options.binsByColumn?.[column.name];
    if (text !== undefined) {
      return parseBinSpec(text);
    }
    if (isNumeric(column)) {
      return options.bins !== undefined ? parseBinSpec(options.bins) : { method: 'auto' };
    }
    return { method: 'categorical' };
  }

  /** The numeric summary planNumeric reads, from the facts and the details asked for. */
  export function summary(
    column: IScannedColumnFacts,
    request: IScanDetailRequest | undefined,
    details: IScannedColumnDetails | undefined
  ): INumericSummary {
    const missingDetail = (what: string): never => {
      throw new PolyadicError('internal', `The scan gave no ${what} of column '${column.name}'.`, { column: column.name });
    };
    const ranks = new Map<number, number>();
    if (request && details) {
      if (details.orderStatistics.length !== request.ranks.length) {
        missingDetail('order statistics');
      }
      request.ranks.forEach((rank, i) => ranks.set(rank, details.orderStatistics[i]));
    }
    return {
      count: column.count,
      missingCount: column.missingCount,
      firstMissingRow: column.firstMissingRow,
      integer: column.integer,
      rounded: column.rounded,
      levels: column.levels,
      infinite: column.infinite,
      min: column.min ?? NaN,
      max: column.max ?? NaN,
      orderStatistic: rank => ranks.get(rank) ?? missingDetail(`order statistic ${rank}`),
      std: () => details?.std ?? missingDetail('standard deviation'),
      skewness: () => details?.skewness ?? missingDetail('skewness'),
      distinct: () => {
        const distinct = details?.distinct ?? missingDetail('distinct values');
        if (distinct.values.length > MAX_DISTINCT_ROWS) {
          throw new PolyadicError(
            'limit',
            `Column '${column.name}' has ${formatCount(distinct.values.length)} distinct values, above the ` +
              `${formatCount(MAX_DISTINCT_ROWS)} a scanned source takes for this binning; choose quantile:K or width:K for it.`,
            { column: column.name, option: 'bins' }
          );
        }
        return distinct;
      }
    };
  }

  /** Refuse a value outside the user's edges (the in-memory message when the scanner can say where). */
  export async function refuseOutside(
    scanner: IColumnScanner,
    column: IScannedColumnFacts,
    edges: number[],
    specText: string
  ): Promise<void> {
    const lo = edges[0];
    const hi = edges[edges.length - 1];
    if (column.min === null || column.max === null || (column.min >= lo && column.max <= hi)) {
      return;
    }
    const outside = scanner.firstOutside ? await scanner.firstOutside(column.name, lo, hi) : null;
    if (outside !== null) {
      throw new PolyadicError(
        'input',
        `Column '${column.name}' has the value ${outside.value} at row ${outside.row}, outside the edges ` +
          `${lo} … ${hi} of ${specText}; widen the edges or choose another binning.`,
        { column: column.name, row: outside.row, value: String(outside.value), option: 'bins' }
      );
    }
    const bad = column.min < lo ? column.min : column.max;
    throw new PolyadicError(
      'input',
      `Column '${column.name}' has values from ${column.min} to ${column.max}, outside the edges ` +
        `${lo} … ${hi} of ${specText}; widen the edges or choose another binning.`,
      { column: column.name, value: String(bad), option: 'bins' }
    );
  }

  /** Whether key `i` is missing. */
  function isValid(valid: Uint8Array | null, i: number): boolean {
    return valid === null || valid[i] !== 0;
  }

  /** One binned column from its key column (codes −1 where missing). */
  export function binKeys(column: IScanColumnPlan, keys: ScannedKeys, distinct: number): IBinnedColumn {
    const codes = new Int32Array(distinct).fill(-1);
    const binning: IBinnedColumn['binning'] = {
      name: column.name,
      bins: 0,
      binning: { method: column.plan?.method ?? 'categorical', spec: column.specText }
    };
    const wrongKeys = (): never => {
      throw new PolyadicError('internal', `The scan gave ${keys.kind} as keys of column '${column.name}'.`, { column: column.name });
    };
    const length = keys.kind === 'bins' ? keys.codes.length : keys.values.length;
    if (length !== distinct) {
      throw new PolyadicError('internal', `The scan gave ${length} keys of column '${column.name}' for ${distinct} rows.`, {
        column: column.name
      });
    }
    let bins: number;
    const plan = column.plan;
    if (plan === null) {
      const texts = textKeys(column, keys, distinct);
      const sorted = [...new Set(texts.filter((text): text is string => text !== null))].sort(compareCodePoints);
      const rank = new Map(sorted.map((text, i) => [text, i]));
      texts.forEach((text, i) => {
        if (text !== null) {
          codes[i] = rank.get(text) as number;
        }
      });
      bins = sorted.length;
      binning.binning.categories = sorted;
    } else if (plan.kind === 'categorical') {
      if (keys.kind !== 'numbers') {
        return wrongKeys();
      }
      const codeOf = new Map<number, number>();
      plan.values.forEach((value, code) => codeOf.set(value, code));
      for (let i = 0; i < distinct; i++) {
        if (isValid(keys.valid, i)) {
          const code = codeOf.get(keys.values[i] === 0 ? 0 : keys.values[i]);
          if (code === undefined) {
            throw new PolyadicError(
              'internal',
              `The scan gave the value ${keys.values[i]} in column '${column.name}', which its distinct values did not hold.`,
              { column: column.name }
            );
          }
          codes[i] = code;
        }
      }
      bins = plan.values.length;
      binning.binning.categories = plan.categories;
    } else {
      if (keys.kind !== 'bins') {
        return wrongKeys();
      }
      bins = plan.edges.length - 1;
      for (let i = 0; i < distinct; i++) {
        if (isValid(keys.valid, i)) {
          const code = keys.codes[i];
          if (code < 0 || code >= bins) {
            throw new PolyadicError(
              'input',
              `Column '${column.name}' has values outside the edges ${plan.edges[0]} … ${plan.edges[bins]} of ` +
                `${plan.specText} (the scan found them while grouping); widen the edges or choose another binning.`,
              { column: column.name, option: 'bins' }
            );
          }
          codes[i] = code;
        }
      }
      binning.binning.edges = plan.edges;
    }
    binning.bins = bins;
    return {
      name: column.name,
      codes,
      bins,
      binning,
      missingCount: column.missingCount,
      firstMissingRow: column.firstMissingRow,
      warnings: [...(plan?.warnings ?? [])]
    };
  }

  /** The texts of a text or boolean key column (booleans as 'false'/'true', read from 0/1 or the texts). */
  function textKeys(column: IScanColumnPlan, keys: ScannedKeys, distinct: number): (string | null)[] {
    if (keys.kind === 'texts') {
      return keys.values;
    }
    if (column.kind !== 'bool' || keys.kind !== 'numbers') {
      throw new PolyadicError('internal', `The scan gave ${keys.kind} as keys of text column '${column.name}'.`, { column: column.name });
    }
    const texts: (string | null)[] = new Array(distinct);
    for (let i = 0; i < distinct; i++) {
      texts[i] = isValid(keys.valid, i) ? (keys.values[i] === 0 ? 'false' : 'true') : null;
    }
    return texts;
  }

  /** Merge distinct rows whose codes coincide after mapping (e.g. −0 and 0), adding their weights. */
  export function mergeRows(columns: IBinnedColumn[], weights: Int32Array): { columns: IBinnedColumn[]; weights: Int32Array } {
    const index = new Map<string, number>();
    const keep: number[] = [];
    const merged: number[] = [];
    for (let i = 0; i < weights.length; i++) {
      const key = columns.map(column => column.codes[i]).join(',');
      const at = index.get(key);
      if (at === undefined) {
        index.set(key, keep.length);
        keep.push(i);
        merged.push(weights[i]);
      } else {
        merged[at] += weights[i];
      }
    }
    return {
      columns: columns.map(column => ({ ...column, codes: Int32Array.from(keep, i => column.codes[i]) })),
      weights: Int32Array.from(merged)
    };
  }
}
