/**
 * The CSV form of multiplet rows (the core measures, then adequacy and any statistics), shared by the CLI (`polyadic analyze --format csv`) and the
 * panel's CSV export, so both write the same header and the same cell escaping.
 */

import Papa from 'papaparse';

import { type IMultipletRow, MULTIPLET_MEASURES, type MultipletMeasure } from './engine/types';

/** The fields every multiplet row carries. */
export type CoreMultipletField = 'columns' | 'order' | MultipletMeasure;

/** The CSV columns every table has: the core fields of IMultipletRow, in their declared order. */
export const MULTIPLET_FIELDS: readonly CoreMultipletField[] = ['columns', 'order', ...MULTIPLET_MEASURES];

/**
 * Fields a row may carry after the core ones (adequacy and the statistics), in the order the
 * CSV writes them; a table gets those that any of its rows has.
 */
export const EVIDENCE_FIELDS: readonly Exclude<keyof IMultipletRow, CoreMultipletField>[] = [
  'adequacy',
  'p_value',
  'q_value',
  'p_surrogates',
  'null_mean',
  'null_sd',
  'co_information_corrected',
  'o_information_p_value',
  'o_information_q_value',
  'o_information_null_mean',
  'o_information_null_sd',
  'ci_low',
  'ci_high',
  'same_sign',
  'entropy_ci_low',
  'entropy_ci_high',
  'total_correlation_ci_low',
  'total_correlation_ci_high',
  'dual_total_correlation_ci_low',
  'dual_total_correlation_ci_high',
  'o_information_ci_low',
  'o_information_ci_high',
  's_information_ci_low',
  's_information_ci_high',
  'connected_information',
  'connected_p_value'
];

/** The evidence fields that at least one row carries, in {@link EVIDENCE_FIELDS} order. */
export function evidenceFieldsOf(rows: Iterable<IMultipletRow>): Exclude<keyof IMultipletRow, CoreMultipletField>[] {
  const present = new Set<string>();
  for (const row of rows) {
    for (const field of EVIDENCE_FIELDS) {
      if (row[field] !== undefined) {
        present.add(field);
      }
    }
  }
  return EVIDENCE_FIELDS.filter(field => present.has(field));
}

/**
 * Separator between the column names of a multiplet in one CSV cell. A name holding it makes
 * the cell ambiguous; the JSON output keeps names as a list and has no such limit.
 */
export const COLUMN_SEPARATOR = '|';

/** The CSV cells of one multiplet row: the core fields, then `extras`. */
export function csvCells(row: IMultipletRow, extras: readonly Exclude<keyof IMultipletRow, CoreMultipletField>[]): (string | number)[] {
  const cells: (string | number)[] = MULTIPLET_FIELDS.map(field =>
    field === 'columns' ? row.columns.join(COLUMN_SEPARATOR) : row[field]
  );
  for (const field of extras) {
    // A value that was not computed for this row (null) is an empty cell.
    cells.push(row[field] ?? '');
  }
  return cells;
}

/**
 * Multiplet rows as CSV, one row per multiplet, numbers at full precision, ending with a line
 * break. Cells that a spreadsheet would run as a formula (a column name starting with `=`,
 * `+`, `-`, `@`, a tab or a carriage return) are prefixed with a quote mark, since column names
 * come from untrusted data (OWASP's CSV injection advice; papaparse's `escapeFormulae`).
 */
export function multipletsCsv(rows: Iterable<IMultipletRow>): string {
  const list = Array.from(rows);
  const extras = evidenceFieldsOf(list);
  const data = list.map(row => csvCells(row, extras));
  return (
    Papa.unparse(
      { fields: [...MULTIPLET_FIELDS, ...extras], data },
      { quotes: false, escapeFormulae: true, newline: '\n', header: true }
    ) + '\n'
  );
}
