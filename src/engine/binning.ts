/**
 * Binning: turn one column into Int32 codes (−1 = missing) plus the edges or categories that
 * define them, by a binning spec (DESIGN.md glossary).
 *
 * `width:K` and the rules `fd`, `scott`, `sturges`, `rice`, `sqrt`, `doane` give the edges of
 * `numpy.histogram_bin_edges(x, bins)` on the non-missing values x in row order, and assign rows
 * as `numpy.histogram` does (half-open bins, the last one closed). `quantile:K` gives the
 * distinct values of `numpy.quantile(x, numpy.linspace(0, 1, K + 1))`. The arithmetic follows
 * numpy's order of operations (see floatmath.ts). Two documented differences: a float32 column is
 * binned as float64 (numpy would compute its edges in float32), and 64-bit integers beyond ±2^53
 * are rounded to the nearest float64 first (with a warning).
 *
 * The default spec `auto` is our own rule, so that the default never hides structure: a numeric
 * column with at most {@link AUTO_MAX_LEVELS} distinct values (0/1 flags, genotypes 0/1/2,
 * Likert answers, one-hot codes, small counts) keeps each value as a category, any other is
 * binned by `quantile:4`. An explicit spec that merges the values of such a column says so.
 */

import { PolyadicError } from './errors';
import {
  cubeRounded,
  linspace,
  log2Rounded,
  numpyMean,
  numpyStd,
  powRounded,
  quantileSorted
} from './floatmath';
import { optimalKMeans1D } from './kmeans1d';
import { formatCount, plural, wordFor } from './text';
import type {
  BinMethod,
  ColumnView,
  IBinSpec,
  IColumnBinning,
  ICategoricalColumn,
  INumericColumn,
  MissingPolicy
} from './types';

/** Largest K accepted in a spec, and largest bin count a rule may produce. */
export const MAX_BIN_COUNT = 1_000_000;

/** Every valid form of a binning spec, as error messages list them. */
export const BIN_SPEC_FORMS =
  'auto, width:K, quantile:K, fd, scott, sturges, rice, sqrt, doane, kmeans:K, ' +
  `edges:a,b,… (two or more strictly increasing numbers), categorical (K a whole number from 1 to ${formatCount(MAX_BIN_COUNT)})`;

/** Label of the code that `missing: 'category'` gives to missing values of a categorical column. */
export const MISSING_CATEGORY = '(missing)';

/**
 * Most distinct values a numeric column may have for `auto` to keep each value as a category:
 * 10 covers flags, genotypes, 5- to 10-point scales and small counts, while keeping a triplet of
 * such columns at no more than 1,000 possible joint cells (our choice, no source).
 */
export const AUTO_MAX_LEVELS = 10;

/** A spec whose method is settled (`auto` resolved). */
interface IAppliedSpec extends IBinSpec {
  method: BinMethod;
}

/** How `auto` bins a numeric column of more than {@link AUTO_MAX_LEVELS} distinct values. */
const AUTO_NUMERIC: IAppliedSpec = { method: 'quantile', count: 4 };

/** {@link AUTO_NUMERIC} as text: `quantile:4`. */
export const AUTO_NUMERIC_SPEC = `${AUTO_NUMERIC.method}:${AUTO_NUMERIC.count}`;

