/** The missing-value policies across the selected binned columns: drop, category, error. */

import { PolyadicError } from '../errors';
import { formatCount, plural, wordFor } from '../text';
import type { MissingPolicy } from '../types';
import { copyBinning } from './shared';
import type { IBinnedColumn, IPreparedCodes } from './types';

/** Label of the code that `missing: 'category'` gives to missing values of a categorical column. */
export const MISSING_CATEGORY = '(missing)';

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
  const binnings = columns.map(column => copyBinning(column.binning));
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
        throw nothingLeftError(rows, columns);
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
      warnings.push(droppedRowsWarning(rows, rowsUsed));
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
 * The error of the policy `drop` when every one of `rows` input rows has a missing value in a
 * selected column (`rows` counts the input's rows, also when the columns hold distinct rows).
 */
export function nothingLeftError(rows: number, columns: { name: string; missingCount: number }[]): PolyadicError {
  return new PolyadicError(
    'input',
    `Every one of the ${formatCount(rows)} rows has a missing value in at least one selected column ` +
      `(${columns.filter(c => c.missingCount > 0).map(c => `'${c.name}'`).join(', ')}), so the ` +
      "missing-value policy 'drop' leaves no row. Select fewer columns or use 'category'.",
    { option: 'missing' }
  );
}

/** What the policy `drop` says when it left rows out. */
export function droppedRowsWarning(rows: number, rowsUsed: number): string {
  return (
    `${formatCount(rows - rowsUsed)} of ${plural(rows, 'row')} ${wordFor(rows - rowsUsed, 'has', 'have')} a ` +
    `missing value in a selected column and ${wordFor(rows - rowsUsed, 'was', 'were')} left out ` +
    `(missing-value policy 'drop'); ${plural(rowsUsed, 'row')} ${wordFor(rowsUsed, 'remains', 'remain')}.`
  );
}
