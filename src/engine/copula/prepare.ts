/**
 * Preparing columns for the Gaussian-copula estimator: instead of binning, each selected column
 * becomes rank codes (see transform.ts), after dropping the rows with a missing value. The result
 * is the same {@link IPreparedCodes} the binning gives, with each column's binning saying
 * `copula` (normal scores of its ranks, not bins), so the result, the record and the panel tell
 * what was done.
 *
 * Refused, each with the column named and what to do instead: categorical, text and boolean
 * columns (the copula needs an order on many values), a column with no value, a constant column,
 * two columns with the same ranks, and the missing-value policy `category`.
 */

import { AUTO_MAX_LEVELS, IPreparedCodes } from '../binning';
import { PolyadicError } from '../errors';
import { formatCount, plural, wordFor } from '../text';
import type { ColumnView, IColumnBinning, MissingPolicy } from '../types';
import { covarianceMatrix } from './gaussian';
import { rankCodes, scoresOfCodes } from './transform';
import { COPULA_ESTIMATOR } from './walk';

/** The spec text a copula-normalised column records in place of a binning spec. */
export const COPULA_SPEC = 'copula';

/** The discrete estimators to suggest instead, as messages list them. */
const DISCRETE_ADVICE = "a discrete estimator ('plugin', 'miller-madow', 'chao-shen' or 'shrinkage', which bin the columns)";

/**
 * Two columns whose normal scores correlate this closely have the same ranks (or reversed
 * ones): one is a monotone function of the other (our tolerance, no source).
 */
const SAME_RANKS = 1 - 1e-9;

/** What {@link prepareCopulaColumns} needs besides the columns. */
export interface ICopulaPrepareOptions {
  missing: MissingPolicy;
  /** The binning spec for every numeric column and per column, if any were given (not used). */
  bins?: string;
  binsByColumn?: Record<string, string>;
  /** Whether multiplets of two or more columns are computed (then columns of equal ranks are refused). */
  pairs: boolean;
}

/**
 * Rank codes of the selected columns (equal lengths, already checked), rows with a missing value
 * in any of them left out. Errors name the column at fault and say what to do instead.
 */
