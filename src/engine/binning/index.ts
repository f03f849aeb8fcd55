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
 *
 * One concern per file: spec.ts (the spec forms and `auto`), numeric.ts (numbers),
 * categorical.ts (categories), column.ts (one column by a spec), missing.ts (the missing-value
 * policies), types.ts (what binning gives), shared.ts (helpers of the two kinds).
 */

export { binColumn } from './column';
export { applyMissingPolicy, MISSING_CATEGORY } from './missing';
export { binIndexByEdges } from './numeric';
export {
  AUTO_MAX_LEVELS,
  AUTO_NUMERIC_SPEC,
  BIN_SPEC_FORMS,
  defaultBinSpec,
  formatBinSpec,
  MAX_BIN_COUNT,
  parseBinSpec
} from './spec';
export type { IBinnedColumn, IBinOptions, IPreparedCodes } from './types';
