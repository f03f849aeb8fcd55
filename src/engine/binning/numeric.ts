/**
 * Binning of numeric columns: the numpy-exact width rules and `width:K`, `quantile:K`,
 * `kmeans:K`, `edges:…`, and `auto` / `categorical` on numbers (see index.ts).
 */

import { PolyadicError } from '../errors';
import {
  cubeRounded,
  linspace,
  log2Rounded,
  numpyMean,
  numpyStd,
  powRounded,
  quantileAt,
  quantileRanks
} from '../floatmath';
import { optimalKMeans1D } from '../kmeans1d';
import { formatCount, plural } from '../text';
import type { BinMethod, ColumnView, IBinSpec, INumericColumn } from '../types';
import { emptyResult, occupiedCodes, refuseAllMissing } from './shared';
import { AUTO_MAX_LEVELS, AUTO_NUMERIC, AUTO_NUMERIC_SPEC, type IAppliedSpec } from './spec';
import type { IBinnedColumn } from './types';

/**
 * Assign values to bins as `numpy.histogram` does for arbitrary increasing edges: bin i holds
 * edges[i] ≤ x < edges[i + 1], the last bin also holds x = edges[last]. Returns −1 for a value
 * outside [edges[0], edges[last]].
 */
export function binIndexByEdges(edges: ArrayLike<number>, x: number): number {
  const last = edges.length - 1;
  if (!(x >= edges[0] && x <= edges[last])) {
    return -1;
  }
  if (x === edges[last]) {
    return last - 1;
  }
  // Largest i with edges[i] ≤ x.
  let lo = 0;
  let hi = last - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >>> 1;
    if (edges[mid] <= x) {
      lo = mid;
    } else {
      hi = mid - 1;
    }
  }
  return lo;
}

/** The non-missing values of a numeric column, in row order. */
export interface IPresent {
  /** Row of each value. */
  rows: Int32Array;
  values: Float64Array;
  missingCount: number;
  firstMissingRow: number;
  /** numpy would see an integer dtype (the width rules then use a width of at least 1). */
  integer: boolean;
  /** A 64-bit integer beyond ±2^53 was rounded. */
  rounded: boolean;
}

const INTEGER_DTYPE = /^(u?int(8|16|32|64)?|bool)$/i;

/** Read the non-missing values of a numeric column as float64, in row order. */
export function presentValues(column: INumericColumn): IPresent {
  const source = column.values;
  const n = source.length;
  const missing = column.missing;
  // Type tags, not instanceof: typed arrays from another realm (a worker's structured clone,
  // jest's sandbox, an iframe) fail instanceof against this realm's constructors.
  const tag = Object.prototype.toString.call(source);
  const isBig = tag === '[object BigInt64Array]' || tag === '[object BigUint64Array]';
  const integer =
    !(tag === '[object Float64Array]' || tag === '[object Float32Array]') || INTEGER_DTYPE.test(column.dtype);
  const rows = new Int32Array(n);
  const values = new Float64Array(n);
  let count = 0;
  let missingCount = 0;
  let firstMissingRow = -1;
  let rounded = false;
  for (let i = 0; i < n; i++) {
    let value: number;
    if (isBig) {
      const big = (source as BigInt64Array | BigUint64Array)[i];
      value = Number(big);
      if (!rounded && (value > Number.MAX_SAFE_INTEGER || value < -Number.MAX_SAFE_INTEGER)) {
        rounded = BigInt(value) !== big;
      }
    } else {
      value = (source as Float64Array)[i];
    }
    if ((missing !== null && missing[i]) || Number.isNaN(value)) {
      missingCount++;
      if (firstMissingRow < 0) {
        firstMissingRow = i;
      }
      continue;
    }
    rows[count] = i;
    values[count] = value;
    count++;
  }
  return {
    rows: rows.subarray(0, count),
    values: values.subarray(0, count),
    missingCount,
    firstMissingRow,
    integer,
    rounded
  };
}

/**
 * What the numeric binning reads of a column's non-missing values, whether they sit in memory
 * ({@link summarizeValues}) or in an engine that scans them (src/engine/aggregate): counts and
 * extremes, plus order statistics, numpy's standard deviation and skewness, and the distinct
 * values, each asked for only when the spec needs it ({@link summaryNeeds}).
 */