/** Parse a binning spec such as `quantile:4`, `fd` or `edges:0,1.5,3`. */
export function parseBinSpec(text: string): IBinSpec {
  const source = String(text);
  const trimmed = source.trim();
  const colon = trimmed.indexOf(':');
  const head = (colon < 0 ? trimmed : trimmed.slice(0, colon)).trim().toLowerCase();
  const argument = colon < 0 ? undefined : trimmed.slice(colon + 1).trim();
  const fail = (why: string): never => {
    throw new PolyadicError(
      'usage',
      `Binning spec "${source}" is not valid: ${why}. Valid forms: ${BIN_SPEC_FORMS}.`,
      { option: 'bins', value: source }
    );
  };
  switch (head) {
    case 'auto':
      if (argument !== undefined) {
        return fail('auto takes no argument');
      }
      return { method: 'auto' };
    case 'width':
    case 'quantile':
    case 'kmeans': {
      if (argument === undefined || argument === '') {
        return fail(`${head} needs a bin count, as in ${head}:4`);
      }
      if (!/^\d+$/.test(argument)) {
        return fail(`the bin count "${argument}" is not a whole number`);
      }
      const count = Number(argument);
      if (count < 1 || count > MAX_BIN_COUNT) {
        return fail(`the bin count ${argument} is outside 1 … ${formatCount(MAX_BIN_COUNT)}`);
      }
      return { method: head, count };
    }
    case 'edges': {
      if (argument === undefined || argument === '') {
        return fail('edges needs a list of numbers, as in edges:0,1.5,3');
      }
      const parts = argument.split(',').map(part => part.trim());
      const edges: number[] = [];
      for (const part of parts) {
        if (!Private.DECIMAL.test(part)) {
          return fail(`"${part}" is not a finite decimal number`);
        }
        const value = Number(part);
        if (!Number.isFinite(value)) {
          return fail(`"${part}" is not a finite number`);
        }
        edges.push(value);
      }
      if (edges.length < 2) {
        return fail('edges needs at least two numbers');
      }
      for (let i = 1; i < edges.length; i++) {
        if (!(edges[i] > edges[i - 1])) {
          return fail(`the edges must increase strictly, but ${parts[i]} follows ${parts[i - 1]}`);
        }
      }
      return { method: 'edges', edges };
    }
    case 'fd':
    case 'scott':
    case 'sturges':
    case 'rice':
    case 'sqrt':
    case 'doane':
    case 'categorical':
      if (argument !== undefined) {
        return fail(`${head} takes no argument`);
      }
      return { method: head };
    default:
      return fail(head === '' ? 'it is empty' : `"${head}" is not a binning method`);
  }
}

/** The text form of a spec (the inverse of {@link parseBinSpec}). */
export function formatBinSpec(spec: IBinSpec): string {
  switch (spec.method) {
    case 'width':
    case 'quantile':
    case 'kmeans':
      return `${spec.method}:${spec.count}`;
    case 'edges':
      return `edges:${(spec.edges ?? []).map(edge => String(edge)).join(',')}`;
    default:
      return spec.method;
  }
}

/** The spec used when none is given: `categorical` for categorical and boolean columns, else `auto`. */
export function defaultBinSpec(column: ColumnView): IBinSpec {
  if (column.kind === 'categorical' || column.dtype === 'bool') {
    return { method: 'categorical' };
  }
  return { method: 'auto' };
}

/** One column after binning. */
export interface IBinnedColumn {
  name: string;
  /** One code per row in 0 … bins − 1, or −1 for a missing row. */
  codes: Int32Array;
  /** Number of codes (bins or categories; missing not counted). */
  bins: number;
  /** The binning as reported and recorded. */
  binning: IColumnBinning;
  /** Rows with a missing value. */
  missingCount: number;
  /** First missing row, or −1. */
  firstMissingRow: number;
  /** Things the user should know (constant column, merged quantile edges, …). */
  warnings: string[];
}

/** Options of {@link binColumn}. */
export interface IBinOptions {
  /** Largest bin count a rule may produce (default {@link MAX_BIN_COUNT}). */
  maxBins?: number;
}

/**
 * Bin one column by a spec (text or parsed; default {@link defaultBinSpec}). Missing rows (the
 * missing mask, a code of −1, NaN) get code −1. Errors: a column with no value at all, ±Inf
 * under a numeric method, a numeric method on a categorical column, a value outside the edges
 * of `edges:`.
 */
