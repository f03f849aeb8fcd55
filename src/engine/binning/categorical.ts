/** Binning of categorical (text and boolean) columns: one code per category, in code-point order. */

import { PolyadicError } from '../errors';
import { plural } from '../text';
import type { ICategoricalColumn, IBinSpec } from '../types';
import { compareCodePoints, emptyResult, refuseAllMissing } from './shared';
import type { IBinnedColumn } from './types';

/** Refuse a numeric spec on a categorical column (one that is not `categorical`). */
export function checkCategoricalSpec(column: { name: string; dtype: string }, spec: IBinSpec, specText: string): void {
  if (spec.method !== 'categorical') {
    throw new PolyadicError(
      'usage',
      `Column '${column.name}' is categorical (${column.dtype}), so it cannot be binned by ` +
        `${specText}, which needs numbers; use 'categorical' for it.`,
      { column: column.name, option: 'bins', value: specText }
    );
  }
}

export function binCategorical(column: ICategoricalColumn, spec: IBinSpec, specText: string): IBinnedColumn {
  const rows = column.codes.length;
  checkCategoricalSpec(column, spec, specText);
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
