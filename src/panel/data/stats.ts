/**
 * What the column checklist shows about a column: distinct values, missing values and the
 * warnings that make a column a poor candidate for an analysis. Pure functions of a column
 * view, so they run in jest and anywhere else.
 */
import type { ColumnView, NumericArray } from '../../engine/types';

/** Why a column may not belong in an analysis; a column gets at most one of the first two. */
export type ColumnWarning = 'all-missing' | 'constant' | 'identifier-like' | 'high-cardinality';

/** The checklist's facts about one column. */
export interface IColumnStats {
  /** Rows of the column. */
  rows: number;
  /** Rows with a missing value (missing mask, code −1, NaN). */
  missing: number;
  /** Distinct values among the rows that are not missing. */
  distinct: number;
  /** Warnings, in a fixed order. */
  warnings: ColumnWarning[];
}

/**
 * Distinct values above which a categorical column counts as high cardinality: past this
 * many cells one column alone spreads the rows thin (common practice, no source).
 */
export const HIGH_CARDINALITY = 50;

/** Fewest rows for which "every value distinct" reads as an identifier (common practice). */
export const IDENTIFIER_MIN_ROWS = 20;

/** The badge of each warning in the checklist: its own words, so no two warnings read alike. */
export const WARNING_BADGE: Record<ColumnWarning, string> = {
  'all-missing': 'all missing',
  constant: 'constant',
  'identifier-like': 'identifier-like',
  'high-cardinality': 'high cardinality'
};

/** The text of each warning, for the checklist and its tooltips. */
export const WARNING_TEXT: Record<ColumnWarning, string> = {
  'all-missing': 'all missing: no row has a value, so it cannot be analysed',
  constant: 'constant: one value only, so it carries no information',
  'identifier-like': 'identifier-like: every row has its own value',
  'high-cardinality': `high cardinality: more than ${HIGH_CARDINALITY} categories`
};

/** Count the missing and distinct values of a column and derive its warnings. */
export function columnStats(column: ColumnView): IColumnStats {
  const counted = column.kind === 'categorical' ? Private.categorical(column.codes, column.missing) : Private.numeric(column.values, column.missing);
  const rows = column.kind === 'categorical' ? column.codes.length : column.values.length;
  const present = rows - counted.missing;
  const warnings: ColumnWarning[] = [];
  if (present === 0) {
    // no value at all is not "one value": an empty column is not constant
    warnings.push('all-missing');
  } else if (counted.distinct === 1) {
    warnings.push('constant');
  }
  // Continuous measurements are all distinct as a rule; only whole numbers and text look like ids.
  const discrete = column.kind === 'categorical' || Private.isWholeNumberType(column.values);
  if (discrete && present >= IDENTIFIER_MIN_ROWS && counted.distinct === present) {
    warnings.push('identifier-like');
  } else if (column.kind === 'categorical' && counted.distinct > HIGH_CARDINALITY) {
    warnings.push('high-cardinality');
  }
  return { rows, missing: counted.missing, distinct: counted.distinct, warnings };
}

namespace Private {
  /** Counts of one column. */
  export interface ICounts {
    missing: number;
    distinct: number;
  }

  /** Distinct used codes of a dictionary column. */
  export function categorical(codes: Int32Array, mask: Uint8Array | null): ICounts {
    const seen = new Set<number>();
    let missing = 0;
    for (let i = 0; i < codes.length; i++) {
      if (codes[i] < 0 || (mask !== null && mask[i] === 1)) {
        missing++;
      } else {
        seen.add(codes[i]);
      }
    }
    return { missing, distinct: seen.size };
  }

  /** Distinct values of a numeric column: sort the present values once and count the changes. */
  export function numeric(values: NumericArray, mask: Uint8Array | null): ICounts {
    const present = new Float64Array(values.length);
    let count = 0;
    let missing = 0;
    for (let i = 0; i < values.length; i++) {
      const x = Number(values[i]);
      if (Number.isNaN(x) || (mask !== null && mask[i] === 1)) {
        missing++;
      } else {
        present[count++] = x;
      }
    }
    const sorted = present.subarray(0, count).sort();
    let distinct = count > 0 ? 1 : 0;
    for (let i = 1; i < count; i++) {
      if (sorted[i] !== sorted[i - 1]) {
        distinct++;
      }
    }
    return { missing, distinct };
  }

  /** Whether a numeric column holds whole numbers by type (integers, timestamps as counts). */
  export function isWholeNumberType(values: NumericArray): boolean {
    return !(values instanceof Float64Array || values instanceof Float32Array);
  }
}