export interface INumericSummary {
  /** Non-missing values. */
  count: number;
  missingCount: number;
  firstMissingRow: number;
  /** numpy would see an integer dtype (the width rules then use a width of at least 1). */
  integer: boolean;
  /** A 64-bit integer beyond ±2^53 was rounded. */
  rounded: boolean;
  /** Distinct values, counted up to {@link AUTO_MAX_LEVELS} + 1. */
  levels: number;
  /** The first ±Inf in row order, or null. */
  infinite: { row: number; value: number } | null;
  min: number;
  max: number;
  /** The rank-th smallest value (0-based). */
  orderStatistic(rank: number): number;
  /** `numpy.std(x)` in numpy's order of sums. */
  std(): number;
  /** Doane's g1: `numpy.mean(((x − mean) / sigma) ** 3)`, cubes correctly rounded. */
  skewness(sigma: number): number;
  /** The distinct values, ascending (−0 and 0 as one), and how many rows hold each. */
  distinct(): { values: Float64Array; counts: Float64Array };
}

/** What a spec needs of a summary beyond its counts and extremes. */
export interface ISummaryNeeds {
  /** Order statistics by rank (0-based, ascending, no repeats). */
  ranks: number[];
  std: boolean;
  skewness: boolean;
  distinct: boolean;
}

/** The method a spec applies to a numeric column with that many distinct values (`auto` resolved). */
export function appliedSpec(given: IBinSpec, levels: number): IAppliedSpec {
  if (given.method !== 'auto') {
    return { ...given, method: given.method };
  }
  return levels <= AUTO_MAX_LEVELS ? { method: 'categorical' } : AUTO_NUMERIC;
}

/**
 * What binning a numeric column of `count` non-missing values (`levels` of them distinct, see
 * {@link INumericSummary}) by a spec reads beyond counts and extremes.
 */
export function summaryNeeds(given: IBinSpec, count: number, levels: number): ISummaryNeeds {
  const spec = appliedSpec(given, levels);
  const ranks = new Set<number>();
  const needs: ISummaryNeeds = { ranks: [], std: false, skewness: false, distinct: false };
  switch (spec.method) {
    case 'categorical':
    case 'kmeans':
      needs.distinct = true;
      break;
    case 'quantile':
      for (const q of linspace(0, 1, (spec.count ?? 4) + 1)) {
        quantileRanks(count, q).forEach(rank => ranks.add(rank));
      }
      break;
    case 'fd':
      for (const q of [0.75, 0.25]) {
        quantileRanks(count, q).forEach(rank => ranks.add(rank));
      }
      break;
    case 'scott':
      needs.std = true;
      break;
    case 'doane':
      needs.std = count > 2;
      needs.skewness = count > 2;
      break;
    default:
      break;
  }
  needs.ranks = [...ranks].sort((a, b) => a - b);
  return needs;
}

/** The summary of values in memory (row `rows[i]` holds `values[i]`). */
export function summarizeValues(present: IPresent): INumericSummary {
  const x = present.values;
  let min = x[0];
  let max = x[0];
  let infinite: { row: number; value: number } | null = null;
  for (let i = 0; i < x.length; i++) {
    const v = x[i];
    if (v < min) {
      min = v;
    } else if (v > max) {
      max = v;
    }
    if (infinite === null && !Number.isFinite(v)) {
      infinite = { row: present.rows[i], value: v };
    }
  }
  let sorted: Float64Array | null = null;
  const ascending = (): Float64Array => (sorted ??= Float64Array.from(x).sort());
  return {
    count: x.length,
    missingCount: present.missingCount,
    firstMissingRow: present.firstMissingRow,
    integer: present.integer,
    rounded: present.rounded,
    levels: countLevels(x, AUTO_MAX_LEVELS),
    infinite,
    min,
    max,
    orderStatistic: rank => ascending()[rank],
    std: () => numpyStd(x, present.integer).std,
    skewness: sigma => {
      const { deviations } = numpyStd(x, present.integer);
      for (let i = 0; i < deviations.length; i++) {
        deviations[i] = cubeRounded(deviations[i] / sigma);
      }
      return numpyMean(deviations);
    },
    distinct: () => {
      const values = ascending();
      const distinct: number[] = [];
      const counts: number[] = [];
      for (let i = 0; i < values.length; i++) {
        // −0 and 0 are one value.
        if (i > 0 && values[i] === values[i - 1]) {
          counts[counts.length - 1]++;
        } else {
          distinct.push(values[i]);
          counts.push(1);
        }
      }
      return { values: Float64Array.from(distinct), counts: Float64Array.from(counts) };
    }
  };
}

/**
 * How a numeric column is binned, decided from its summary alone: categories (its distinct
 * values), equal-width edges over [first, last], or other edges; with the warnings that do not
 * depend on the row assignment. The in-memory binning and the aggregated sources share it, so
 * their edges are the same bits.
 */