export function binColumn(
  column: ColumnView,
  spec?: IBinSpec | string,
  options: IBinOptions = {}
): IBinnedColumn {
  // A spec object goes through the parser too, so its count and edges are checked alike.
  const parsed =
    spec === undefined
      ? defaultBinSpec(column)
      : parseBinSpec(typeof spec === 'string' ? spec : formatBinSpec(spec));
  const specText = formatBinSpec(parsed);
  const maxBins = options.maxBins ?? MAX_BIN_COUNT;
  const result =
    column.kind === 'categorical'
      ? Private.binCategorical(column, parsed.method === 'auto' ? { method: 'categorical' } : parsed, specText)
      : Private.binNumeric(column, parsed, specText, maxBins);
  Private.addOccupancyWarnings(column, result);
  return result;
}

/** The selected columns' codes after a missing-value policy, ready for the lattice. */
export interface IPreparedCodes {
  names: string[];
  /** One Int32Array per column, every code in 0 … bins − 1, all of length `rowsUsed`. */
  codes: Int32Array[];
  /** Number of codes per column. */
  bins: number[];
  binnings: IColumnBinning[];
  /** Rows of the input. */
  rows: number;
  /** Rows kept. */
  rowsUsed: number;
  /** Input row of each kept row when rows were dropped, else null (all rows, in order). */
  rowIndex: Int32Array | null;
  warnings: string[];
}

/**
 * Apply a missing-value policy across binned columns of equal length:
 * `drop` keeps the rows with no missing value in any of them (listwise deletion);
 * `category` gives missing values one more code (the last) in each column that has any;
 * `error` refuses, naming the column and row of the first missing value in row order.
 */
export function applyMissingPolicy(columns: IBinnedColumn[], policy: MissingPolicy): IPreparedCodes {
  const rows = columns.length ? columns[0].codes.length : 0;
  for (const column of columns) {
    if (column.codes.length !== rows) {
      throw new PolyadicError(
        'input',
        `Column '${column.name}' has ${plural(column.codes.length, 'row')} but '${columns[0].name}' has ${formatCount(rows)}.`,
        { column: column.name }
      );
    }
  }
  const names = columns.map(column => column.name);
  const binnings = columns.map(column => Private.copyBinning(column.binning));
  const bins = columns.map(column => column.bins);
  const warnings: string[] = [];
  const anyMissing = columns.some(column => column.missingCount > 0);
  if (!anyMissing) {
    return { names, codes: columns.map(c => c.codes), bins, binnings, rows, rowsUsed: rows, rowIndex: null, warnings };
  }
  switch (policy) {
    case 'error': {
      let firstRow = Infinity;
      let firstColumn = '';
      for (const column of columns) {
        if (column.firstMissingRow >= 0 && column.firstMissingRow < firstRow) {
          firstRow = column.firstMissingRow;
          firstColumn = column.name;
        }
      }
      const total = columns.reduce((sum, column) => sum + column.missingCount, 0);
      throw new PolyadicError(
        'input',
        `Column '${firstColumn}' has a missing value at row ${firstRow} (${plural(total, 'missing value')} ` +
          'in the selected columns), and the missing-value policy is ' +
          "'error'. Use 'drop' to leave such rows out or 'category' to treat missing as a value.",
        { column: firstColumn, row: firstRow, option: 'missing' }
      );
    }
    case 'category': {
      const codes = columns.map((column, c) => {
        if (column.missingCount === 0) {
          return column.codes;
        }
        const code = column.bins;
        const out = Int32Array.from(column.codes);
        for (let i = 0; i < rows; i++) {
          if (out[i] < 0) {
            out[i] = code;
          }
        }
        bins[c] = code + 1;
        const binning = binnings[c];
        binning.bins = code + 1;
        binning.binning.missing_code = code;
        if (binning.binning.categories) {
          binning.binning.categories.push(MISSING_CATEGORY);
        }
        return out;
      });
      return { names, codes, bins, binnings, rows, rowsUsed: rows, rowIndex: null, warnings };
    }
    case 'drop': {
      const keep = new Uint8Array(rows).fill(1);
      for (const column of columns) {
        if (column.missingCount > 0) {
          const codes = column.codes;
          for (let i = 0; i < rows; i++) {
            if (codes[i] < 0) {
              keep[i] = 0;
            }
          }
        }
      }
      let rowsUsed = 0;
      for (let i = 0; i < rows; i++) {
        rowsUsed += keep[i];
      }
      if (rowsUsed === 0) {
        throw new PolyadicError(
          'input',
          `Every one of the ${formatCount(rows)} rows has a missing value in at least one selected column ` +
            `(${columns.filter(c => c.missingCount > 0).map(c => `'${c.name}'`).join(', ')}), so the ` +
            "missing-value policy 'drop' leaves no row. Select fewer columns or use 'category'.",
          { option: 'missing' }
        );
      }
      const rowIndex = new Int32Array(rowsUsed);
      for (let i = 0, j = 0; i < rows; i++) {
        if (keep[i]) {
          rowIndex[j++] = i;
        }
      }
      const codes = columns.map(column => {
        const out = new Int32Array(rowsUsed);
        for (let j = 0; j < rowsUsed; j++) {
          out[j] = column.codes[rowIndex[j]];
        }
        return out;
      });
      warnings.push(
        `${formatCount(rows - rowsUsed)} of ${plural(rows, 'row')} ${wordFor(rows - rowsUsed, 'has', 'have')} a ` +
          `missing value in a selected column and ${wordFor(rows - rowsUsed, 'was', 'were')} left out ` +
          `(missing-value policy 'drop'); ${plural(rowsUsed, 'row')} ${wordFor(rowsUsed, 'remains', 'remain')}.`
      );
      return { names, codes, bins, binnings, rows, rowsUsed, rowIndex, warnings };
    }
    default:
      throw new PolyadicError(
        'usage',
        `Unknown missing-value policy '${String(policy)}'; use 'drop', 'category' or 'error'.`,
        { option: 'missing', value: String(policy) }
      );
  }
}

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

