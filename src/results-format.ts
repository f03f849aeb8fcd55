/**
 * The CSV form of multiplet rows, shared by the CLI (`polyadic analyze --format csv`) and the
 * panel's CSV export, so both write the same header and the same cell escaping.
 */

import Papa from 'papaparse';

import type { IMultipletRow } from './engine/types';

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

/**
 * Multiplet rows as CSV, one row per multiplet, numbers at full precision, ending with a line
 * break. Cells that a spreadsheet would run as a formula (a column name starting with `=`,
 * `+`, `-`, `@`, a tab or a carriage return) are prefixed with a quote mark, since column names
 * come from untrusted data (OWASP's CSV injection advice; papaparse's `escapeFormulae`).
 */
export function multipletsCsv(rows: Iterable<IMultipletRow>): string {
  const data: (string | number)[][] = [];
  for (const row of rows) {
    data.push(
      MULTIPLET_FIELDS.map(field => (field === 'columns' ? row.columns.join(COLUMN_SEPARATOR) : row[field]))
    );
  }
  return (
    Papa.unparse(
      { fields: [...MULTIPLET_FIELDS], data },
      { quotes: false, escapeFormulae: true, newline: '\n', header: true }
    ) + '\n'
  );
}