export type NumericPlan = {
  /** The method applied. */
  method: BinMethod;
  /** The spec as messages name it (under `auto`, with the method it chose). */
  specText: string;
  levels: number;
  warnings: string[];
} & (
  | { kind: 'categorical'; values: Float64Array; categories: string[] }
  | { kind: 'uniform'; edges: number[]; first: number; last: number }
  | { kind: 'edges'; edges: number[] }
);

/** Plan the binning of a numeric column (see {@link NumericPlan}); errors as {@link binNumeric}'s. */
export function planNumeric(
  column: { name: string; dtype: string },
  given: IBinSpec,
  specText: string,
  maxBins: number,
  summary: INumericSummary
): NumericPlan {
  const levels = summary.levels;
  const discrete = levels <= AUTO_MAX_LEVELS;
  if (given.method === 'auto') {
    specText = `auto (${discrete ? 'categorical' : AUTO_NUMERIC_SPEC})`;
  }
  const spec = appliedSpec(given, levels);
  const warnings: string[] = [];
  if (summary.rounded) {
    warnings.push(
      `Column '${column.name}' has integers beyond ±2^53; they were rounded to the nearest ` +
        'float64 before binning, so nearby values may share a bin.'
    );
  }
  const base = { method: spec.method, specText, levels, warnings };
  if (spec.method === 'categorical') {
    const values = summary.distinct().values;
    const bool = column.dtype === 'bool';
    const categories = Array.from(values, value =>
      bool ? (value === 0 ? 'false' : 'true') : Object.is(value, -0) ? '0' : String(value)
    );
    return { ...base, kind: 'categorical', values, categories };
  }
  if (summary.infinite) {
    const { row, value } = summary.infinite;
    throw new PolyadicError(
      'input',
      `Column '${column.name}' has ${value > 0 ? '+' : '-'}Inf at row ${row}; ` +
        `the binning ${specText} needs finite numbers. Replace or drop such values, or use ` +
        "'categorical'.",
      { column: column.name, row, value: String(value) }
    );
  }
  switch (spec.method) {
    case 'width':
    case 'fd':
    case 'scott':
    case 'sturges':
    case 'rice':
    case 'sqrt':
    case 'doane':
      return { ...base, kind: 'uniform', ...uniformEdges(column, summary, spec, specText, maxBins) };
    case 'quantile': {
      const edges = quantileEdgesOf(summary, spec.count ?? 4);
      // A constant column gets one warning, from addOccupancyWarnings, not a second about ties;
      // a column of few values gets the warning about merged values instead.
      if (edges.length - 1 < (spec.count ?? 4) && edges[0] !== edges[edges.length - 1] && !discrete) {
        warnings.push(
          `Column '${column.name}': ${specText} gave ${plural(edges.length - 1, 'bin')} instead of ` +
            `${formatCount(spec.count ?? 4)}, because tied values made some quantiles coincide ` +
            '(duplicate edges dropped).'
        );
      }
      return { ...base, kind: 'edges', edges };
    }
    case 'kmeans':
      return { ...base, kind: 'edges', edges: kmeansEdges(column, summary, spec.count ?? 1, specText, warnings) };
    case 'edges': {
      const edges = (spec.edges ?? []).slice();
      if (edges.length < 2) {
        throw new PolyadicError('usage', `Binning spec "${specText}" needs at least two edges.`, {
          option: 'bins',
          value: specText
        });
      }
      return { ...base, kind: 'edges', edges };
    }
    default:
      throw new PolyadicError('usage', `Unknown binning method '${String(spec.method)}'.`, {
        option: 'bins',
        value: specText
      });
  }
}

/**
 * The warning when a spec merges the values of a column of few distinct values into fewer bins
 * (`occupied` bins hold a row), or null.
 */
export function mergedLevelsWarning(name: string, plan: NumericPlan, occupied: number): string | null {
  if (plan.kind === 'categorical' || plan.levels > AUTO_MAX_LEVELS || occupied >= plan.levels) {
    return null;
  }
  return (
    `Column '${name}' has only ${plural(plan.levels, 'distinct value')}, and ${plan.specText} merges ` +
    `them into ${plural(occupied, 'bin')}, so differences between the merged values are lost; ` +
    "'auto' or 'categorical' keeps each value as its own category."
  );
}

