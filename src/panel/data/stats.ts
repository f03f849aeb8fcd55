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

/**
 * Keep facts computed elsewhere (the bridge's frame worker counts beside decoding) for the
 * view they describe, so {@link columnStats} of that view returns them without counting again.
 */
export function rememberStats(column: ColumnView, stats: IColumnStats): void {
  Private.known.set(column, stats);
}

/** Count the missing and distinct values of a column and derive its warnings. */
export function columnStats(column: ColumnView): IColumnStats {
  const known = Private.known.get(column);
  if (known !== undefined) {
    return known;
  }
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
  /** Facts of views, by view (weakly: a view dropped takes its facts along). */
  export const known = new WeakMap<ColumnView, IColumnStats>();

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

  /**
   * Distinct values of a numeric column: the present values go into an open-addressing hash
   * set keyed by their IEEE-754 bits (−0 as +0, so values are distinct exactly when `!==`
   * tells them apart), one pass and no sort, which keeps a column of a million rows in tens
   * of milliseconds.
   */
  export function numeric(values: NumericArray, mask: Uint8Array | null): ICounts {
    const present = new Float64Array(values.length);
    let count = 0;
    let missing = 0;
    for (let i = 0; i < values.length; i++) {
      const x = Number(values[i]);
      if (Number.isNaN(x) || (mask !== null && mask[i] === 1)) {
        missing++;
      } else {
        // −0 and +0 are one value; writing 0 for both gives them one bit pattern
        present[count++] = x === 0 ? 0 : x;
      }
    }
    return { missing, distinct: distinctBits(new Uint32Array(present.buffer, 0, count * 2), count) };
  }

  /** How many distinct 64-bit patterns the first `count` (low, high) word pairs of `words` hold. */
  export function distinctBits(words: Uint32Array, count: number): number {
    if (count === 0) {
      return 0;
    }
    let bits = 4;
    while (1 << bits < count * 2) {
      bits++;
    }
    const size = 1 << bits;
    const slotMask = size - 1;
    const shift = 32 - bits;
    const low = new Uint32Array(size);
    const high = new Uint32Array(size);
    const used = new Uint8Array(size);
    let distinct = 0;
    for (let i = 0; i < count; i++) {
      const lo = words[2 * i];
      const hi = words[2 * i + 1];
      // multiplicative hashing (Knuth, TAOCP vol. 3, §6.4) of the two words mixed
      let slot = Math.imul(lo ^ Math.imul(hi, 0x9e3779b1), 0x85ebca6b) >>> shift;
      for (;;) {
        if (used[slot] === 0) {
          used[slot] = 1;
          low[slot] = lo;
          high[slot] = hi;
          distinct++;
          break;
        }
        if (low[slot] === lo && high[slot] === hi) {
          break;
        }
        slot = (slot + 1) & slotMask;
      }
    }
    return distinct;
  }

  /** Whether a numeric column holds whole numbers by type (integers, timestamps as counts). */
  export function isWholeNumberType(values: NumericArray): boolean {
    return !(values instanceof Float64Array || values instanceof Float32Array);
  }
}
