/**
 * Output of `polyadic analyze`: the analysis result as JSON (the field names of
 * IAnalysisResult, unchanged) or as CSV with one row per multiplet.
 */

import Papa from 'papaparse';

import type { IAnalysisResult, IMultipletRow } from '../engine/types';

/** Output formats of the CLI. */
export type OutputFormat = 'json' | 'csv';

/** Every output format, for validation and help. */
export const OUTPUT_FORMATS: readonly OutputFormat[] = ['json', 'csv'];

/** The CSV columns: the fields of IMultipletRow, in their declared order. */
export const MULTIPLET_FIELDS: readonly (keyof IMultipletRow)[] = [
  'columns',
  'order',
  'entropy',
  'coinformation',
  'total_correlation',
  'dual_total_correlation',
  'o_information',
  's_information'
];

/**
 * Separator between the column names of a multiplet in one CSV cell. A name holding it makes
 * the cell ambiguous; the JSON output keeps names as a list and has no such limit.
 */
export const COLUMN_SEPARATOR = '|';

/** Render a result in a format; the text ends with a line break. */
export function formatResult(result: IAnalysisResult, format: OutputFormat): string {
  return format === 'json' ? formatJson(result) : formatCsv(result);
}

/** The result as indented JSON. */
export function formatJson(result: IAnalysisResult): string {
  return JSON.stringify(result, null, 2) + '\n';
}

/**
 * The multiplets as CSV, one row per multiplet, numbers at full precision. Cells that a
 * spreadsheet would run as a formula (a column name starting with `=`, `+`, `-` or `@`) are
 * prefixed with a quote mark, since column names come from untrusted data.
 */
export function formatCsv(result: IAnalysisResult): string {
  const data = result.multiplets.map(row =>
    MULTIPLET_FIELDS.map(field => (field === 'columns' ? row.columns.join(COLUMN_SEPARATOR) : row[field]))
  );
  return (
    Papa.unparse(
      { fields: [...MULTIPLET_FIELDS], data },
      { quotes: false, escapeFormulae: true, newline: '\n', header: true }
    ) + '\n'
  );
}