export function binNumeric(
  column: INumericColumn,
  given: IBinSpec,
  specText: string,
  maxBins: number
): IBinnedColumn {
  const rows = column.values.length;
  const present = presentValues(column);
  if (present.values.length === 0) {
    refuseAllMissing(column, rows);
  }
  const plan = planNumeric(column, given, specText, maxBins, summarizeValues(present));
  // The record keeps the spec as given (`auto`); messages name the method it chose too.
  const result = emptyResult(column, rows, plan.method, specText, present.missingCount, present.firstMissingRow);
  result.warnings.push(...plan.warnings);
  const x = present.values;
  if (plan.kind === 'categorical') {
    const codeOf = new Map<number, number>();
    plan.values.forEach((value, code) => codeOf.set(value, code));
    for (let i = 0; i < x.length; i++) {
      result.codes[present.rows[i]] = codeOf.get(x[i]) as number;
    }
    result.bins = plan.values.length;
    result.binning.bins = result.bins;
    result.binning.binning.categories = plan.categories;
    return result;
  }
  if (plan.kind === 'uniform') {
    assignUniform(x, present.rows, plan.first, plan.last, plan.edges, result.codes);
  } else {
    assignByEdges(column, x, present.rows, plan.edges, plan.specText, result.codes);
  }
  result.bins = plan.edges.length - 1;
  result.binning.bins = result.bins;
  result.binning.binning.edges = plan.edges;
  const merged = mergedLevelsWarning(column.name, plan, occupiedCodes(result.codes, result.bins));
  if (merged) {
    result.warnings.push(merged);
  }
  return result;
}

/** Distinct values among `values`, counted up to `limit + 1` (beyond it the exact count does not matter). */
export function countLevels(values: Float64Array, limit: number): number {
  const seen = new Set<number>();
  for (let i = 0; i < values.length && seen.size <= limit; i++) {
    // a Set treats −0 and 0 as one value
    seen.add(values[i]);
  }
  return seen.size;
}

/**
 * Edges of `numpy.histogram_bin_edges` for `width:K` and the rules: the data range (widened
 * by ±0.5 when constant), the bin count from the rule's width (`ceil(range / width)`, 1 when
 * the width is 0, width at least 1 for integer data), and `linspace` over the range.
 */
function uniformEdges(
  column: { name: string },
  summary: INumericSummary,
  spec: IAppliedSpec,
  specText: string,
  maxBins: number
): { edges: number[]; first: number; last: number } {
  const { min, max, integer } = summary;
  let first = min;
  let last = max;
  if (first === last) {
    first = first - 0.5;
    last = last + 0.5;
  }
  let count: number;
  if (spec.method === 'width') {
    count = spec.count ?? 10;
  } else {
    let width = ruleWidth(spec.method, summary, max - min);
    if (width) {
      if (integer && width < 1) {
        width = 1;
      }
      count = Math.ceil((last - first) / width);
    } else {
      count = 1;
    }
    if (!(count <= maxBins)) {
      throw new PolyadicError(
        'limit',
        `The rule ${specText} asks for ${plural(count, 'bin')} on column '${column.name}', above the ` +
          `limit of ${formatCount(maxBins)}; choose width:K or quantile:K for this column.`,
        { column: column.name, option: 'bins', value: specText }
      );
    }
  }
  const edges = linspace(first, last, count + 1);
  for (let i = 0; i < count; i++) {
    if (!(edges[i] < edges[i + 1])) {
      throw new PolyadicError(
        'input',
        `Column '${column.name}': ${specText} asks for ${plural(count, 'bin')}, too many for the data ` +
          `range ${first} … ${last} (neighbouring edges coincide); choose fewer bins.`,
        { column: column.name, option: 'bins', value: specText }
      );
    }
  }
  return { edges, first, last };
}

/** Bin width of a rule, as numpy's `_hist_bin_*` functions compute it. */
function ruleWidth(method: BinMethod, summary: INumericSummary, ptp: number): number {
  const n = summary.count;
  switch (method) {
    case 'sqrt':
      return ptp / Math.sqrt(n);
    case 'sturges':
      return ptp / (log2Rounded(n) + 1.0);
    case 'rice':
      return ptp / (2.0 * powRounded(n, 1.0 / 3));
    case 'scott':
      return powRounded((24.0 * Math.sqrt(Math.PI)) / n, 1.0 / 3.0) * summary.std();
    case 'doane': {
      if (n > 2) {
        const sg1 = Math.sqrt((6.0 * (n - 2)) / ((n + 1.0) * (n + 3)));
        const sigma = summary.std();
        if (sigma > 0.0) {
          const g1 = summary.skewness(sigma);
          return ptp / (1.0 + log2Rounded(n) + log2Rounded(1.0 + Math.abs(g1) / sg1));
        }
      }
      return 0.0;
    }
    case 'fd': {
      const at = (rank: number): number => summary.orderStatistic(rank);
      const iqr = quantileAt(n, 0.75, at) - quantileAt(n, 0.25, at);
      return 2.0 * iqr * powRounded(n, -1.0 / 3.0);
    }
    default:
      throw new PolyadicError('internal', `No width rule for '${method}'.`);
  }
}