export function prepareCopulaColumns(selected: ColumnView[], options: ICopulaPrepareOptions): IPreparedCodes {
  const warnings: string[] = [];
  const refused = selected.filter(column => column.kind === 'categorical');
  if (refused.length > 0) {
    const first = refused[0];
    const what = first.dtype === 'bool' ? 'boolean' : 'categorical';
    const others = refused.length > 1 ? ` (and ${plural(refused.length - 1, 'other column')}: ${refused.slice(1).map(c => `'${c.name}'`).join(', ')})` : '';
    const mixed = refused.length < selected.length ? 'This selection mixes continuous and categorical columns. ' : '';
    throw new PolyadicError(
      'usage',
      `Column '${first.name}' is ${what}${others}, and the Gaussian-copula estimator takes only continuous numeric ` +
        `columns: it replaces each value by the normal score of its rank, which needs ordered values. ${mixed}` +
        `Leave '${first.name}' out, or use ${DISCRETE_ADVICE}.`,
      { column: first.name, option: 'estimator', value: COPULA_ESTIMATOR }
    );
  }
  if (options.missing === 'category') {
    throw new PolyadicError(
      'usage',
      "The missing-value policy 'category' counts a missing value as a value of its own, which has no rank, so the " +
        `Gaussian-copula estimator cannot use it. Use 'drop' (rows with a missing value are left out) or 'error', or ${DISCRETE_ADVICE}.`,
      { option: 'missing', value: 'category' }
    );
  }
  const unused = Object.entries(options.binsByColumn ?? {})
    .filter(([name, spec]) => selected.some(column => column.name === name) && !isCopulaSpec(spec))
    .map(([name]) => `'${name}'`);
  if ((options.bins !== undefined && !isCopulaSpec(options.bins)) || unused.length > 0) {
    warnings.push(
      'The Gaussian-copula estimator does not bin: each column is replaced by the normal scores of its ranks, so ' +
        `the binning given${unused.length > 0 ? ` for ${unused.join(', ')}` : ''} was not used.`
    );
  }
  const rows = selected.length ? lengthOf(selected[0]) : 0;
  const values = selected.map(column => Private.numbers(column));
  const keep = new Uint8Array(rows).fill(1);
  let firstMissing = { row: Infinity, column: '' };
  let missingTotal = 0;
  values.forEach((column, c) => {
    let present = 0;
    for (let i = 0; i < rows; i++) {
      if (Number.isNaN(column[i])) {
        keep[i] = 0;
        missingTotal++;
        if (i < firstMissing.row) {
          firstMissing = { row: i, column: selected[c].name };
        }
      } else {
        present++;
      }
    }
    if (present === 0) {
      throw new PolyadicError(
        'input',
        `Column '${selected[c].name}' has no value: all ${plural(rows, 'row')} are missing. Leave it out of the selection.`,
        { column: selected[c].name }
      );
    }
  });
  let rowIndex: Int32Array | null = null;
  let rowsUsed = rows;
  if (missingTotal > 0) {
    if (options.missing === 'error') {
      throw new PolyadicError(
        'input',
        `Column '${firstMissing.column}' has a missing value at row ${firstMissing.row} (${plural(missingTotal, 'missing value')} ` +
          "in the selected columns), and the missing-value policy is 'error'. Use 'drop' to leave such rows out.",
        { column: firstMissing.column, row: firstMissing.row, option: 'missing' }
      );
    }
    rowsUsed = keep.reduce((sum, k) => sum + k, 0);
    if (rowsUsed === 0) {
      throw new PolyadicError(
        'input',
        `Every one of the ${formatCount(rows)} rows has a missing value in at least one selected column, so the ` +
          "missing-value policy 'drop' leaves no row. Select fewer columns.",
        { option: 'missing' }
      );
    }
    rowIndex = new Int32Array(rowsUsed);
    for (let i = 0, j = 0; i < rows; i++) {
      if (keep[i]) {
        rowIndex[j++] = i;
      }
    }
    const dropped = rows - rowsUsed;
    warnings.push(
      `${formatCount(dropped)} of ${plural(rows, 'row')} ${wordFor(dropped, 'has', 'have')} a missing value in a selected ` +
        `column and ${wordFor(dropped, 'was', 'were')} left out before ranking (missing-value policy 'drop'); ` +
        `${plural(rowsUsed, 'row')} ${wordFor(rowsUsed, 'remains', 'remain')}.`
    );
  }
  const codes: Int32Array[] = [];
  const bins: number[] = [];
  const binnings: IColumnBinning[] = [];
  selected.forEach((column, c) => {
    const kept = rowIndex === null ? values[c] : Float64Array.from(rowIndex, i => values[c][i]);
    const ranked = rankCodes(kept);
    if (ranked.distinct === 1) {
      throw new PolyadicError(
        'input',
        `Column '${column.name}' is constant (every ${rowIndex === null ? '' : 'kept '}row holds ${kept[0]}), so it has no ` +
          'ranks to normalise and the Gaussian-copula estimator cannot use it. Leave it out of the selection.',
        { column: column.name }
      );
    }
    if (ranked.distinct <= AUTO_MAX_LEVELS) {
      warnings.push(
        `Column '${column.name}' has only ${plural(ranked.distinct, 'distinct value')}: the Gaussian copula treats it as ` +
          `continuous with tied ranks, which can understate its dependence; ${DISCRETE_ADVICE} may suit it better.`
      );
    }
    codes.push(ranked.codes);
    bins.push(ranked.distinct);
    binnings.push({ name: column.name, bins: ranked.distinct, binning: { method: 'copula', spec: COPULA_SPEC } });
  });
  if (options.pairs && selected.length >= 2) {
    Private.refuseEqualRanks(
      codes.map((c, i) => scoresOfCodes(c, bins[i])),
      selected.map(column => column.name)
    );
  }
  return { names: selected.map(column => column.name), codes, bins, binnings, rows, rowsUsed, rowIndex, warnings };
}

/** Whether a binning spec asks for nothing the copula would ignore (`auto` or `copula`). */
export function isCopulaSpec(spec: string): boolean {
  const text = spec.trim().toLowerCase();
  return text === 'auto' || text === COPULA_SPEC;
}

function lengthOf(column: ColumnView): number {
  return column.kind === 'numeric' ? column.values.length : column.codes.length;
}

namespace Private {
  /** A numeric column as float64, NaN where missing (the mask or NaN); 64-bit integers rounded to the nearest double. */
  export function numbers(column: ColumnView): Float64Array {
    if (column.kind !== 'numeric') {
      throw new PolyadicError('internal', `Column '${column.name}' is not numeric.`);
    }
    const source = column.values;
    const out = new Float64Array(source.length);
    for (let i = 0; i < source.length; i++) {
      out[i] = column.missing !== null && column.missing[i] ? NaN : Number(source[i]);
    }
    return out;
  }

  /** Refuse two columns with the same (or reversed) ranks: their covariance is singular. */
  export function refuseEqualRanks(scores: Float64Array[], names: string[]): void {
    const n = scores.length;
    const cov = covarianceMatrix(scores);
    for (let a = 0; a < n; a++) {
      for (let b = a + 1; b < n; b++) {
        const r = cov[a * n + b] / Math.sqrt(cov[a * n + a] * cov[b * n + b]);
        if (Math.abs(r) >= SAME_RANKS) {
          throw new PolyadicError(
            'input',
            `Columns '${names[a]}' and '${names[b]}' have the same ranks${r < 0 ? ' in reverse' : ''} (one is a monotone ` +
              'function of the other), so after copula normalisation they are one variable and every multiplet holding ' +
              `both has a Gaussian entropy of −∞. Leave one of them out, or use ${DISCRETE_ADVICE}.`,
            { column: names[b], columns: [names[a], names[b]] }
          );
        }
      }
    }
  }
}
