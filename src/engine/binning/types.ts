/** What binning gives: one binned column, and the selected columns' codes after a missing-value policy. */

import type { IColumnBinning } from '../types';

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

/** The selected columns' codes after a missing-value policy, ready for the lattice. */
export interface IPreparedCodes {
  names: string[];
  /** One Int32Array per column, every code in 0 … bins − 1, all of length `rowsUsed`. */
  codes: Int32Array[];
  /** Number of codes per column. */
  bins: number[];
  binnings: IColumnBinning[];
  /**
   * The count of each row when the rows are the distinct joint rows of a larger table (an
   * aggregated source; each ≥ 1); absent: every row once. `rows` and `rowsUsed` then count the
   * table's rows (the sum of the weights), not the distinct ones.
   */
  weights?: Int32Array;
  /** Rows of the input. */
  rows: number;
  /** Rows kept. */
  rowsUsed: number;
  /** Input row of each kept row when rows were dropped, else null (all rows, in order). */
  rowIndex: Int32Array | null;
  warnings: string[];
}
