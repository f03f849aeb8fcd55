/** Binning one column by a spec: the entry point, and the warnings every binning gets. */

import { plural } from '../text';
import type { ColumnView, IBinSpec } from '../types';
import { binCategorical } from './categorical';
import { binNumeric } from './numeric';
import { occupiedCodes } from './shared';
import { defaultBinSpec, formatBinSpec, MAX_BIN_COUNT, parseBinSpec } from './spec';
import type { IBinnedColumn, IBinOptions } from './types';

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
      ? binCategorical(column, parsed.method === 'auto' ? { method: 'categorical' } : parsed, specText)
      : binNumeric(column, parsed, specText, maxBins);
  addOccupancyWarnings(column, result);
  return result;
}

/** Warn about a constant column and an identifier-like categorical column. */
function addOccupancyWarnings(column: ColumnView, result: IBinnedColumn): void {
  const warning = occupancyWarning(
    column.name,
    result.binning.binning.method === 'categorical',
    occupiedCodes(result.codes, result.bins),
    result.codes.length - result.missingCount
  );
  if (warning) {
    result.warnings.push(warning);
  }
}

/**
 * The warning about a constant column (one occupied code) or an identifier-like categorical
 * column (each of its `present` values occurs once), or null.
 */
export function occupancyWarning(name: string, categorical: boolean, occupied: number, present: number): string | null {
  if (occupied === 1) {
    return (
      `Column '${name}' takes a single value${categorical ? '' : ' after binning'}: ` +
      'its entropy is 0 and it adds nothing to any multiplet.'
    );
  }
  if (categorical && present >= 2 && occupied === present) {
    return (
      `Column '${name}' looks like an identifier: each of its ${plural(present, 'value')} occurs ` +
      'once, so it determines every row and every multiplet containing it has the largest entropy.'
    );
  }
  return null;
}
