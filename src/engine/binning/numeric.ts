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
  quantileSorted
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
interface IPresent {
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

/** Refuse ±Inf under a numeric method, naming the first such row. */
function refuseInfinite(column: ColumnView, present: IPresent, specText: string): void {
  const values = present.values;
  for (let i = 0; i < values.length; i++) {
    if (!Number.isFinite(values[i])) {
      throw new PolyadicError(
        'input',
        `Column '${column.name}' has ${values[i] > 0 ? '+' : '-'}Inf at row ${present.rows[i]}; ` +
          `the binning ${specText} needs finite numbers. Replace or drop such values, or use ` +
          "'categorical'.",
        { column: column.name, row: present.rows[i], value: String(values[i]) }
      );
    }
  }
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
  const levels = countLevels(present.values, AUTO_MAX_LEVELS);
  const discrete = levels <= AUTO_MAX_LEVELS;
  // The record keeps the spec as given (`auto`); messages name the method it chose too.
  const recorded = specText;
  if (given.method === 'auto') {
    specText = `auto (${discrete ? 'categorical' : AUTO_NUMERIC_SPEC})`;
  }
  const spec: IAppliedSpec =
    given.method !== 'auto' ? { ...given, method: given.method } : discrete ? { method: 'categorical' } : AUTO_NUMERIC;
  const result = emptyResult(column, rows, spec.method, recorded, present.missingCount, present.firstMissingRow);
  if (present.rounded) {
    result.warnings.push(
      `Column '${column.name}' has integers beyond ±2^53; they were rounded to the nearest ` +
        'float64 before binning, so nearby values may share a bin.'
    );
  }
  if (spec.method === 'categorical') {
    categoricalNumbers(column, present, result);
    return result;
  }
  refuseInfinite(column, present, specText);
  const x = present.values;
  let edges: number[];
  switch (spec.method) {
    case 'width':
    case 'fd':
    case 'scott':
    case 'sturges':
    case 'rice':
    case 'sqrt':
    case 'doane': {
      const uniform = uniformEdges(column, x, present.integer, spec, specText, maxBins);
      edges = uniform.edges;
      assignUniform(x, present.rows, uniform.first, uniform.last, edges, result.codes);
      break;
    }
    case 'quantile':
      edges = quantileEdges(x, spec.count ?? 4);
      // A constant column gets one warning, from addOccupancyWarnings, not a second about ties;
      // a column of few values gets the warning about merged values below instead.
      if (edges.length - 1 < (spec.count ?? 4) && edges[0] !== edges[edges.length - 1] && !discrete) {
        result.warnings.push(
          `Column '${column.name}': ${specText} gave ${plural(edges.length - 1, 'bin')} instead of ` +
            `${formatCount(spec.count ?? 4)}, because tied values made some quantiles coincide ` +
            '(duplicate edges dropped).'
        );
      }
      assignByEdges(column, x, present.rows, edges, specText, result.codes);
      break;
    case 'kmeans':
      edges = kmeansEdges(column, x, spec.count ?? 1, specText, result.warnings);
      assignByEdges(column, x, present.rows, edges, specText, result.codes);
      break;
    case 'edges':
      edges = (spec.edges ?? []).slice();
      if (edges.length < 2) {
        throw new PolyadicError('usage', `Binning spec "${specText}" needs at least two edges.`, {
          option: 'bins',
          value: specText
        });
      }
      assignByEdges(column, x, present.rows, edges, specText, result.codes);
      break;
    default:
      throw new PolyadicError('usage', `Unknown binning method '${String(spec.method)}'.`, {
        option: 'bins',
        value: specText
      });
  }
  result.bins = edges.length - 1;
  result.binning.bins = result.bins;
  result.binning.binning.edges = edges;
  if (discrete) {
    const occupied = occupiedCodes(result.codes, result.bins);
    if (occupied < levels) {
      result.warnings.push(
        `Column '${column.name}' has only ${plural(levels, 'distinct value')}, and ${specText} merges ` +
          `them into ${plural(occupied, 'bin')}, so differences between the merged values are lost; ` +
          "'auto' or 'categorical' keeps each value as its own category."
      );
    }
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

/** One code per distinct number, in increasing order; labels as JS prints the number. */
function categoricalNumbers(column: INumericColumn, present: IPresent, result: IBinnedColumn): void {
  const sorted = Float64Array.from(present.values).sort();
  const distinct: number[] = [];
  for (let i = 0; i < sorted.length; i++) {
    // −0 and 0 are one value.
    if (i === 0 || sorted[i] !== sorted[i - 1]) {
      distinct.push(sorted[i]);
    }
  }
  const codeOf = new Map<number, number>();
  distinct.forEach((value, code) => codeOf.set(value, code));
  const codes = result.codes;
  const x = present.values;
  for (let i = 0; i < x.length; i++) {
    codes[present.rows[i]] = codeOf.get(x[i]) as number;
  }
  const bool = column.dtype === 'bool';
  result.bins = distinct.length;
  result.binning.bins = distinct.length;
  result.binning.binning.categories = distinct.map(value =>
    bool ? (value === 0 ? 'false' : 'true') : Object.is(value, -0) ? '0' : String(value)
  );
}

/**
 * Edges of `numpy.histogram_bin_edges` for `width:K` and the rules: the data range (widened
 * by ±0.5 when constant), the bin count from the rule's width (`ceil(range / width)`, 1 when
 * the width is 0, width at least 1 for integer data), and `linspace` over the range.
 */
function uniformEdges(
  column: ColumnView,
  x: Float64Array,
  integer: boolean,
  spec: IAppliedSpec,
  specText: string,
  maxBins: number
): { edges: number[]; first: number; last: number } {
  let min = x[0];
  let max = x[0];
  for (let i = 1; i < x.length; i++) {
    const v = x[i];
    if (v < min) {
      min = v;
    } else if (v > max) {
      max = v;
    }
  }
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
    let width = ruleWidth(spec.method, x, max - min, integer);
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
function ruleWidth(method: BinMethod, x: Float64Array, ptp: number, integer: boolean): number {
  const n = x.length;
  switch (method) {
    case 'sqrt':
      return ptp / Math.sqrt(n);
    case 'sturges':
      return ptp / (log2Rounded(n) + 1.0);
    case 'rice':
      return ptp / (2.0 * powRounded(n, 1.0 / 3));
    case 'scott': {
      const { std } = numpyStd(x, integer);
      return powRounded((24.0 * Math.sqrt(Math.PI)) / n, 1.0 / 3.0) * std;
    }
    case 'doane': {
      if (n > 2) {
        const sg1 = Math.sqrt((6.0 * (n - 2)) / ((n + 1.0) * (n + 3)));
        const { std: sigma, deviations } = numpyStd(x, integer);
        if (sigma > 0.0) {
          for (let i = 0; i < n; i++) {
            deviations[i] = cubeRounded(deviations[i] / sigma);
          }
          const g1 = numpyMean(deviations);
          return ptp / (1.0 + log2Rounded(n) + log2Rounded(1.0 + Math.abs(g1) / sg1));
        }
      }
      return 0.0;
    }
    case 'fd': {
      const sorted = Float64Array.from(x).sort();
      const iqr = quantileSorted(sorted, 0.75) - quantileSorted(sorted, 0.25);
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
  const qs = linspace(0, 1, count + 1);
  const raw = Float64Array.from(qs.map(q => quantileSorted(sorted, q))).sort();
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
  column: ColumnView,
  x: Float64Array,
  count: number,
  specText: string,
  warnings: string[]
): number[] {
  const sorted = Float64Array.from(x).sort();
  const distinct: number[] = [];
  const weights: number[] = [];
  for (let i = 0; i < sorted.length; i++) {
    if (i > 0 && sorted[i] === sorted[i - 1]) {
      weights[weights.length - 1]++;
    } else {
      distinct.push(sorted[i]);
      weights.push(1);
    }
  }
  let k = count;
  if (distinct.length < k) {
    k = distinct.length;
    warnings.push(
      `Column '${column.name}' has only ${plural(distinct.length, 'distinct value')}, so ${specText} ` +
        `made ${plural(k, 'cluster')}.`
    );
  }
  const values = Float64Array.from(distinct);
  const { starts } = optimalKMeans1D(values, Float64Array.from(weights), k);
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