/**
 * Assign rows to equal-width bins as `numpy.histogram` does: the index computed from the value,
 * then corrected by one against the actual edges, the last bin closed.
 */
function assignUniform(
  x: Float64Array,
  rows: Int32Array,
  first: number,
  last: number,
  edges: number[],
  codes: Int32Array
): void {
  const count = edges.length - 1;
  const denominator = last - first;
  for (let i = 0; i < x.length; i++) {
    const v = x[i];
    let index = Math.trunc(((v - first) / denominator) * count);
    if (index === count) {
      index -= 1;
    }
    if (v < edges[index]) {
      index -= 1;
    }
    if (v >= edges[index + 1] && index !== count - 1) {
      index += 1;
    }
    codes[rows[i]] = index;
  }
}

/** Assign rows by arbitrary edges; a value outside them is an error naming the row. */
function assignByEdges(
  column: ColumnView,
  x: Float64Array,
  rows: Int32Array,
  edges: number[],
  specText: string,
  codes: Int32Array
): void {
  for (let i = 0; i < x.length; i++) {
    const code = binIndexByEdges(edges, x[i]);
    if (code < 0) {
      throw new PolyadicError(
        'input',
        `Column '${column.name}' has the value ${x[i]} at row ${rows[i]}, outside the edges ` +
          `${edges[0]} … ${edges[edges.length - 1]} of ${specText}; widen the edges or choose ` +
          'another binning.',
        { column: column.name, row: rows[i], value: String(x[i]), option: 'bins' }
      );
    }
    codes[rows[i]] = code;
  }
}

/**
 * Distinct values of `numpy.quantile(x, numpy.linspace(0, 1, K + 1))`, ascending. A constant
 * column gives the single bin [c, c].
 */
export function quantileEdges(x: Float64Array, count: number): number[] {
  const sorted = Float64Array.from(x).sort();
  return quantileEdgesAt(sorted.length, count, rank => sorted[rank]);
}

/** {@link quantileEdges} of a summary's order statistics. */
function quantileEdgesOf(summary: INumericSummary, count: number): number[] {
  return quantileEdgesAt(summary.count, count, rank => summary.orderStatistic(rank));
}

function quantileEdgesAt(n: number, count: number, valueAt: (rank: number) => number): number[] {
  const qs = linspace(0, 1, count + 1);
  const raw = Float64Array.from(qs.map(q => quantileAt(n, q, valueAt))).sort();
  const edges: number[] = [];
  for (let i = 0; i < raw.length; i++) {
    if (i === 0 || raw[i] !== raw[i - 1]) {
      edges.push(raw[i]);
    }
  }
  if (edges.length === 1) {
    edges.push(edges[0]);
  }
  return edges;
}

/**
 * Edges of an optimal k-means partition: the minimum, the midpoints between neighbouring
 * clusters, the maximum. Fewer distinct values than K reduce K, with a warning.
 */
function kmeansEdges(
  column: { name: string },
  summary: INumericSummary,
  count: number,
  specText: string,
  warnings: string[]
): number[] {
  const { values: distinct, counts: weights } = summary.distinct();
  let k = count;
  if (distinct.length < k) {
    k = distinct.length;
    warnings.push(
      `Column '${column.name}' has only ${plural(distinct.length, 'distinct value')}, so ${specText} ` +
        `made ${plural(k, 'cluster')}.`
    );
  }
  const values = distinct;
  const { starts } = optimalKMeans1D(values, weights, k);
  const edges = [values[0]];
  for (let c = 1; c < k; c++) {
    const below = values[starts[c] - 1];
    const above = values[starts[c]];
    let middle = below / 2 + above / 2;
    // Neighbouring doubles have no double strictly between them: put the edge on the upper
    // one, which then opens the upper bin.
    if (!(middle > below) || middle > above) {
      middle = above;
    }
    edges.push(middle);
  }
  edges.push(values[values.length - 1]);
  if (edges.length === 2 && edges[0] === edges[1] && k !== 1) {
    throw new PolyadicError('internal', `k-means edges collapsed on column '${column.name}'.`);
  }
  return edges;
}