namespace Private {
  /** A finite decimal number, as written in an `edges:` list. */
  export const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

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

  function refuseAllMissing(column: ColumnView, rows: number): never {
    throw new PolyadicError(
      'input',
      rows === 0
        ? `Column '${column.name}' has no rows.`
        : `Column '${column.name}' has no value: all ${plural(rows, 'row')} are missing. Leave it out of the selection.`,
      { column: column.name }
    );
  }

  /** Result skeleton with codes −1 (missing) everywhere. */
  function emptyResult(
    column: ColumnView,
    rows: number,
    method: BinMethod,
    specText: string,
    missingCount: number,
    firstMissingRow: number
  ): IBinnedColumn {
    return {
      name: column.name,
      codes: new Int32Array(rows).fill(-1),
      bins: 0,
      binning: { name: column.name, bins: 0, binning: { method, spec: specText } },
      missingCount,
      firstMissingRow,
      warnings: []
    };
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

  /** Number of codes in 0 … bins − 1 that some row has. */
  function occupiedCodes(codes: Int32Array, bins: number): number {
    const seen = new Uint8Array(bins);
    let occupied = 0;
    for (let i = 0; i < codes.length; i++) {
      const code = codes[i];
      if (code >= 0 && !seen[code]) {
        seen[code] = 1;
        occupied++;
      }
    }
    return occupied;
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

  export function binCategorical(column: ICategoricalColumn, spec: IBinSpec, specText: string): IBinnedColumn {
    const rows = column.codes.length;
    if (spec.method !== 'categorical') {
      throw new PolyadicError(
        'usage',
        `Column '${column.name}' is categorical (${column.dtype}), so it cannot be binned by ` +
          `${specText}, which needs numbers; use 'categorical' for it.`,
        { column: column.name, option: 'bins', value: specText }
      );
    }
    const source = column.codes;
    const missing = column.missing;
    const categories = column.categories;
    // Map each used dictionary code to its text; merge equal texts; sort the texts.
    const used = new Uint8Array(categories.length);
    let missingCount = 0;
    let firstMissingRow = -1;
    for (let i = 0; i < rows; i++) {
      const code = source[i];
      if (code < 0 || (missing !== null && missing[i])) {
        missingCount++;
        if (firstMissingRow < 0) {
          firstMissingRow = i;
        }
        continue;
      }
      if (code >= categories.length) {
        throw new PolyadicError(
          'input',
          `Column '${column.name}' row ${i} has category code ${code}, but the column has only ` +
            `${plural(categories.length, 'category', 'categories')}.`,
          { column: column.name, row: i, value: String(code) }
        );
      }
      used[code] = 1;
    }
    if (missingCount === rows) {
      refuseAllMissing(column, rows);
    }
    const texts = new Set<string>();
    for (let code = 0; code < categories.length; code++) {
      if (used[code]) {
        texts.add(categories[code]);
      }
    }
    const sortedTexts = [...texts].sort(compareCodePoints);
    const rank = new Map<string, number>();
    sortedTexts.forEach((text, index) => rank.set(text, index));
    const recode = new Int32Array(categories.length).fill(-1);
    for (let code = 0; code < categories.length; code++) {
      if (used[code]) {
        recode[code] = rank.get(categories[code]) as number;
      }
    }
    const result = emptyResult(column, rows, 'categorical', specText, missingCount, firstMissingRow);
    const codes = result.codes;
    for (let i = 0; i < rows; i++) {
      const code = source[i];
      if (code >= 0 && !(missing !== null && missing[i])) {
        codes[i] = recode[code];
      }
    }
    result.bins = sortedTexts.length;
    result.binning.bins = sortedTexts.length;
    result.binning.binning.categories = sortedTexts;
    return result;
  }

  /** Order strings by Unicode code point (as Python's `sorted` does), not UTF-16 unit. */
  export function compareCodePoints(a: string, b: string): number {
    const n = Math.min(a.length, b.length);
    for (let i = 0; i < n; i++) {
      const ca = a.charCodeAt(i);
      const cb = b.charCodeAt(i);
      if (ca !== cb) {
        const surrogateA = ca >= 0xd800 && ca <= 0xdfff;
        const surrogateB = cb >= 0xd800 && cb <= 0xdfff;
        if (surrogateA !== surrogateB) {
          // A surrogate pair encodes a code point above every BMP unit.
          return surrogateA ? 1 : -1;
        }
        return ca - cb;
      }
    }
    return a.length - b.length;
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

  /** Warn about a constant column and an identifier-like categorical column. */
  export function addOccupancyWarnings(column: ColumnView, result: IBinnedColumn): void {
    const occupied = occupiedCodes(result.codes, result.bins);
    const present = result.codes.length - result.missingCount;
    const categorical = result.binning.binning.method === 'categorical';
    if (occupied === 1) {
      result.warnings.push(
        `Column '${column.name}' takes a single value${categorical ? '' : ' after binning'}: ` +
          'its entropy is 0 and it adds nothing to any multiplet.'
      );
    } else if (categorical && present >= 2 && occupied === present) {
      result.warnings.push(
        `Column '${column.name}' looks like an identifier: each of its ${plural(present, 'value')} occurs ` +
          'once, so it determines every row and every multiplet containing it has the largest entropy.'
      );
    }
  }

  export function copyBinning(binning: IColumnBinning): IColumnBinning {
    const inner = { ...binning.binning };
    if (inner.edges) {
      inner.edges = inner.edges.slice();
    }
    if (inner.categories) {
      inner.categories = inner.categories.slice();
    }
    return { ...binning, binning: inner };
  }
}
