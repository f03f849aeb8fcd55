/**
 * Output of `polyadic analyze`: the analysis result as JSON (the field names of
 * IAnalysisResult, unchanged) or as CSV with one row per multiplet.
 */

import type { IAnalysisResult } from '../engine/types';
import { multipletsCsv } from '../results-format';

/** Re-exported for the CLI's callers; the CSV form itself lives in results-format.ts. */
export { COLUMN_SEPARATOR, MULTIPLET_FIELDS } from '../results-format';

/** Output formats of the CLI. */
export type OutputFormat = 'json' | 'csv';

/** Every output format, for validation and help. */
export const OUTPUT_FORMATS: readonly OutputFormat[] = ['json', 'csv'];

/** Render a result in a format; the text ends with a line break. */
export function formatResult(result: IAnalysisResult, format: OutputFormat): string {
  return format === 'json' ? formatJson(result) : formatCsv(result);
}

/** The result as indented JSON. */
export function formatJson(result: IAnalysisResult): string {
  return JSON.stringify(result, null, 2) + '\n';
}

/**
 * The multiplets as CSV, one row per multiplet (see {@link multipletsCsv}: full precision,
 * formula-like cells quoted).
 */
export function formatCsv(result: IAnalysisResult): string {
  return multipletsCsv(result.multiplets);
}
